// Sign-in, roles, patients, episodes and the audit log, over HTTP against the running app and its real PostgreSQL.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { anonymous, signIn, type Client } from "../support/http";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type Role, type TestTeam } from "../support/fixtures";
import { closeTestDb, testDb } from "../support/db";

let team: TestTeam;
let other: TestTeam;
const as: Partial<Record<Role, Client>> = {};
const client = (r: Role) => {
  const c = as[r];
  if (!c) throw new Error(`no client for ${r}`);
  return c;
};

const validPatient = (hn: string) => ({
  hospitalNumber: hn,
  familyName: "Quillfeather",
  givenName: "Oona",
  dateOfBirth: "1994-03-11",
  sex: "female",
  email: "oona.q@example.org",
  phone: "+44 1632 960123",
  emailConsent: true,
});
const validEpisode = { side: "left", presentedOn: "2026-11-28", aetiology: "primary-spontaneous", management: "observation", primaryMethod: "collins" };

const auditCount = async (entityId: string, action?: string) => {
  const q = testDb()("audit_log").where({ entity_id: entityId });
  if (action) void q.where({ action });
  const [row] = await q.count<{ count: string }[]>({ count: "*" });
  return Number(row?.count ?? 0);
};

beforeAll(async () => {
  team = await makeTeam("found");
  other = await makeTeam("other");
  for (const r of ["registrar", "consultant", "nurse", "admin"] as const) {
    const c = await signIn(team.users[r].email, TEST_PASSWORD);
    expect(c.ok, `${r} signs in`).toBe(true);
    as[r] = c;
  }
});
afterAll(closeTestDb);

describe("sign-in", () => {
  it("refuses a wrong password and keeps no session", async () => {
    const c = await signIn(team.users.nurse.email, "not-the-password-1");
    expect(c.ok).toBe(false);
    expect((await c.get("/api/patients")).status).toBe(401);
  });

  it("throttles an address after five failures, even with the right password", async () => {
    const t = await makeTeam("throttle");
    for (let i = 0; i < 5; i++) expect((await signIn(t.users.registrar.email, `wrong-password-${i}`)).ok).toBe(false);
    const blocked = await signIn(t.users.registrar.email, TEST_PASSWORD);
    expect(blocked.ok).toBe(false);
    expect(blocked.error).toMatch(/Too many failed sign-ins/);
    // another address is not affected
    expect((await signIn(t.users.nurse.email, TEST_PASSWORD)).ok).toBe(true);
  });

  it("ends the session of a disabled account at once", async () => {
    const t = await makeTeam("disable");
    const reg = await signIn(t.users.registrar.email, TEST_PASSWORD);
    expect((await reg.get("/api/patients")).status).toBe(200);
    const admin = await signIn(t.users.admin.email, TEST_PASSWORD);
    const res = await admin.send("PATCH", `/api/users/${t.users.registrar.id}`, { disabled: true });
    expect(res.status).toBe(200);
    expect((await reg.get("/api/patients")).status).toBe(401);
    expect(await auditCount(t.users.registrar.id, "user.update")).toBe(1);
  });
});

describe("role matrix for the foundation routes", () => {
  // Expected status per role; "no session" is always 401. Permissions: lib/auth/permissions.ts.
  const cases: { name: string; method: string; path: () => string; body?: () => unknown; expect: Record<Role, number> }[] = [
    { name: "list patients", method: "GET", path: () => "/api/patients", expect: { registrar: 200, consultant: 200, nurse: 200, admin: 403 } },
    { name: "list users", method: "GET", path: () => "/api/users", expect: { registrar: 403, consultant: 403, nurse: 403, admin: 200 } },
    { name: "audit log", method: "GET", path: () => "/api/audit", expect: { registrar: 403, consultant: 403, nurse: 403, admin: 200 } },
    {
      name: "register patient (invalid body, so no row is made by allowed roles)",
      method: "POST",
      path: () => "/api/patients",
      body: () => ({}),
      expect: { registrar: 400, consultant: 400, nurse: 400, admin: 403 },
    },
    {
      name: "start episode (invalid body)",
      method: "POST",
      path: () => `/api/patients/00000000-0000-4000-8000-000000000000/episodes`,
      body: () => ({}),
      expect: { registrar: 400, consultant: 400, nurse: 403, admin: 403 },
    },
  ];

  for (const c of cases) {
    it(`${c.name}: each role, and no session`, async () => {
      expect((await anonymous().send(c.method, c.path(), c.body?.())).status).toBe(401);
      for (const r of ["registrar", "consultant", "nurse", "admin"] as const) {
        const res = await client(r).send(c.method, c.path(), c.body?.());
        expect(res.status, `${r} ${c.method} ${c.path()}`).toBe(c.expect[r]);
        expect(res.headers.get("content-type")).toMatch(/application\/json/);
      }
    });
  }

  it("answers 401 as JSON with a message a person can act on", async () => {
    const res = await anonymous().get("/api/patients");
    expect(res.status).toBe(401);
    expect(await res.json()).toEqual({ error: { code: "unauthenticated", message: expect.stringMatching(/Sign in/) as unknown } });
  });
});

