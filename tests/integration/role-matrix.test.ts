/**
 * The role matrix over every route handler and server action, read from the source tree
 * (tests/support/routes.ts), so a route added later is in the matrix without anyone remembering it:
 *
 * 1. Each handler names a permission (apiRoute / runAction), or is on the allow-list with a reason.
 * 2. No session: 401.
 * 3. Each role (registrar, consultant, nurse, admin): 403 exactly when lib/auth/permissions.ts denies
 *    the permission, otherwise neither 401 nor 403 (and never a 5xx).
 * 4. Another team's users asking for team A's real records: 404 (403 when their role lacks the
 *    permission anyway), never 200, never any of team A's data in the body, and team A's records
 *    unchanged afterwards. Team A's own users get 200 on the same GETs (so the ids are real).
 *
 * The matrix (route x role -> status) is printed to the test output.
 */
import { randomUUID } from "node:crypto";
import { readFileSync, existsSync } from "node:fs";
import { join } from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { can, ROLES, type Permission, type Role } from "../../lib/auth/permissions";
import { closeTestDb, testDb } from "../support/db";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { anonymous, baseUrl, signIn, type Client } from "../support/http";
import {
  fillPattern,
  listRouteHandlers,
  listServerActions,
  paramKinds,
  UNGUARDED_ALLOW_LIST,
  type RecordKind,
  type RouteHandler,
  type ServerAction,
} from "../support/routes";

// ---------------------------------------------------------------------------------------------------
// Team A's records, each carrying a marker that must never reach team B.

type Fixtures = Record<RecordKind, string>;
let teamA: TestTeam;
let teamB: TestTeam;
const as: Record<"A" | "B", Partial<Record<Role, Client>>> = { A: {}, B: {} };
const fx = {} as Fixtures;
/** Strings only team A's records contain (names, numbers, free text, ids). */
const markers = new Map<string, string>();
const tag = randomUUID().slice(0, 6);

const client = (team: "A" | "B", role: Role): Client => {
  const c = as[team][role];
  if (!c) throw new Error(`no client for ${team}/${role}`);
  return c;
};

async function smallPng(seed: number): Promise<Buffer> {
  const w = 64;
  const h = 80;
  const px = Buffer.alloc(w * h);
  for (let i = 0; i < px.length; i += 1) px[i] = (i * 7 + seed * 13) % 251;
  return sharp(px, { raw: { width: w, height: h, channels: 1 } }).png().toBuffer();
}

const now = new Date();
const iso = (days: number) => new Date(now.getTime() + days * 86_400_000).toISOString();

// ---------------------------------------------------------------------------------------------------
// A valid request per write handler, for the other-team check: validation passes, so only the team
// scope can stop it (a 400 would prove nothing). A handler with no entry here fails the test: add one.

type Body = { json: unknown } | { raw: Buffer; type: string; headers?: Record<string, string> } | { none: true };
interface Sample {
  body?: (f: Fixtures) => Body | Promise<Body>;
  /** Why another team's request cannot touch team A's records at all (it makes its own), if so. */
  ownTeamOnly?: string;
}

