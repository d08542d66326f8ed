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

const STATE_CHANGING = new Set(["POST", "PUT", "PATCH", "DELETE"]);

/**
 * Cross-site request forgery guard for state-changing methods: a browser names the page's origin in
 * `Origin` (and `Sec-Fetch-Site`) on every cross-site POST/PUT/PATCH/DELETE, so a request from another
 * site is refused. A request without Origin (a server-to-server client, a test, curl) passes: a browser
 * cannot send such a request cross-site. JSON bodies additionally need Content-Type application/json
 * (parseJson), which a cross-site form cannot send without a CORS preflight.
 */
export function assertSameOrigin(req: Request): void {
  if (!STATE_CHANGING.has(req.method.toUpperCase())) return;
  const refuse = () => new AppError("forbidden", "This request came from another site, so Rimwatch refused it. Open Rimwatch itself and try again.");
  if (req.headers.get("sec-fetch-site") === "cross-site") throw refuse();
  const origin = req.headers.get("origin");
  if (origin === null) return;
  let host: string;
  try {
    const url = new URL(origin);
    if (url.protocol !== "http:" && url.protocol !== "https:") throw refuse();
    host = url.host.toLowerCase();
  } catch (e) {
    if (e instanceof AppError) throw e;
    throw refuse(); // "null" (sandboxed frames, some redirects) and anything unparsable
  }
  const own = new Set<string>();
  for (const h of [req.headers.get("x-forwarded-host"), req.headers.get("host")]) if (h) own.add((h.split(",")[0] ?? "").trim().toLowerCase());
  try {
    if (process.env.NEXTAUTH_URL) own.add(new URL(process.env.NEXTAUTH_URL).host.toLowerCase());
  } catch {
    // a malformed NEXTAUTH_URL adds nothing
  }
  if (!own.has(host)) throw refuse();
}

export function apiRoute<P extends Params = Params>(permission: Permission, fn: (ctx: Ctx<P>) => Promise<unknown>) {
  return async (req: NextRequest, context: { params: Promise<P> }): Promise<Response> => {
    try {
      assertSameOrigin(req);
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
  const type = req.headers.get("content-type") ?? "";
  if (!/^application\/(?:[\w.-]+\+)?json\s*(?:;|$)/i.test(type)) {
    throw new AppError("unsupported", "Send the request body as JSON, with the header Content-Type: application/json.");
  }
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
