// PATCH: change a user's role, name, notification choice, or disable/enable them.
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { updateUser } from "@/db/users";
import { userUpdate } from "@/lib/validation/users";
import { uuid } from "@/lib/validation/common";

export const PATCH = apiRoute<{ id: string }>("user.manage", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const input = await parseJson(req, userUpdate);
  const updated = await db().transaction((trx) => updateUser(trx, user, id, input));
  return { user: updated };
});
