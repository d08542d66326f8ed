// POST: record that supplemental oxygen started.
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { startOxygen } from "@/db/episodes";
import { oxygenStart } from "@/lib/validation/episodes";
import { uuid } from "@/lib/validation/common";
import { reevaluateFlags } from "@/lib/measurement-flags";

export const POST = apiRoute<{ id: string }>("episode.write", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const input = await parseJson(req, oxygenStart);
  const period = await db().transaction(async (trx) => {
    const row = await startOxygen(trx, user, id, input);
    await reevaluateFlags(user)(trx, id); // oxygen changes the expected resorption
    return row;
  });
  return Response.json({ period }, { status: 201 });
});