const SAMPLES: Record<string, Sample> = {
  "POST /api/patients": { ownTeamOnly: "registers a patient in the caller's own team" },
  "PATCH /api/patients/[id]": {
    body: () => ({ json: { hospitalNumber: `X${tag}`, familyName: "Changed", givenName: "Name", dateOfBirth: "1990-05-05", sex: "unknown", emailConsent: false, version: 1 } }),
  },
  "POST /api/patients/[id]/episodes": {
    body: () => ({ json: { side: "left", presentedOn: "2026-11-28", aetiology: "primary-spontaneous", management: "observation", primaryMethod: "collins" } }),
  },
  "PATCH /api/episodes/[id]": {
    body: () => ({
      json: { side: "right", presentedOn: "2026-11-01", aetiology: "primary-spontaneous", management: "observation", primaryMethod: "collins", status: "active", version: 1 },
    }),
  },
  "POST /api/episodes/[id]/oxygen": { body: () => ({ json: { startedAt: iso(-1), flowLMin: 2, device: "nasal cannula" } }) },
  "PATCH /api/episodes/[id]/oxygen/[periodId]": { body: () => ({ json: { endedAt: iso(0) } }) },
  "POST /api/episodes/[id]/procedures": { body: () => ({ json: { kind: "needle-aspiration", performedAt: iso(-1), volumeMl: 500 } }) },
  "POST /api/episodes/[id]/drains": {
    body: () => ({
      json: { insertedAt: iso(-1), insertedBy: "Dr Other", sizeFr: 12, site: "4th intercostal space", technique: "seldinger", indication: "air", drainage: "underwater-seal", suctionOn: false },
    }),
  },
  "POST /api/episodes/[id]/films": { body: async () => ({ raw: await smallPng(99), type: "image/png", headers: { "x-film-filename": "other-team.png" } }) },
  "PATCH /api/drains/[id]": { body: () => ({ json: { action: "remove", removedAt: iso(0), removalReason: "lung re-expanded" } }) },
  "POST /api/drains/[id]/observations": { body: () => ({ json: { observedAt: iso(0), swinging: true, bubbling: "none", fluidMl: 10 } }) },
  "PATCH /api/films/[id]": { body: () => ({ json: { projection: "AP" } }) },
  "DELETE /api/films/[id]": { body: () => ({ json: { reason: "uploaded to the wrong episode" } }) },
  "POST /api/films/[id]/calibration": { body: () => ({ json: { segment: { a: { x: 1, y: 1 }, b: { x: 41, y: 1 } }, knownLengthMm: 10, plane: "film" } }) },
  "POST /api/films/[id]/measurements": { body: () => ({ json: { calipers: CALIPERS, plane: "film" } }) },
  "PUT /api/measurements/[id]": { body: () => ({ json: { calipers: CALIPERS, plane: "film", basedOnVersion: 1, reason: "re-read" } }) },
  "POST /api/measurements/[id]/sign-off": { body: () => ({ none: true }) },
  "POST /api/flags/[id]": { body: () => ({ json: { action: "resolve", note: "seen", plan: { kind: "continue-observation" } } }) },
  "POST /api/bookings": { body: (f) => ({ json: { episodeId: f.episode, kind: "repeat-film", source: "manual", scheduledAt: iso(7), location: "X-ray department" } }) },
  "PATCH /api/bookings/[id]": { body: () => ({ json: { action: "cancel", version: 1, reason: "patient asked" } }) },
  "POST /api/users": { ownTeamOnly: "creates a user in the caller's own team" },
  "PATCH /api/users/[id]": { body: () => ({ json: { name: "Renamed By Other Team" } }) },
  "POST /api/users/[id]/password": { body: () => ({ json: { password: "other-team-pass-1" } }) },
  "PUT /api/settings": { ownTeamOnly: "rule and protocol settings are hospital-wide, not a team's records" },
};

/** A caliper set inside the 64 x 80 test film (original pixels). */
const CALIPERS = {
  hemithorax: { a: { x: 2, y: 40 }, b: { x: 30, y: 40 } },
  lung: { a: { x: 8, y: 40 }, b: { x: 26, y: 40 } },
  apex: { a: { x: 15, y: 5 }, b: { x: 15, y: 12 } },
  upper: { a: { x: 3, y: 20 }, b: { x: 8, y: 20 } },
  lower: { a: { x: 3, y: 60 }, b: { x: 7, y: 60 } },
};

const key = (h: { method: string; pattern: string }) => `${h.method} ${h.pattern}`;

async function send(c: Client, method: string, path: string, body: Body | undefined): Promise<Response> {
  if (!body || "none" in body) return c.fetch(path, { method });
  if ("json" in body) return c.send(method, path, body.json);
  return c.fetch(path, { method, headers: { "content-type": body.type, ...body.headers }, body: new Uint8Array(body.raw) });
}

async function readText(res: Response): Promise<string> {
  const type = res.headers.get("content-type") ?? "";
  if (/json|text|javascript|x-component/.test(type) || type === "") return res.text();
  return Buffer.from(await res.arrayBuffer()).toString("latin1");
}

