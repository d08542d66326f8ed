/**
 * What the app exposes, read from the source tree so that a new route or server action cannot be
 * left out of the role matrix: every `app/api/** /route.ts` with its exported HTTP methods and the
 * permission each handler passes to `apiRoute(...)`, and every server action (a module or function
 * marked "use server") with the permission it passes to `runAction(...)`.
 *
 * Reading the permission from the source (not from a hand-kept list) is the point: the matrix then
 * checks that what the code says is what the server does.
 */
import { readdirSync, readFileSync, statSync } from "node:fs";
import { join, relative, sep } from "node:path";
import { PERMISSIONS, type Permission } from "../../lib/auth/permissions";

export const HTTP_METHODS = ["GET", "HEAD", "POST", "PUT", "PATCH", "DELETE", "OPTIONS"] as const;
export type HttpMethod = (typeof HTTP_METHODS)[number];

export interface RouteHandler {
  /** Source file, relative to the repository root. */
  file: string;
  /** URL pattern, e.g. /api/episodes/[id]/films. */
  pattern: string;
  /** Dynamic segment names in order, e.g. ["id"] or ["id", "periodId"]. */
  params: string[];
  method: HttpMethod;
  /** The permission given to apiRoute, or null when the handler does not go through apiRoute. */
  permission: Permission | null;
}

export interface ServerAction {
  file: string;
  name: string;
  /** The permission given to runAction, or null when the function does not start with runAction. */
  permission: Permission | null;
}

/**
 * Handlers that do not use apiRoute, each with the reason it is allowed to. Anything else without a
 * permission fails the matrix.
 */
export const UNGUARDED_ALLOW_LIST: Record<string, string> = {
  "/api/auth/[...nextauth]": "next-auth's own endpoints (sign-in, CSRF token, session); they are how a session is made",
  "/api/bench/echo": "benchmark floor for bench/trend-api.ts: answers 404 unless the server runs with RIMWATCH_BENCH=1, and holds no patient data",
};

const ROOT = process.cwd();

function walk(dir: string, out: string[] = []): string[] {
  for (const name of readdirSync(dir)) {
    if (name === "node_modules" || name.startsWith(".")) continue;
    const p = join(dir, name);
    if (statSync(p).isDirectory()) walk(p, out);
    else out.push(p);
  }
  return out;
}

const rel = (p: string) => relative(ROOT, p).split(sep).join("/");

function isPermission(s: string): s is Permission {
  return Object.prototype.hasOwnProperty.call(PERMISSIONS, s);
}

