// GET: the team's users. POST: create a user with a first password.
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { createUser, listTeamUsers } from "@/db/users";
import { userCreate } from "@/lib/validation/users";

export const GET = apiRoute("user.manage", async ({ user }) => ({ users: await listTeamUsers(db(), user.teamId) }));

export const POST = apiRoute("user.manage", async ({ req, user }) => {
  const input = await parseJson(req, userCreate);
  const created = await db().transaction((trx) => createUser(trx, user, input));
  return Response.json({ user: created }, { status: 201 });
});