/** Which of team A's markers a body contains (excluding ids named in the request itself). */
function leaks(body: string, except: string[]): string[] {
  const out: string[] = [];
  for (const [m, what] of markers) if (!except.includes(m) && body.includes(m)) out.push(what);
  return out;
}

// ---------------------------------------------------------------------------------------------------

const handlers = listRouteHandlers();
const actions = listServerActions();
const guarded = handlers.filter((h) => h.permission !== null);
const results: { row: string; cells: Record<string, string> }[] = [];
const record = (row: string, col: string, value: string | number) => {
  let r = results.find((x) => x.row === row);
  if (!r) results.push((r = { row, cells: {} }));
  r.cells[col] = String(value);
};

beforeAll(async () => {
  teamA = await makeTeam("matrix-a");
  teamB = await makeTeam("matrix-b");
  for (const [label, team] of [["A", teamA], ["B", teamB]] as const) {
    for (const r of ROLES) {
      const c = await signIn(team.users[r].email, TEST_PASSWORD);
      expect(c.ok, `${label} ${r} signs in`).toBe(true);
      as[label][r] = c;
    }
  }
  const k = testDb();
  const family = `Leakwright${tag}`;
  const given = `Orla${tag}`;
  const patient = await makePatient(teamA, { family_name: family, given_name: given, email: `orla.${tag}@example.org`, phone: `+44 1632 96${tag.replace(/\D/g, "0").slice(0, 4)}` });
  fx.patient = patient.id;
  markers.set(family, "patient family name");
  markers.set(given, "patient given name");
  markers.set(patient.hospitalNumber, "hospital number");
  markers.set(`orla.${tag}@example.org`, "patient e-mail");
  const episode = await makeEpisode(teamA, patient.id, { notes: `Episode note ${tag} confidential` });
  fx.episode = episode.id;
  markers.set(`Episode note ${tag}`, "episode notes");

  // A film through the upload route, as the browser sends it.
  const filename = `matrix-${tag}.png`;
  const up = await client("A", "registrar").fetch(`/api/episodes/${episode.id}/films`, {
    method: "POST",
    headers: { "content-type": "image/png", "x-film-filename": encodeURIComponent(filename) },
    body: new Uint8Array(await smallPng(1)),
  });
  expect(up.status, `film upload: ${await up.clone().text()}`).toBe(201);
  fx.film = ((await up.json()) as { film: { id: string } }).film.id;
  markers.set(filename, "film file name");

  const m = await client("A", "registrar").send("POST", `/api/films/${fx.film}/measurements`, { calipers: CALIPERS, plane: "film" });
  expect(m.status, `measurement: ${await m.clone().text()}`).toBe(201);
  fx.measurement = ((await m.json()) as { measurement: { id: string } }).measurement.id;

  const [flag] = await k("flags")
    .insert({ episode_id: episode.id, team_id: teamA.id, rule: "overdue", reason: `Flag reason ${tag} private`, figures: JSON.stringify({ days: 3 }) })
    .returning<{ id: string }[]>("id");
  fx.flag = flag!.id;
  markers.set(`Flag reason ${tag}`, "flag reason");
  const [booking] = await k("bookings")
    .insert({ episode_id: episode.id, team_id: teamA.id, scheduled_at: iso(5), location: `Room ${tag} east wing`, created_by: teamA.users.nurse.id })
    .returning<{ id: string }[]>("id");
  fx.booking = booking!.id;
  markers.set(`Room ${tag} east wing`, "booking location");
  const [drain] = await k("drains")
    .insert({ episode_id: episode.id, team_id: teamA.id, inserted_at: iso(-2), inserted_by: `Dr Drainer ${tag}`, size_fr: 12, site: `Site ${tag} axilla`, technique: "seldinger", drainage: "underwater-seal" })
    .returning<{ id: string }[]>("id");
  fx.drain = drain!.id;
  markers.set(`Site ${tag} axilla`, "drain site");
  const [oxygen] = await k("oxygen_periods").insert({ episode_id: episode.id, started_at: iso(-2), device: `Mask ${tag}` }).returning<{ id: string }[]>("id");
  fx.oxygen = oxygen!.id;
  markers.set(`Mask ${tag}`, "oxygen device");
  const [procedure] = await k("procedures")
    .insert({ episode_id: episode.id, kind: "needle-aspiration", performed_at: iso(-2), notes: `Aspirated ${tag} quietly` })
    .returning<{ id: string }[]>("id");
  fx.procedure = procedure!.id;
  markers.set(`Aspirated ${tag}`, "procedure notes");
  const [message] = await k("messages")
    .insert({ team_id: teamA.id, episode_id: episode.id, booking_id: booking!.id, recipient: `orla.${tag}@example.org`, template: "reminder", subject: `Reminder ${tag} film`, dedupe_key: `matrix-${tag}` })
    .returning<{ id: string }[]>("id");
  fx.message = message!.id;
  markers.set(`Reminder ${tag} film`, "message subject");
  fx.user = teamA.users.nurse.id;
  for (const u of await k("users").where({ team_id: teamA.id }).select<{ name: string; email: string; role: string }[]>("name", "email", "role")) {
    markers.set(u.name, `team A ${u.role}'s name`);
    markers.set(u.email, `team A ${u.role}'s e-mail`);
  }
  for (const [kind, id] of Object.entries(fx)) markers.set(id, `${kind} id`);
});

