/**
 * Security basics over HTTP against the running app: response headers and the page Content Security
 * Policy (a fresh script nonce on every page, no 'unsafe-inline' for scripts), cross-site request
 * forgery (JSON bodies only, foreign origins refused, server actions too), sign-in throttling per
 * address, password rules, session expiry and forged sessions, a password change ending older
 * sessions, and the audit rows of administrators' actions.
 */
import { randomUUID } from "node:crypto";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { encode } from "next-auth/jwt";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeTestDb, testDb } from "../support/db";
import { makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { anonymous, baseUrl, signIn, type Client } from "../support/http";

let team: TestTeam;
let admin: Client;
let registrar: Client;

const SESSION_COOKIE = "next-auth.session-token"; // http:// test server: next-auth's unprefixed name
const EIGHT_HOURS = 8 * 60 * 60; // the session length the brief sets for one working shift (common practice for clinical sign-ins)

const patientBody = (hn: string) => ({ hospitalNumber: hn, familyName: "Csrfcheck", givenName: "Ines", dateOfBirth: "1988-02-03", sex: "female", emailConsent: false });
// Hospital numbers are stored in capitals (lib/validation/patients.ts), so make them so.
const newHn = (prefix: string) => `${prefix}${randomUUID().slice(0, 8)}`.toUpperCase();
const patientCount = async (hn: string) => Number((await testDb()("patients").where({ hospital_number: hn }).count<{ c: string }[]>({ c: "*" }))[0]?.c ?? 0);
const auditRows = async (actorId: string, action: string, entityId?: string) => {
  const q = testDb()("audit_log").where({ actor_id: actorId, action });
  if (entityId) void q.where({ entity_id: entityId });
  return Number((await q.count<{ c: string }[]>({ c: "*" }))[0]?.c ?? 0);
};

beforeAll(async () => {
  team = await makeTeam("security");
  admin = await signIn(team.users.admin.email, TEST_PASSWORD);
  registrar = await signIn(team.users.registrar.email, TEST_PASSWORD);
  expect(admin.ok && registrar.ok).toBe(true);
});
afterAll(closeTestDb);

function directives(csp: string): Map<string, string[]> {
  return new Map(csp.split(";").map((d) => d.trim().split(/\s+/)).filter((p) => p[0]).map(([name, ...values]) => [name ?? "", values]));
}

describe("headers and the page policy", () => {
  it("every page has a script nonce in its policy and on every script tag, new for every response", async () => {
    const nonces: string[] = [];
    for (const [label, client, path] of [["sign-in", anonymous(), "/sign-in"], ["home", registrar, "/"], ["home again", registrar, "/"]] as const) {
      const res = await client.get(path);
      expect(res.status, `${label}: ${path}`).toBe(200);
      const csp = res.headers.get("content-security-policy") ?? "";
      const d = directives(csp);
      const script = d.get("script-src") ?? [];
      expect(script, `${label}: script-src`).not.toContain("'unsafe-inline'");
      expect(script, `${label}: script-src`).not.toContain("'unsafe-eval'");
      const nonce = script.find((s) => s.startsWith("'nonce-"))?.slice(7, -1);
      expect(nonce, `${label}: a nonce in script-src (${csp})`).toMatch(/^[A-Za-z0-9+/=]{16,}$/);
      expect(d.get("frame-ancestors")).toEqual(["'none'"]);
      expect(d.get("object-src")).toEqual(["'none'"]);
      expect(d.get("base-uri")).toEqual(["'self'"]);
      expect(d.get("default-src")).toEqual(["'self'"]);
      const html = await res.text();
      const tags = [...html.matchAll(/<script\b[^>]*>/g)].map((m) => m[0]);
      expect(tags.length, `${label}: the page has scripts`).toBeGreaterThan(0);
      for (const tag of tags) expect(tag, `${label}: each script carries the nonce`).toContain(`nonce="${nonce}"`);
      nonces.push(nonce ?? "");
    }
    expect(new Set(nonces).size).toBe(nonces.length);
  });

  it("pages and route handlers send nosniff, a referrer policy and refuse framing", async () => {
    for (const [client, path] of [[anonymous(), "/sign-in"], [registrar, "/patients"], [registrar, "/api/patients"], [anonymous(), "/api/patients"]] as const) {
      const res = await client.get(path);
      expect(res.headers.get("x-content-type-options"), path).toBe("nosniff");
      expect(res.headers.get("referrer-policy"), path).toBe("same-origin");
      expect(res.headers.get("x-frame-options"), path).toBe("DENY");
      expect(res.headers.get("x-powered-by"), path).toBeNull();
    }
    const api = await registrar.get("/api/patients");
    const d = directives(api.headers.get("content-security-policy") ?? "");
    expect(d.get("default-src"), "route handlers: nothing may load or run").toEqual(["'none'"]);
    expect(d.get("frame-ancestors")).toEqual(["'none'"]);
    expect(api.headers.get("cache-control")).toMatch(/no-store/);
  });
});

describe("cross-site request forgery", () => {
  it("a form-encoded or text/plain body to a JSON route is refused (415) and stores nothing", async () => {
    for (const type of ["application/x-www-form-urlencoded", "text/plain", "multipart/form-data; boundary=x"]) {
      const hn = newHn("CS");
      const body = type.startsWith("application/x-www") ? new URLSearchParams(patientBody(hn) as unknown as Record<string, string>).toString() : JSON.stringify(patientBody(hn));
      const res = await registrar.fetch("/api/patients", { method: "POST", headers: { "content-type": type }, body });
      expect(res.status, type).toBe(415);
      expect(((await res.json()) as { error: { message: string } }).error.message).toMatch(/Content-Type: application\/json/);
      expect(await patientCount(hn)).toBe(0);
    }
  });

  it("a JSON request from another site is refused (403); the same site and server-to-server calls pass", async () => {
    const foreign = newHn("FO");
    const foreignHeaders: Record<string, string>[] = [{ origin: "https://evil.example" }, { origin: "null" }, { "sec-fetch-site": "cross-site" }, { origin: "http://127.0.0.1.evil.example" }];
    for (const headers of foreignHeaders) {
      const res = await registrar.fetch("/api/patients", { method: "POST", headers: { "content-type": "application/json", ...headers }, body: JSON.stringify(patientBody(foreign)) });
      expect(res.status, JSON.stringify(headers)).toBe(403);
      expect(((await res.json()) as { error: { message: string } }).error.message).toMatch(/another site/);
    }
    expect(await patientCount(foreign)).toBe(0);

    const same = newHn("SO");
    const ok = await registrar.fetch("/api/patients", {
      method: "POST",
      headers: { "content-type": "application/json", origin: baseUrl(), "sec-fetch-site": "same-origin" },
      body: JSON.stringify(patientBody(same)),
    });
    expect(ok.status).toBe(201);
    expect(await patientCount(same), "the count finds what was stored (so the zeros above mean something)").toBe(1);
    const none = newHn("NO");
    expect((await registrar.send("POST", "/api/patients", patientBody(none))).status).toBe(201);
    // Reading is not state-changing: a foreign Origin on a GET is answered normally.
    expect((await registrar.fetch("/api/patients", { headers: { origin: "https://evil.example" } })).status).toBe(200);
  });

  it("a film upload from another site is refused before the file is read", async () => {
    const res = await registrar.fetch(`/api/episodes/${randomUUID()}/films`, {
      method: "POST",
      headers: { "content-type": "image/png", origin: "https://evil.example" },
      body: new Uint8Array([0x89, 0x50, 0x4e, 0x47]),
    });
    expect(res.status).toBe(403);
  });

  it("a server action posted from another site does nothing", async () => {
    const dist = process.env.NEXT_DIST_DIR ?? ".next";
    const manifest = JSON.parse(readFileSync(join(dist, "server", "server-reference-manifest.json"), "utf8")) as {
      node: Record<string, { filename?: string; exportedName?: string }>;
    };
    const id = Object.entries(manifest.node).find(([, e]) => e.exportedName === "updateUserAction")?.[0];
    expect(id, "updateUserAction in the build").toBeTruthy();
    const before = await testDb()("users").where({ id: team.users.nurse.id }).first<{ name: string }>("name");
    const res = await admin.fetch("/admin/users", {
      method: "POST",
      headers: { "next-action": id ?? "", "content-type": "text/plain;charset=UTF-8", accept: "text/x-component", origin: "https://evil.example" },
      body: JSON.stringify([team.users.nurse.id, { name: "Renamed From Elsewhere" }]),
    });
    expect(res.status).toBeGreaterThanOrEqual(400);
    const after = await testDb()("users").where({ id: team.users.nurse.id }).first<{ name: string }>("name");
    expect(after?.name).toBe(before?.name);
  });
});

describe("sign-in", () => {
  it("throttles an address after 30 failures across many accounts, other addresses unaffected", async () => {
    const t = await makeTeam("ip-throttle");
    const ip = `198.51.100.${Math.floor(Math.random() * 250) + 1}, 10.0.0.1`; // RFC 5737 documentation range
    // 30 failures per address in 15 minutes: SIGN_IN_LIMITS in lib/auth/options.ts.
    for (let i = 0; i < 30; i += 1) {
      const c = await signIn(`nobody-${i}-${randomUUID().slice(0, 6)}@test.example`, "wrong-password-1", { "x-forwarded-for": ip });
      expect(c.ok).toBe(false);
    }
    const blocked = await signIn(t.users.nurse.email, TEST_PASSWORD, { "x-forwarded-for": ip });
    expect(blocked.ok).toBe(false);
    expect(blocked.error).toMatch(/Too many failed sign-ins/);
    const elsewhere = await signIn(t.users.nurse.email, TEST_PASSWORD, { "x-forwarded-for": "192.0.2.77" });
    expect(elsewhere.ok).toBe(true);
  });

  it("the session cookie is HttpOnly, SameSite=Lax and lasts one shift (8 hours)", async () => {
    const csrf = await fetch(`${baseUrl()}/api/auth/csrf`);
    const jar = csrf.headers.getSetCookie().map((c) => c.split(";")[0]).join("; ");
    const { csrfToken } = (await csrf.json()) as { csrfToken: string };
    const res = await fetch(`${baseUrl()}/api/auth/callback/credentials`, {
      method: "POST",
      redirect: "manual",
      headers: { "content-type": "application/x-www-form-urlencoded", cookie: jar },
      body: new URLSearchParams({ csrfToken, email: team.users.nurse.email, password: TEST_PASSWORD, json: "true" }),
    });
    const cookie = res.headers.getSetCookie().find((c) => c.startsWith(`${SESSION_COOKIE}=`));
    expect(cookie).toBeTruthy();
    expect(cookie).toMatch(/;\s*HttpOnly/i);
    expect(cookie).toMatch(/;\s*SameSite=Lax/i);
    const expires = Date.parse(/;\s*Expires=([^;]+)/i.exec(cookie ?? "")?.[1] ?? "");
    const seconds = (expires - Date.now()) / 1000;
    expect(seconds).toBeGreaterThan(EIGHT_HOURS - 120);
    expect(seconds).toBeLessThanOrEqual(EIGHT_HOURS + 5);
  });
});

describe("sessions", () => {
  const secret = () => {
    const s = process.env.NEXTAUTH_SECRET;
    if (!s) throw new Error("NEXTAUTH_SECRET is not set: run through `npm test`");
    return s;
  };
  const withToken = (token: string) => anonymous().fetch("/api/patients", { headers: { cookie: `${SESSION_COOKIE}=${token}` } });
  const claims = () => ({ sub: team.users.registrar.id, role: "registrar" as const, teamId: team.id, name: "x", email: team.users.registrar.email, signedInAt: Date.now() });

  it("a token made with the server's secret works (so the checks below mean something)", async () => {
    const token = await encode({ token: claims(), secret: secret(), maxAge: 600 });
    expect((await withToken(token)).status).toBe(200);
  });

  it("a token past its expiry is refused", async () => {
    const token = await encode({ token: claims(), secret: secret(), maxAge: -60 });
    expect((await withToken(token)).status).toBe(401);
  });

  it("a token made with another secret is refused", async () => {
    const token = await encode({ token: { ...claims(), role: "admin" }, secret: `${secret()}-not`, maxAge: 600 });
    expect((await withToken(token)).status).toBe(401);
  });

  it("a token naming a role the user does not have gives only the user's real role", async () => {
    // The role is re-read from the database on every request: a registrar's token claiming admin stays a registrar.
    const token = await encode({ token: { ...claims(), role: "admin" }, secret: secret(), maxAge: 600 });
    const res = await anonymous().fetch("/api/users", { headers: { cookie: `${SESSION_COOKIE}=${token}` } });
    expect(res.status).toBe(403);
  });

  it("a password change ends the sessions signed in before it", async () => {
    const t = await makeTeam("pw-change");
    const a = await signIn(t.users.admin.email, TEST_PASSWORD);
    const nurse = await signIn(t.users.nurse.email, TEST_PASSWORD);
    expect((await nurse.get("/api/patients")).status).toBe(200);
    await new Promise((r) => setTimeout(r, 20));
    const res = await a.send("POST", `/api/users/${t.users.nurse.id}/password`, { password: "a-new-password-7" });
    expect(res.status).toBe(200);
    expect((await nurse.get("/api/patients")).status).toBe(401);
    const again = await signIn(t.users.nurse.email, "a-new-password-7");
    expect(again.ok).toBe(true);
    expect((await again.get("/api/patients")).status).toBe(200);
  });
});

describe("password rules and administrators' actions", () => {
  it("refuses weak first passwords with a field message, accepts a good one, and audits it", async () => {
    // Rule in lib/validation/common.ts: at least 10 characters, with a letter and a digit.
    for (const weak of ["short1", "onlyletterslong", "1234567890123", "abc 12"]) {
      const res = await admin.send("POST", "/api/users", { email: `weak-${randomUUID().slice(0, 6)}@test.example`, name: "Weak Password", role: "nurse", password: weak });
      expect(res.status, weak).toBe(400);
      expect(((await res.json()) as { error: { fields: Record<string, string> } }).error.fields.password, weak).toMatch(/10 characters/);
    }
    const email = `strong-${randomUUID().slice(0, 6)}@test.example`;
    const created = await admin.send("POST", "/api/users", { email, name: "Strong Password", role: "nurse", password: "larkmoor-ward-7" });
    expect(created.status).toBe(201);
    const { user } = (await created.json()) as { user: { id: string; password_hash?: string } };
    expect(user.password_hash, "the hash never leaves the server").toBeUndefined();
    expect(await auditRows(team.users.admin.id, "user.create", user.id)).toBe(1);
    const weakReset = await admin.send("POST", `/api/users/${user.id}/password`, { password: "weak" });
    expect(weakReset.status).toBe(400);
  });

  it("writes one audit row for each change an administrator makes", async () => {
    const target = team.users.consultant.id;
    const u = await admin.send("PATCH", `/api/users/${target}`, { notifyOnFlag: true });
    expect(u.status).toBe(200);
    expect(await auditRows(team.users.admin.id, "user.update", target)).toBe(1);
    const p = await admin.send("POST", `/api/users/${target}/password`, { password: "consultant-pass-8" });
    expect(p.status).toBe(200);
    expect(await auditRows(team.users.admin.id, "user.password", target)).toBe(1);
    // Settings: write a group back with the values in force, so nothing changes for other tests.
    const groups = ((await (await admin.get("/api/settings")).json()) as { groups: { key: string; values: Record<string, unknown> }[] }).groups;
    const group = groups[0];
    expect(group, "at least one settings group").toBeTruthy();
    if (!group) return;
    const s = await admin.send("PUT", "/api/settings", { key: group.key, values: group.values });
    expect(s.status, await s.clone().text()).toBe(200);
    expect(await auditRows(team.users.admin.id, "settings.update", group.key)).toBe(1);
    // A refused change writes nothing.
    const bad = await admin.send("PATCH", `/api/users/${team.users.admin.id}`, { disabled: true });
    expect(bad.status).toBe(400);
    expect(await auditRows(team.users.admin.id, "user.update", team.users.admin.id)).toBe(0);
  });
});
