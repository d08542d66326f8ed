// One way to ask "who is this, and may they do that?" for pages, route handlers and server actions.
import "server-only";
import { getServerSession } from "next-auth";
import { redirect } from "next/navigation";
import { db } from "@/db/knex";
import { getUser } from "@/db/users";
import { AppError } from "@/lib/errors";
import { authOptions } from "./options";
import { can, type Permission, type Role } from "./permissions";

export interface CurrentUser {
  id: string;
  name: string;
  email: string;
  role: Role;
  teamId: string;
}

/**
 * The signed-in user, re-read from the database so that a disabled account or a changed role
 * takes effect at once, and a password change ends older sessions.
 */
export async function currentUser(): Promise<CurrentUser | null> {
  const session = await getServerSession(authOptions);
  const id = session?.user?.id;
  if (!id) return null;
  const row = await getUser(db(), id);
  if (!row || row.disabled_at) return null;
  // A session from before the latest password change is over (the sign-in time travels in the token).
  const signedInAt = session.user.signedInAt;
  if (typeof signedInAt !== "number" || row.password_changed_at.getTime() > signedInAt) return null;
  return { id: row.id, name: row.name, email: row.email, role: row.role, teamId: row.team_id };
}

/** For route handlers and server actions: 401 without a session, 403 without the permission. */
export async function requireApiUser(permission: Permission): Promise<CurrentUser> {
  const user = await currentUser();
  if (!user) throw new AppError("unauthenticated", "Sign in to Rimwatch first.");
  if (!can(user.role, permission)) throw new AppError("forbidden", `Your role (${user.role}) does not allow this.`);
  return user;
}

/** For pages: sends a visitor without a session to sign-in, and one without the permission to the forbidden page. */
export async function requireUser(permission?: Permission): Promise<CurrentUser> {
  const user = await currentUser();
  if (!user) redirect("/sign-in");
  if (permission && !can(user.role, permission)) redirect("/forbidden");
  return user;
}