describe("patients", () => {
  it("registers a patient, writes one audit row, and finds them by search", async () => {
    const hn = `RW${Date.now().toString().slice(-8)}`;
    const res = await client("registrar").send("POST", "/api/patients", validPatient(hn));
    expect(res.status).toBe(201);
    const { patient } = (await res.json()) as { patient: { id: string; hospital_number: string; email_consent: boolean } };
    expect(patient.hospital_number).toBe(hn);
    expect(patient.email_consent).toBe(true);
    expect(await auditCount(patient.id, "patient.create")).toBe(1);

    const list = (await (await client("nurse").get(`/api/patients?q=${hn}`)).json()) as { rows: { id: string }[]; total: number };
    expect(list.total).toBe(1);
    expect(list.rows[0]?.id).toBe(patient.id);
  });

  it("returns 400 with a message per field for bad input, and stores nothing", async () => {
    const before = await testDb()("patients").count<{ count: string }[]>({ count: "*" });
    const res = await client("registrar").send("POST", "/api/patients", { ...validPatient("x"), email: "not-an-address", dateOfBirth: "2999-01-01", familyName: "" });
    expect(res.status).toBe(400);
    const body = (await res.json()) as { error: { fields: Record<string, string> } };
    expect(Object.keys(body.error.fields).sort()).toEqual(["dateOfBirth", "email", "familyName", "hospitalNumber"]);
    expect(body.error.fields.email).toMatch(/e-mail/);
    const after = await testDb()("patients").count<{ count: string }[]>({ count: "*" });
    expect(after[0]?.count).toBe(before[0]?.count);
  });

  it("refuses a second patient with the same hospital number (409)", async () => {
    const p = await makePatient(team);
    const res = await client("registrar").send("POST", "/api/patients", validPatient(p.hospitalNumber));
    expect(res.status).toBe(409);
    expect(((await res.json()) as { error: { fields: Record<string, string> } }).error.fields.hospitalNumber).toBeTruthy();
  });

  it("refuses a stale edit (409) and keeps the first one", async () => {
    const p = await makePatient(team);
    const edit = { ...validPatient(p.hospitalNumber), givenName: "First", version: 1 };
    expect((await client("nurse").send("PATCH", `/api/patients/${p.id}`, edit)).status).toBe(200);
    const stale = await client("registrar").send("PATCH", `/api/patients/${p.id}`, { ...edit, givenName: "Second" });
    expect(stale.status).toBe(409);
    const row = await testDb()("patients").where({ id: p.id }).first<{ given_name: string; version: number }>();
    expect(row?.given_name).toBe("First");
    expect(row?.version).toBe(2);
    expect(await auditCount(p.id, "patient.update")).toBe(1);
  });

  it("hides another team's patient (404), for reading and writing", async () => {
    const p = await makePatient(other);
    expect((await client("registrar").get(`/api/patients/${p.id}`)).status).toBe(404);
    expect((await client("registrar").send("PATCH", `/api/patients/${p.id}`, { ...validPatient(p.hospitalNumber), version: 1 })).status).toBe(404);
    const list = (await (await client("registrar").get(`/api/patients?q=${p.hospitalNumber}`)).json()) as { total: number };
    expect(list.total).toBe(0);
  });
});

