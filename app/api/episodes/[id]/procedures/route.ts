// POST: record a procedure (needle aspiration, ambulatory valve, surgery) on the episode.
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { addProcedure } from "@/db/episodes";
import { procedureInput } from "@/lib/validation/episodes";
import { uuid } from "@/lib/validation/common";

export const POST = apiRoute<{ id: string }>("episode.write", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const input = await parseJson(req, procedureInput);
  const procedure = await db().transaction((trx) => addProcedure(trx, user, id, input));
  return Response.json({ procedure }, { status: 201 });
});