afterAll(async () => {
  const cols = ["perm", "anon", ...ROLES.map((r) => r.slice(0, 4)), ...ROLES.map((r) => `B:${r.slice(0, 4)}`), "A-own"];
  const width = Math.max(...results.map((r) => r.row.length), 10);
  const lines = [
    `role matrix (${handlers.length} handlers, ${actions.length} server actions; statuses; B: = another team on team A's records, A-own = team A's own GET)`,
    `${"".padEnd(width)}  ${cols.map((c) => c.padEnd(c === "perm" ? 20 : 6)).join(" ")}`,
    ...results.map((r) => `${r.row.padEnd(width)}  ${cols.map((c) => (r.cells[c] ?? "-").padEnd(c === "perm" ? 20 : 6)).join(" ")}`),
  ];
  console.log(lines.join("\n"));
  await closeTestDb();
});

describe("every handler is accounted for", () => {
  it("finds the route handlers and server actions in the source tree", () => {
    // The app has at least the foundation's routes; an empty list would mean the reader is broken.
    expect(handlers.length).toBeGreaterThan(10);
    expect(handlers.some((h) => h.pattern === "/api/patients" && h.method === "GET" && h.permission === "patient.read")).toBe(true);
    expect(actions.some((a) => a.name === "createUserAction")).toBe(true);
  });

  it("each route handler names its permission, or is on the allow-list with a reason", () => {
    const unguarded = handlers.filter((h) => h.permission === null && !UNGUARDED_ALLOW_LIST[h.pattern]);
    expect(unguarded.map(key), "handlers without apiRoute(permission, ...)").toEqual([]);
    // Every apiRoute( in a file belongs to an exported method we found (none hidden behind a variable).
    for (const file of new Set(handlers.map((h) => h.file))) {
      const src = readFileSync(file, "utf8");
      const calls = (src.match(/\bapiRoute\s*(?:<[^>]*>)?\s*\(/g) ?? []).length;
      expect(calls, `${file}: apiRoute calls vs exported methods with a permission`).toBe(handlers.filter((h) => h.file === file && h.permission).length);
    }
  });

  it("each server action starts with runAction(permission, ...)", () => {
    const bare = actions.filter((a) => a.permission === null);
    expect(bare.map((a) => `${a.file}#${a.name}`), "server actions whose first statement is not runAction(permission, ...)").toEqual([]);
  });

  it("each write handler has a sample request for the other-team check", () => {
    const missing = guarded.filter((h) => h.method !== "GET" && h.method !== "HEAD" && !SAMPLES[key(h)]).map(key);
    expect(missing, "add these to SAMPLES in tests/integration/role-matrix.test.ts").toEqual([]);
  });

  it("each dynamic segment names a kind of record the fixtures have", () => {
    const unknown = handlers.flatMap((h) => Object.entries(paramKinds(h.pattern)).filter(([, kind]) => kind === null).map(([p]) => `${h.pattern} [${p}]`));
    expect(unknown.filter((u) => !Object.keys(UNGUARDED_ALLOW_LIST).some((a) => u.startsWith(a)))).toEqual([]);
  });
});

describe("allow-listed handlers", () => {
  it("the bench echo route answers 404 unless the server runs with RIMWATCH_BENCH=1", async () => {
    if (!handlers.some((h) => h.pattern === "/api/bench/echo")) return;
    expect(process.env.RIMWATCH_BENCH, "the test server must not run in bench mode").not.toBe("1");
    for (const method of ["GET", "PUT"]) {
      const res = await anonymous().fetch("/api/bench/echo", { method, ...(method === "PUT" ? { body: "{}" } : {}) });
      record(`${method} /api/bench/echo`, "anon", res.status);
      expect(res.status, `${method} /api/bench/echo`).toBe(404);
    }
  });

  it("next-auth's session endpoint gives nothing without a session", async () => {
    const res = await anonymous().get("/api/auth/session");
    record("GET /api/auth/session", "anon", res.status);
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({});
  });
});

describe("route handlers by role", () => {
  const fakeIds = (h: RouteHandler) => Object.fromEntries(h.params.map((p) => [p, randomUUID()]));

  for (const h of guarded) {
    it(`${key(h)} (${h.permission})`, async () => {
      const perm = h.permission as Permission;
      record(key(h), "perm", perm);
      // Made-up ids and an empty body: a denied role is stopped before anything is read; an allowed
      // one gets 400/404/415/422, which shows the permission check let it through.
      const path = fillPattern(h.pattern, fakeIds(h));
      const body: Body = h.method === "GET" || h.method === "HEAD" ? { none: true } : { json: {} };

      const anon = await send(anonymous(), h.method, path, body);
      record(key(h), "anon", anon.status);
      expect(anon.status, `no session: ${h.method} ${path}`).toBe(401);

      for (const role of ROLES) {
        const res = await send(client("A", role), h.method, path, body);
        record(key(h), role.slice(0, 4), res.status);
        const text = await res.text();
        if (can(role, perm)) {
          expect([401, 403], `${role} may ${perm}: ${h.method} ${path} -> ${res.status} ${text.slice(0, 200)}`).not.toContain(res.status);
          expect(res.status, `${role}: ${h.method} ${path} -> ${text.slice(0, 300)}`).toBeLessThan(500);
        } else {
          expect(res.status, `${role} lacks ${perm}: ${h.method} ${path}`).toBe(403);
        }
      }
    });
  }
});

describe("another team's records", () => {
  const realIds = (h: RouteHandler): Record<string, string> =>
    Object.fromEntries(Object.entries(paramKinds(h.pattern)).map(([p, kind]) => [p, kind ? fx[kind] : randomUUID()]));

  const snapshot = async () => {
    const k = testDb();
    const tables: [string, string][] = [
      ["patients", fx.patient], ["episodes", fx.episode], ["films", fx.film], ["measurements", fx.measurement], ["flags", fx.flag],
      ["bookings", fx.booking], ["drains", fx.drain], ["oxygen_periods", fx.oxygen], ["procedures", fx.procedure], ["messages", fx.message], ["users", fx.user],
    ];
    const out: Record<string, unknown> = {};
    for (const [t, id] of tables) out[t] = await k(t).where({ id }).first();
    out.films_of_episode = (await k("films").where({ episode_id: fx.episode }).count<{ c: string }[]>({ c: "*" }))[0]?.c;
    out.measurements_of_episode = (await k("measurements").where({ episode_id: fx.episode }).count<{ c: string }[]>({ c: "*" }))[0]?.c;
    out.drains_of_episode = (await k("drains").where({ episode_id: fx.episode }).count<{ c: string }[]>({ c: "*" }))[0]?.c;
    out.episodes_of_patient = (await k("episodes").where({ patient_id: fx.patient }).count<{ c: string }[]>({ c: "*" }))[0]?.c;
    out.oxygen_of_episode = (await k("oxygen_periods").where({ episode_id: fx.episode }).count<{ c: string }[]>({ c: "*" }))[0]?.c;
    out.procedures_of_episode = (await k("procedures").where({ episode_id: fx.episode }).count<{ c: string }[]>({ c: "*" }))[0]?.c;
    out.bookings_of_episode = (await k("bookings").where({ episode_id: fx.episode }).count<{ c: string }[]>({ c: "*" }))[0]?.c;
    return JSON.stringify(out);
  };

  it("team A's own users reach every record (the ids are real), and the leak check sees their data", async () => {
    let seen = 0;
    for (const h of guarded.filter((x) => x.method === "GET" && x.params.length > 0)) {
      const path = fillPattern(h.pattern, realIds(h));
      for (const role of ROLES) {
        if (!can(role, h.permission as Permission)) continue;
        const res = await client("A", role).get(path);
        const text = await readText(res);
        if (!results.find((r) => r.row === key(h))?.cells["A-own"]) record(key(h), "A-own", res.status);
        expect(res.status, `${role} of team A: GET ${path} -> ${text.slice(0, 200)}`).toBe(200);
        if (leaks(text, []).length > 0) seen += 1;
      }
    }
    // The same check that must find nothing for team B finds team A's data in team A's answers.
    expect(seen).toBeGreaterThan(0);
    const own = await readText(await client("A", "nurse").get(`/api/patients/${fx.patient}`));
    expect(leaks(own, [fx.patient])).toContain("patient family name");
  });

  it("404 (or 403 by role) for every handler, no data in any answer, nothing changed", async () => {
    const before = await snapshot();
    const leaked: string[] = [];
    for (const h of guarded) {
      const sample = SAMPLES[key(h)];
      if (sample?.ownTeamOnly) {
        record(key(h), "B:regi", "own");
        continue;
      }
      const ids = realIds(h);
      const path = fillPattern(h.pattern, ids);
      const body: Body = sample?.body ? await sample.body(fx) : { none: true };
      for (const role of ROLES) {
        const res = await send(client("B", role), h.method, path, body);
        const text = await readText(res);
        record(key(h), `B:${role.slice(0, 4)}`, res.status);
        const found = leaks(text, Object.values(ids));
        if (found.length) leaked.push(`${role} of team B: ${h.method} ${path} -> ${res.status} shows ${found.join(", ")}`);
        if (!can(role, h.permission as Permission)) {
          expect(res.status, `${role} of team B lacks ${h.permission}: ${h.method} ${path}`).toBe(403);
        } else if (h.params.length > 0 || h.method !== "GET") {
          expect(res.status, `${role} of team B: ${h.method} ${path} -> ${text.slice(0, 300)}`).toBe(404);
        } else {
          expect(res.status, `${role} of team B: ${h.method} ${path} (own list) -> ${text.slice(0, 300)}`).toBe(200);
        }
      }
    }
    expect(leaked, "team A's data in another team's answers").toEqual([]);
    expect(await snapshot(), "team A's records after another team's requests").toBe(before);
    const [audit] = await testDb()("audit_log")
      .whereIn("actor_id", ROLES.map((r) => teamB.users[r].id))
      .whereIn("entity_id", Object.values(fx))
      .count<{ c: string }[]>({ c: "*" });
    expect(Number(audit?.c ?? 0), "audit rows by team B on team A's records").toBe(0);
  });
});

// ---------------------------------------------------------------------------------------------------
// Server actions, called over HTTP as the browser's React runtime calls them: POST to the page that
// uses the action with its id in the Next-Action header and the arguments as a JSON array.

interface ManifestEntry { workers: Record<string, unknown>; filename?: string; exportedName?: string }

function actionManifest(): Record<string, ManifestEntry> {
  const dist = process.env.NEXT_DIST_DIR ?? ".next";
  const file = join(dist, "server", "server-reference-manifest.json");
  if (!existsSync(file)) throw new Error(`${file} is missing: the app under test was not built into ${dist}`);
  return (JSON.parse(readFileSync(file, "utf8")) as { node: Record<string, ManifestEntry> }).node;
}

function locateAction(a: ServerAction): { id: string; page: string } {
  const manifest = actionManifest();
  for (const [id, entry] of Object.entries(manifest)) {
    if (entry.filename !== a.file || entry.exportedName !== a.name) continue;
    const worker = Object.keys(entry.workers).find((w) => w.startsWith("app/") && w.endsWith("/page"));
    if (!worker) continue;
    const page = "/" + worker.replace(/^app\//, "").replace(/\/page$/, "").split("/").filter((s) => !(s.startsWith("(") && s.endsWith(")"))).map((s) => (/^\[.*\]$/.test(s) ? randomUUID() : s)).join("/");
    return { id, page: page === "/" ? "/" : page.replace(/\/$/, "") };
  }
  throw new Error(`${a.file}#${a.name} is not in the build's server-reference manifest (is it used by a page?)`);
}

async function callAction(c: Client, a: ServerAction, args: unknown[]): Promise<{ status: number; outcome: number | "ok" | "redirect" | null; text: string }> {
  const { id, page } = locateAction(a);
  const res = await c.fetch(page, {
    method: "POST",
    headers: { "next-action": id, "content-type": "text/plain;charset=UTF-8", accept: "text/x-component", origin: baseUrl() },
    body: JSON.stringify(args),
  });
  const text = await res.text();
  if (res.status >= 300 && res.status < 400) return { status: res.status, outcome: "redirect", text: res.headers.get("location") ?? "" };
  const status = /"ok":false,"status":(\d{3})/.exec(text)?.[1];
  if (status) return { status: res.status, outcome: Number(status), text };
  return { status: res.status, outcome: /"ok":true/.test(text) ? "ok" : null, text };
}

describe("server actions by role", () => {
  for (const a of actions) {
    it(`${a.file}#${a.name} (${a.permission})`, async () => {
      const perm = a.permission as Permission;
      const row = `action ${a.name}`;
      record(row, "perm", perm);
      // A made-up id and an empty input: nothing can be created or changed by an allowed role either.
      const args = [randomUUID(), {}];

      const anon = await callAction(anonymous(), a, args);
      record(row, "anon", anon.outcome === "redirect" ? anon.status : String(anon.outcome));
      // The proxy sends a visitor without a session to sign-in before the action runs; if it ever
      // lets one through, runAction must answer 401.
      if (anon.outcome === "redirect") expect(anon.text).toMatch(/\/sign-in/);
      else expect(anon.outcome, anon.text.slice(0, 300)).toBe(401);

      for (const role of ROLES) {
        const r = await callAction(client("A", role), a, args);
        record(row, role.slice(0, 4), String(r.outcome));
        if (can(role, perm)) {
          expect(typeof r.outcome === "number" ? r.outcome : 0, `${role} may ${perm}: ${r.text.slice(0, 300)}`).not.toBe(403);
          expect([400, 404, 422, "ok"], `${role} may ${perm}: ${r.text.slice(0, 300)}`).toContain(r.outcome);
        } else {
          expect(r.outcome, `${role} lacks ${perm}: ${r.text.slice(0, 300)}`).toBe(403);
        }
      }
    });
  }

  it("another team's administrator cannot rename or re-password team A's users", async () => {
    const update = actions.find((a) => a.name === "updateUserAction");
    const password = actions.find((a) => a.name === "setPasswordAction");
    if (!update || !password) return;
    const before = await testDb()("users").where({ id: teamA.users.nurse.id }).first<{ name: string; password_hash: string }>("name", "password_hash");
    const r1 = await callAction(client("B", "admin"), update, [teamA.users.nurse.id, { name: "Taken Over" }]);
    const r2 = await callAction(client("B", "admin"), password, [teamA.users.nurse.id, { password: "taken-over-pass-9" }]);
    record("action updateUserAction", "B:admi", String(r1.outcome));
    record("action setPasswordAction", "B:admi", String(r2.outcome));
    expect(r1.outcome, r1.text.slice(0, 300)).toBe(404);
    expect(r2.outcome, r2.text.slice(0, 300)).toBe(404);
    expect(leaks(r1.text + r2.text, [teamA.users.nurse.id])).toEqual([]);
    const after = await testDb()("users").where({ id: teamA.users.nurse.id }).first<{ name: string; password_hash: string }>("name", "password_hash");
    expect(after).toEqual(before);
  });
});
