// PATCH: remove a drain (time and reason), or change its suction.
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { updateDrain } from "@/db/drains";
import { drainUpdate } from "@/lib/validation/drains";
import { uuid } from "@/lib/validation/common";

export const PATCH = apiRoute<{ id: string }>("drain.write", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const input = await parseJson(req, drainUpdate);
  const drain = await db().transaction((trx) => updateDrain(trx, user, id, input, new Date()));
  return { drain };
});