/** Strips comments so a commented-out export or a permission named in a comment is not counted. */
function stripComments(src: string): string {
  return src.replace(/\/\*[\s\S]*?\*\//g, "").replace(/(^|[^:"'`\\])\/\/.*$/gm, "$1");
}

/** The URL pattern of a route file: app/api/films/[id]/route.ts -> /api/films/[id] (route groups dropped). */
export function patternOf(file: string): string {
  const parts = file.replace(/^app\//, "").replace(/\/route\.(ts|tsx|js)$/, "").split("/");
  return "/" + parts.filter((p) => !(p.startsWith("(") && p.endsWith(")"))).join("/");
}

export function paramsOf(pattern: string): string[] {
  return [...pattern.matchAll(/\[(?:\.\.\.)?([^\]]+)\]/g)].map((m) => m[1] ?? "");
}

/** Exported HTTP methods of a route module, with the permission each passes to apiRoute. */
export function handlersOf(file: string, source: string): RouteHandler[] {
  const src = stripComments(source);
  const pattern = patternOf(file);
  const found = new Map<HttpMethod, Permission | null>();
  const isMethod = (m: string): m is HttpMethod => (HTTP_METHODS as readonly string[]).includes(m);

  // export const GET = apiRoute<...>("perm", ...)  |  export const GET = something(...)
  for (const m of src.matchAll(/export\s+const\s+([A-Z]+)\s*=\s*(?=([\s\S]{0,200}))/g)) {
    const method = m[1] ?? "";
    if (!isMethod(method)) continue;
    const perm = /^apiRoute\s*(?:<[^>]*>)?\s*\(\s*["']([a-z]+\.[a-z]+)["']/.exec(m[2] ?? "")?.[1];
    found.set(method, perm && isPermission(perm) ? perm : null);
  }
  // export async function GET(...) / export function GET(...)
  for (const m of src.matchAll(/export\s+(?:async\s+)?function\s+([A-Z]+)\s*\(/g)) {
    const method = m[1] ?? "";
    if (isMethod(method)) found.set(method, null);
  }
  // export { handler as GET, handler as POST }
  for (const m of src.matchAll(/export\s*\{([^}]*)\}/g)) {
    for (const part of (m[1] ?? "").split(",")) {
      const name = /(?:\bas\s+)?([A-Za-z_$][\w$]*)\s*$/.exec(part.trim())?.[1] ?? "";
      if (isMethod(name)) found.set(name, null);
    }
  }
  return [...found].map(([method, permission]) => ({ file, pattern, params: paramsOf(pattern), method, permission }));
}

/** Every route handler under app/api, sorted by pattern and method. */
export function listRouteHandlers(): RouteHandler[] {
  const files = walk(join(ROOT, "app", "api")).filter((p) => /\/route\.(ts|tsx|js)$/.test(p.split(sep).join("/")));
  const all = files.flatMap((p) => handlersOf(rel(p), readFileSync(p, "utf8")));
  return all.sort((a, b) => a.pattern.localeCompare(b.pattern) || HTTP_METHODS.indexOf(a.method) - HTTP_METHODS.indexOf(b.method));
}

const USE_SERVER = /^\s*(?:\/\/[^\n]*\n\s*|\/\*[\s\S]*?\*\/\s*)*["']use server["']/;

/**
 * Server actions: exported functions of modules whose first statement is "use server", and functions
 * (anywhere under app/, components/, lib/) whose body starts with "use server". For each, the permission
 * its first statement passes to runAction, or null.
 */
export function listServerActions(): ServerAction[] {
  const files = ["app", "components", "lib"].flatMap((d) => walk(join(ROOT, d))).filter((p) => /\.(ts|tsx)$/.test(p));
  const actions: ServerAction[] = [];
  for (const p of files) {
    const source = readFileSync(p, "utf8");
    if (!/["']use server["']/.test(source)) continue;
    const file = rel(p);
    const moduleLevel = USE_SERVER.test(source);
    const src = stripComments(source);
    if (moduleLevel) {
      // export async function name(...) { <first statement> }
      for (const m of src.matchAll(/export\s+async\s+function\s+([A-Za-z_$][\w$]*)\s*\(/g)) {
        actions.push({ file, name: m[1] ?? "", permission: firstStatementPermission(src, (m.index ?? 0) + m[0].length) });
      }
      // export const name = async (...) => runAction(...)
      for (const m of src.matchAll(/export\s+const\s+([A-Za-z_$][\w$]*)\s*=\s*async\s*\(/g)) {
        actions.push({ file, name: m[1] ?? "", permission: arrowPermission(src, (m.index ?? 0) + m[0].length) });
      }
    } else {
      // inline: async function name(...) { "use server"; <first statement> }
      for (const m of src.matchAll(/async\s+function\s+([A-Za-z_$][\w$]*)\s*\([^)]*\)\s*(?::[^{]*)?\{\s*["']use server["'];?/g)) {
        const perm = /^\s*return\s+runAction\s*(?:<[^>]*>)?\s*\(\s*["']([a-z]+\.[a-z]+)["']/.exec(src.slice((m.index ?? 0) + m[0].length))?.[1];
        actions.push({ file, name: m[1] ?? "", permission: perm && isPermission(perm) ? perm : null });
      }
    }
  }
  return actions.sort((a, b) => a.file.localeCompare(b.file) || a.name.localeCompare(b.name));
}

/** From just after "function name(", skips the parameter list and return type, then reads the body's first statement. */
function firstStatementPermission(src: string, from: number): Permission | null {
  let depth = 1;
  let i = from;
  while (i < src.length && depth > 0) {
    const c = src[i];
    if (c === "(") depth += 1;
    else if (c === ")") depth -= 1;
    i += 1;
  }
  const brace = src.indexOf("{", i);
  if (brace < 0) return null;
  const perm = /^\s*return\s+runAction\s*(?:<[^>]*>)?\s*\(\s*["']([a-z]+\.[a-z]+)["']/.exec(src.slice(brace + 1))?.[1];
  return perm && isPermission(perm) ? perm : null;
}

function arrowPermission(src: string, from: number): Permission | null {
  const arrow = src.indexOf("=>", from);
  if (arrow < 0) return null;
  const rest = src.slice(arrow + 2);
  const perm =
    /^\s*runAction\s*(?:<[^>]*>)?\s*\(\s*["']([a-z]+\.[a-z]+)["']/.exec(rest)?.[1] ??
    /^\s*\{\s*return\s+runAction\s*(?:<[^>]*>)?\s*\(\s*["']([a-z]+\.[a-z]+)["']/.exec(rest)?.[1];
  return perm && isPermission(perm) ? perm : null;
}

/** Fills a route pattern's dynamic segments. */
export function fillPattern(pattern: string, values: Record<string, string>): string {
  return pattern.replace(/\[(?:\.\.\.)?([^\]]+)\]/g, (_, name: string) => {
    const v = values[name];
    if (v === undefined) throw new Error(`no value for [${name}] in ${pattern}`);
    return encodeURIComponent(v);
  });
}

/**
 * Which kind of record a dynamic segment names, from the segment before it: /api/films/[id] is a film,
 * /api/episodes/[id]/oxygen/[periodId] is an oxygen period. Null for a kind the tests do not know yet.
 */
export type RecordKind = "patient" | "episode" | "film" | "measurement" | "flag" | "drain" | "booking" | "message" | "user" | "oxygen" | "procedure";
const COLLECTION_KIND: Record<string, RecordKind> = {
  patients: "patient",
  episodes: "episode",
  films: "film",
  measurements: "measurement",
  flags: "flag",
  drains: "drain",
  bookings: "booking",
  messages: "message",
  users: "user",
  oxygen: "oxygen",
  procedures: "procedure",
};

export function paramKinds(pattern: string): Record<string, RecordKind | null> {
  const segs = pattern.split("/").filter(Boolean);
  const out: Record<string, RecordKind | null> = {};
  segs.forEach((s, i) => {
    const m = /^\[(?:\.\.\.)?([^\]]+)\]$/.exec(s);
    if (!m?.[1]) return;
    out[m[1]] = COLLECTION_KIND[segs[i - 1] ?? ""] ?? null;
  });
  return out;
}
