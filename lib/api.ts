// Route handler wrapper: authenticate, check the permission, run, and map errors to JSON.
import "server-only";
import { NextResponse, type NextRequest } from "next/server";
import type { ZodType } from "zod";
import { AppError, toErrorBody } from "./errors";
import type { Permission } from "./auth/permissions";
import { requireApiUser, type CurrentUser } from "./auth/session";

type Params = Record<string, string>;
interface Ctx<P extends Params> {
  req: NextRequest;
  user: CurrentUser;
  params: P;
}

export function errorResponse(err: unknown): NextResponse {
  const { status, body } = toErrorBody(err);
  if (status >= 500) console.error(`[api] ${status}`, err instanceof Error ? `${err.name}: ${err.message}` : "unknown error");
  return NextResponse.json(body, { status, headers: { "Cache-Control": "no-store" } });
}

export function apiRoute<P extends Params = Params>(permission: Permission, fn: (ctx: Ctx<P>) => Promise<unknown>) {
  return async (req: NextRequest, context: { params: Promise<P> }): Promise<Response> => {
    try {
      const user = await requireApiUser(permission);
      const result = await fn({ req, user, params: await context.params });
      if (result instanceof Response) return result;
      return NextResponse.json(result ?? { ok: true }, { headers: { "Cache-Control": "no-store" } });
    } catch (err) {
      return errorResponse(err);
    }
  };
}

/** Parses a JSON request body with a zod schema; bad JSON or bad fields become a 400 with field messages. */
export async function parseJson<T>(req: Request, schema: ZodType<T>): Promise<T> {
  let body: unknown;
  try {
    body = await req.json();
  } catch {
    throw new AppError("invalid", "The request body must be JSON.");
  }
  return schema.parse(body);
}

/** Parses the query string with a zod schema. */
export function parseQuery<T>(req: NextRequest, schema: ZodType<T>): T {
  return schema.parse(Object.fromEntries(req.nextUrl.searchParams.entries()));
}
