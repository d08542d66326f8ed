// Session cookie and page policy settings, read from the code the server runs (no server needed).
import { createRequire } from "node:module";
import { join } from "node:path";
import { afterEach, describe, expect, it, vi } from "vitest";

interface CookieOption { name: string; options: { secure?: boolean; httpOnly?: boolean; sameSite?: string } }
// next-auth v4 derives its cookies from useSecureCookies here; the module is not in its package exports.
const { defaultCookies } = createRequire(import.meta.url)(join(process.cwd(), "node_modules/next-auth/core/lib/cookie.js")) as {
  defaultCookies: (secure: boolean) => Record<"sessionToken" | "csrfToken", CookieOption>;
};

async function authOptionsUnder(nodeEnv: string, url: string) {
  vi.resetModules();
  vi.stubEnv("NODE_ENV", nodeEnv);
  vi.stubEnv("NEXTAUTH_URL", url);
  return (await import("../../lib/auth/options")).authOptions;
}

afterEach(() => {
  vi.unstubAllEnvs();
});

describe("session cookies", () => {
  it("are Secure (and __Secure- prefixed) in production behind https", async () => {
    const options = await authOptionsUnder("production", "https://rimwatch.larkmoor.example");
    expect(options.useSecureCookies).toBe(true);
    // The cookies next-auth derives from that option (next-auth/core/lib/cookie, v4).
    const cookies = defaultCookies(options.useSecureCookies ?? false);
    expect(cookies.sessionToken.name).toBe("__Secure-next-auth.session-token");
    expect(cookies.sessionToken.options).toMatchObject({ secure: true, httpOnly: true, sameSite: "lax" });
    expect(cookies.csrfToken.name).toBe("__Host-next-auth.csrf-token");
  });

  it("are not Secure over plain http (the loopback test server), nor outside production", async () => {
    expect((await authOptionsUnder("production", "http://127.0.0.1:3000")).useSecureCookies).toBe(false);
    expect((await authOptionsUnder("development", "https://rimwatch.larkmoor.example")).useSecureCookies).toBe(false);
  });

  it("sessions last one working shift: a JWT of at most 8 hours", async () => {
    const options = await authOptionsUnder("production", "https://rimwatch.larkmoor.example");
    expect(options.session?.strategy).toBe("jwt");
    expect(options.session?.maxAge).toBe(8 * 60 * 60); // 8 h, the shift length set for Rimwatch (common practice for clinical systems)
  });
});

describe("page Content Security Policy", () => {
  const load = async () => (await import("../../proxy")).contentSecurityPolicy;

  it("allows scripts only by nonce in production, never inline or eval", async () => {
    const csp = (await load())("abc123abc123abc123==", { dev: false, https: true });
    const script = /script-src ([^;]+)/.exec(csp)?.[1] ?? "";
    expect(script).toContain("'nonce-abc123abc123abc123=='");
    expect(script).toContain("'strict-dynamic'");
    expect(script).not.toContain("'unsafe-inline'");
    expect(script).not.toContain("'unsafe-eval'");
    expect(csp).toContain("frame-ancestors 'none'");
    expect(csp).toContain("object-src 'none'");
    expect(csp).toContain("upgrade-insecure-requests");
  });

  it("adds eval only for the development server, and no upgrade over plain http", async () => {
    const csp = (await load())("n0nce", { dev: true, https: false });
    expect(/script-src ([^;]+)/.exec(csp)?.[1]).toContain("'unsafe-eval'");
    expect(csp).not.toContain("upgrade-insecure-requests");
  });
});
