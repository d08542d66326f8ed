// POST: one observation of a drain (swing, bubbling, fluid output); may raise the persistent air leak flag.
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { addObservation } from "@/db/drains";
import { drainObservation } from "@/lib/validation/drains";
import { uuid } from "@/lib/validation/common";

export const POST = apiRoute<{ id: string }>("drain.write", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const input = await parseJson(req, drainObservation);
  const observation = await db().transaction((trx) => addObservation(trx, user, id, input, new Date()));
  return Response.json({ observation }, { status: 201 });
});
