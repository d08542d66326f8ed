// Runs before every page: gives each response a Content Security Policy with a fresh script nonce
// (Next.js reads the nonce from the request's CSP header and puts it on its own inline scripts), and
// sends visitors without a session to the sign-in page. It only redirects: every page, route handler
// and server action checks the session and the permission itself.
import { NextResponse, type NextFetchEvent, type NextRequest } from "next/server";
import { withAuth, type NextRequestWithAuth } from "next-auth/middleware";
import { decode } from "@/lib/auth/jwt";

/** Pages anyone may open without a session. */
const PUBLIC_PAGES = ["/sign-in", "/forbidden"];

/**
 * The page policy. Scripts: only Rimwatch's own, each carrying this response's nonce ('strict-dynamic'
 * lets those load the app's chunks); no 'unsafe-inline' for scripts. Styles keep 'unsafe-inline':
 * React renders style attributes (bar widths, chart positions), which a nonce cannot cover, and a
 * style cannot run code. Development adds 'unsafe-eval' (React's dev tooling needs it).
 */
export function contentSecurityPolicy(nonce: string, opts: { dev: boolean; https: boolean }): string {
  return [
    "default-src 'self'",
    `script-src 'self' 'nonce-${nonce}' 'strict-dynamic'${opts.dev ? " 'unsafe-eval'" : ""}`,
    "style-src 'self' 'unsafe-inline'",
    "img-src 'self' blob: data:",
    "font-src 'self'",
    "connect-src 'self'",
    "worker-src 'self' blob:",
    "object-src 'none'",
    "base-uri 'self'",
    "form-action 'self'",
    "frame-ancestors 'none'",
    ...(opts.https ? ["upgrade-insecure-requests"] : []),
  ].join("; ");
}

function newNonce(): string {
  const bytes = new Uint8Array(16);
  crypto.getRandomValues(bytes);
  return btoa(String.fromCharCode(...bytes));
}

function withCsp(req: NextRequest): NextResponse {
  const csp = contentSecurityPolicy(newNonce(), {
    dev: process.env.NODE_ENV === "development",
    https: (process.env.NEXTAUTH_URL ?? "").startsWith("https://"),
  });
  const headers = new Headers(req.headers);
  headers.set("Content-Security-Policy", csp);
  const res = NextResponse.next({ request: { headers } });
  res.headers.set("Content-Security-Policy", csp);
  return res;
}

const guarded = withAuth((req: NextRequestWithAuth) => withCsp(req), { pages: { signIn: "/sign-in" }, jwt: { decode } });

export default async function proxy(req: NextRequest, event: NextFetchEvent) {
  const path = req.nextUrl.pathname;
  if (PUBLIC_PAGES.some((p) => path === p || path.startsWith(`${p}/`))) return withCsp(req);
  return guarded(req as NextRequestWithAuth, event);
}

export const config = {
  // Pages only: route handlers answer JSON (their policy is set in next.config.mjs), static files need none.
  matcher: ["/((?!api/|_next/|favicon.ico|fonts/).*)"],
};
