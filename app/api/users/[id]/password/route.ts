// POST: set a new password for a user (ends their current sessions).
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { setPassword } from "@/db/users";
import { userPassword } from "@/lib/validation/users";
import { uuid } from "@/lib/validation/common";

export const POST = apiRoute<{ id: string }>("user.manage", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const { password } = await parseJson(req, userPassword);
  await db().transaction((trx) => setPassword(trx, user, id, password));
  return { ok: true };
});
