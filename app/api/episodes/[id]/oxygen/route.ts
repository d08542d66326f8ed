// POST: record that supplemental oxygen started.
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { startOxygen } from "@/db/episodes";
import { oxygenStart } from "@/lib/validation/episodes";
import { uuid } from "@/lib/validation/common";
import { evaluateEpisodeFlags } from "@/lib/followup/evaluate";

export const POST = apiRoute<{ id: string }>("episode.write", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const input = await parseJson(req, oxygenStart);
  const period = await db().transaction(async (trx) => {
    const row = await startOxygen(trx, user, id, input);
    await evaluateEpisodeFlags(trx, id, new Date(), user); // oxygen changes the expected resorption
    return row;
  });
  return Response.json({ period }, { status: 201 });
});
