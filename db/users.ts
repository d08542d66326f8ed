// Users, teams and sign-in attempts.
import "server-only";
import bcrypt from "bcryptjs";
import type { Role } from "@/lib/auth/permissions";
import { AppError, notFound } from "@/lib/errors";
import { writeAudit } from "./audit";
import type { Trx } from "./knex";

export interface UserRow {
  id: string;
  team_id: string;
  email: string;
  name: string;
  role: Role;
  password_hash: string;
  notify_on_flag: boolean;
  disabled_at: Date | null;
  password_changed_at: Date;
  created_at: Date;
}

export type PublicUser = Omit<UserRow, "password_hash">;
const PUBLIC_COLUMNS = ["id", "team_id", "email", "name", "role", "notify_on_flag", "disabled_at", "password_changed_at", "created_at"] as const;

export const hashPassword = (plain: string) => bcrypt.hash(plain, 10);
export const verifyPassword = (plain: string, hash: string) => bcrypt.compare(plain, hash);

export async function findUserByEmail(trx: Trx, email: string): Promise<UserRow | undefined> {
  return trx<UserRow>("users").where({ email: email.trim().toLowerCase() }).first();
}

export async function getUser(trx: Trx, id: string): Promise<PublicUser | undefined> {
  return trx("users").select(PUBLIC_COLUMNS).where({ id }).first();
}

export async function getTeam(trx: Trx, id: string): Promise<{ id: string; name: string; hospital: string } | undefined> {
  return trx("teams").select("id", "name", "hospital").where({ id }).first();
}

export async function listTeamUsers(trx: Trx, teamId: string): Promise<PublicUser[]> {
  return trx("users").select(PUBLIC_COLUMNS).where({ team_id: teamId }).orderBy([{ column: "role" }, { column: "name" }]);
}

export async function listClinicians(trx: Trx, teamId: string, role: Role): Promise<{ id: string; name: string }[]> {
  return trx("users").select("id", "name").where({ team_id: teamId, role }).whereNull("disabled_at").orderBy("name");
}

export async function createUser(
  trx: Trx,
  actor: { id: string; teamId: string },
  input: { email: string; name: string; role: Role; password: string },
): Promise<PublicUser> {
  const email = input.email.trim().toLowerCase();
  if (await findUserByEmail(trx, email)) throw new AppError("conflict", "A user with that e-mail address already exists.", { fields: { email: "Already in use" } });
  const [row] = await trx("users")
    .insert({ team_id: actor.teamId, email, name: input.name, role: input.role, password_hash: await hashPassword(input.password) })
    .returning(PUBLIC_COLUMNS);
  const user = row as PublicUser;
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "user.create", entity: "user", entityId: user.id, after: user });
  return user;
}

export async function updateUser(
  trx: Trx,
  actor: { id: string; teamId: string },
  id: string,
  patch: { role?: Role; disabled?: boolean; name?: string; notifyOnFlag?: boolean },
): Promise<PublicUser> {
  const before = await trx("users").select(PUBLIC_COLUMNS).where({ id, team_id: actor.teamId }).first();
  if (!before) throw notFound("That user");
  if (id === actor.id && (patch.disabled === true || (patch.role && patch.role !== "admin"))) {
    throw new AppError("invalid", "You cannot disable yourself or remove your own administrator role; ask another administrator.");
  }
  const changes: Record<string, unknown> = { updated_at: trx.fn.now() };
  if (patch.role) changes.role = patch.role;
  if (patch.name) changes.name = patch.name;
  if (patch.notifyOnFlag !== undefined) changes.notify_on_flag = patch.notifyOnFlag;
  if (patch.disabled !== undefined) changes.disabled_at = patch.disabled ? trx.fn.now() : null;
  const [after] = await trx("users").where({ id }).update(changes).returning(PUBLIC_COLUMNS);
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "user.update", entity: "user", entityId: id, before, after });
  return after as PublicUser;
}

export async function setPassword(trx: Trx, actor: { id: string; teamId: string }, id: string, password: string): Promise<void> {
  const n = await trx("users").where({ id, team_id: actor.teamId }).update({ password_hash: await hashPassword(password), password_changed_at: trx.fn.now() });
  if (!n) throw notFound("That user");
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "user.password", entity: "user", entityId: id });
}

export async function recordSignInAttempt(trx: Trx, email: string, ip: string | null, succeeded: boolean): Promise<void> {
  await trx("sign_in_attempts").insert({ email: email.trim().toLowerCase(), ip, succeeded });
}

/** Failed attempts for this address (or from this IP) within the window. */
export async function recentFailures(trx: Trx, email: string, ip: string | null, windowMinutes: number): Promise<{ byEmail: number; byIp: number }> {
  const since = trx.raw(`now() - interval '${Math.trunc(windowMinutes)} minutes'`);
  const [e] = await trx("sign_in_attempts").where({ email: email.trim().toLowerCase(), succeeded: false }).where("at", ">", since).count<{ count: number }[]>({ count: "*" });
  let byIp = 0;
  if (ip) {
    const [i] = await trx("sign_in_attempts").where({ ip, succeeded: false }).where("at", ">", since).count<{ count: number }[]>({ count: "*" });
    byIp = Number(i?.count ?? 0);
  }
  return { byEmail: Number(e?.count ?? 0), byIp };
}
