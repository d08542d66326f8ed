// Server action wrapper: the same session and permission check as route handlers, and a plain
// result the form can show ({ ok } or { error, fields }).
import "server-only";
import { toErrorBody } from "./errors";
import type { Permission } from "./auth/permissions";
import { requireApiUser, type CurrentUser } from "./auth/session";

export type ActionResult<T = null> = { ok: true; data: T } | { ok: false; status: number; error: string; fields?: Record<string, string> };

export async function runAction<T>(permission: Permission, fn: (user: CurrentUser) => Promise<T>): Promise<ActionResult<T>> {
  try {
    const user = await requireApiUser(permission);
    return { ok: true, data: await fn(user) };
  } catch (err) {
    const { status, body } = toErrorBody(err);
    if (status >= 500) console.error(`[action] ${status}`, err instanceof Error ? `${err.name}: ${err.message}` : "unknown error");
    return { ok: false, status, error: body.error.message, ...(body.error.fields ? { fields: body.error.fields } : {}) };
  }
}