describe("episodes", () => {
  it("starts an episode with audit, and checks aetiology details", async () => {
    const p = await makePatient(team);
    const missing = await client("registrar").send("POST", `/api/patients/${p.id}/episodes`, { ...validEpisode, aetiology: "secondary-spontaneous" });
    expect(missing.status).toBe(400);
    expect(((await missing.json()) as { error: { fields: Record<string, string> } }).error.fields.underlyingDisease).toMatch(/underlying/);

    const res = await client("registrar").send("POST", `/api/patients/${p.id}/episodes`, { ...validEpisode, aetiology: "secondary-spontaneous", underlyingDisease: "COPD" });
    expect(res.status).toBe(201);
    const { episode } = (await res.json()) as { episode: { id: string; status: string; primary_method: string } };
    expect(episode.status).toBe("active");
    expect(await auditCount(episode.id, "episode.create")).toBe(1);
  });

  it("records oxygen periods and procedures, each audited, and refuses a second running period", async () => {
    const p = await makePatient(team);
    const e = await makeEpisode(team, p.id);
    const start = await client("registrar").send("POST", `/api/episodes/${e.id}/oxygen`, { startedAt: "2026-11-28T08:00:00Z", flowLMin: 10, device: "non-rebreather" });
    expect(start.status).toBe(201);
    const { period } = (await start.json()) as { period: { id: string } };
    expect((await client("registrar").send("POST", `/api/episodes/${e.id}/oxygen`, { startedAt: "2026-11-28T09:00:00Z" })).status).toBe(409);
    expect((await client("registrar").send("PATCH", `/api/episodes/${e.id}/oxygen/${period.id}`, { endedAt: "2026-11-27T09:00:00Z" })).status).toBe(400);
    expect((await client("registrar").send("PATCH", `/api/episodes/${e.id}/oxygen/${period.id}`, { endedAt: "2026-11-29T09:00:00Z" })).status).toBe(200);
    expect((await client("registrar").send("POST", `/api/episodes/${e.id}/procedures`, { kind: "needle-aspiration", performedAt: "2026-11-28T10:00:00Z", volumeMl: 900 })).status).toBe(201);
    expect(await auditCount(e.id, "oxygen.start")).toBe(1);
    expect(await auditCount(e.id, "oxygen.stop")).toBe(1);
    expect(await auditCount(e.id, "procedure.add")).toBe(1);
    // the nurse reads but does not change episodes
    expect((await client("nurse").get(`/api/episodes/${e.id}`)).status).toBe(200);
    expect((await client("nurse").send("POST", `/api/episodes/${e.id}/procedures`, { kind: "other", performedAt: "2026-11-28T10:00:00Z" })).status).toBe(403);
  });

  it("needs the date that confirmed resolution before an episode is marked resolved", async () => {
    const p = await makePatient(team);
    const e = await makeEpisode(team, p.id);
    const body = { ...validEpisode, status: "resolved", version: 1 };
    const res = await client("consultant").send("PATCH", `/api/episodes/${e.id}`, body);
    expect(res.status).toBe(400);
    expect(((await res.json()) as { error: { fields: Record<string, string> } }).error.fields.resolvedOn).toBeTruthy();
    expect((await client("consultant").send("PATCH", `/api/episodes/${e.id}`, { ...body, resolvedOn: "2026-11-30" })).status).toBe(200);
    expect(await auditCount(e.id, "episode.update")).toBe(1);
  });
});

describe("the audit log", () => {
  it("cannot be changed or deleted, even by the database owner", async () => {
    const [row] = await testDb()("audit_log").select("id").limit(1);
    expect(row).toBeDefined();
    await expect(testDb()("audit_log").where({ id: (row as { id: number }).id }).update({ action: "tampered" })).rejects.toThrow(/append-only/);
    await expect(testDb()("audit_log").where({ id: (row as { id: number }).id }).delete()).rejects.toThrow(/append-only/);
  });

  it("is readable by the admin of the team only, and shows that team's entries", async () => {
    const res = await client("admin").get("/api/audit?pageSize=100");
    expect(res.status).toBe(200);
    const body = (await res.json()) as { rows: { entity_id: string }[] };
    const otherPatient = await makePatient(other);
    expect(body.rows.some((r) => r.entity_id === otherPatient.id)).toBe(false);
  });
});

describe("users (admin)", () => {
  it("creates a user with a password that meets the rule, audited; weak passwords are refused with the rule", async () => {
    const weak = await client("admin").send("POST", "/api/users", { email: `weak.${Date.now()}@test.example`, name: "Weak Pass", role: "nurse", password: "short" });
    expect(weak.status).toBe(400);
    expect(((await weak.json()) as { error: { fields: Record<string, string> } }).error.fields.password).toMatch(/10 characters/);
    const email = `new.${Date.now()}@test.example`;
    const res = await client("admin").send("POST", "/api/users", { email, name: "New Nurse", role: "nurse", password: "a-good-password-7" });
    expect(res.status).toBe(201);
    const { user } = (await res.json()) as { user: { id: string; password_hash?: string } };
    expect(user.password_hash).toBeUndefined();
    expect(await auditCount(user.id, "user.create")).toBe(1);
    expect((await signIn(email, "a-good-password-7")).ok).toBe(true);
  });
});
