// Versions of a measurement over HTTP: a change is a new version (the old one stays readable with who
// and when), a save based on an old version is refused with 409 and writes nothing, sign-off locks a
// version, and a second reader keeps a chain of their own.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { signIn, type Client } from "../support/http";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { makeFilmAt, PITCH_MM } from "../support/followup";
import { closeTestDb, testDb } from "../support/db";

interface Seg {
  a: { x: number; y: number };
  b: { x: number; y: number };
}
interface View {
  id: string;
  chainId: string;
  version: number;
  current: boolean;
  reader: { id: string; name: string };
  createdBy: { id: string; name: string };
  createdAt: string;
  supersededAt: string | null;
  reason: string | null;
  calipers: Record<string, Seg | null>;
  figures: { lightPercent: number | null; hilumCm: number | null };
  signedOff: { by: { id: string }; at: string } | null;
}
interface ErrorBody {
  error: { code: string; message: string; fields?: Record<string, string>; details?: Record<string, unknown> };
}

const PITCH = PITCH_MM; // mm a pixel, typical DR detector (from memory)
const H: Seg = { a: { x: 100, y: 800 }, b: { x: 600, y: 800 } }; // 500 px = 100 mm
const lung = (x: number): Seg => ({ a: { x, y: 800 }, b: { x: 600, y: 800 } });

let team: TestTeam;
let registrar: Client;
let consultant: Client;
let episodeId: string;

/** A film row straight into the table, calibrated at PITCH mm (tests/support/followup.ts uses the same pitch). */
const makeFilm = (): Promise<string> => makeFilmAt(team, episodeId, new Date("2026-11-03T09:00:00Z"));

async function json<T>(res: Response): Promise<T> {
  return (await res.json()) as T;
}

async function create(c: Client, filmId: string, calipers: Record<string, Seg | null>): Promise<View> {
  const res = await c.send("POST", `/api/films/${filmId}/measurements`, { calipers });
  expect(res.status).toBe(201);
  return (await json<{ measurement: View }>(res)).measurement;
}

interface StoredRow {
  id: string;
  version: number;
  chain_id: string;
  superseded_at: Date | null;
  signed_off_at: Date | null;
  calipers: Record<string, Seg>;
  light_percent: number;
  reason: string | null;
}

async function rows(filmId: string): Promise<StoredRow[]> {
  return testDb()("measurements")
    .where({ film_id: filmId })
    .orderBy("version")
    .select("id", "version", "chain_id", "superseded_at", "signed_off_at", "calipers", "light_percent", "reason");
}

/** Light RW, Pleural Diseases: 100 (1 - L^3 / H^3), H = 100 mm; L = (600 - x) px x 0.2 mm. */
const light = (x: number) => 100 * (1 - ((600 - x) * PITCH) ** 3 / 100 ** 3);

beforeAll(async () => {
  team = await makeTeam("meas-ver");
  const patient = await makePatient(team);
  episodeId = (await makeEpisode(team, patient.id)).id;
  [registrar, consultant] = await Promise.all([signIn(team.users.registrar.email, TEST_PASSWORD), signIn(team.users.consultant.email, TEST_PASSWORD)]);
});

afterAll(async () => {
  await closeTestDb();
});

describe("saving a change", () => {
  it("makes version n+1, stamps the old one superseded, and keeps both readable with who and when", async () => {
    const filmId = await makeFilm();
    const v1 = await create(registrar, filmId, { hemithorax: H, lung: lung(215) });
    const res = await registrar.send("PUT", `/api/measurements/${v1.id}`, { calipers: { hemithorax: H, lung: lung(250) }, basedOnVersion: 1, reason: "lung edge was further out" });
    expect(res.status).toBe(200);
    const v2 = (await json<{ measurement: View }>(res)).measurement;
    expect(v2).toMatchObject({ version: 2, chainId: v1.chainId, current: true, reason: "lung edge was further out" });
    // L = 350 px x 0.2 = 70 mm: 100 (1 - 0.7^3) = 65.7 % (Light RW, Pleural Diseases).
    expect(v2.figures.lightPercent).toBeCloseTo(65.7, 9);
    expect(v2.figures.lightPercent).toBeCloseTo(light(250), 9);

    const stored = await rows(filmId);
    expect(stored.map((r) => [r.version, r.chain_id, r.superseded_at === null])).toEqual([
      [1, v1.chainId, false],
      [2, v1.chainId, true],
    ]);
    // Version 1 is untouched apart from the superseded stamp.
    expect(stored[0]?.calipers.lung).toEqual(lung(215));
    expect(stored[0]?.light_percent).toBeCloseTo(light(215), 9);

    const list = await json<{ versions: View[]; readers: { current: View; versions: number }[] }>(await consultant.get(`/api/films/${filmId}/measurements`));
    expect(list.versions.map((v) => [v.version, v.current, v.createdBy.id])).toEqual([
      [1, false, team.users.registrar.id],
      [2, true, team.users.registrar.id],
    ]);
    expect(list.versions[0]?.supersededAt).toBeTruthy();
    expect(list.readers).toHaveLength(1);
    expect(list.readers[0]).toMatchObject({ versions: 2, current: { id: v2.id } });
    const old = await json<{ measurement: View }>(await registrar.get(`/api/measurements/${v1.id}`));
    expect(old.measurement).toMatchObject({ version: 1, current: false });

    const audit: { before: unknown; after: unknown } | undefined = await testDb()("audit_log")
      .where({ entity: "measurement", entity_id: v2.id, action: "measurement.version" })
      .first("before", "after");
    expect(audit).toMatchObject({ before: { version: 1 }, after: { version: 2, reason: "lung edge was further out" } });
  });

  it("refuses a save based on an older version with 409, saying who saved, and writes nothing", async () => {
    const filmId = await makeFilm();
    const v1 = await create(registrar, filmId, { hemithorax: H, lung: lung(215) });
    expect((await registrar.send("PUT", `/api/measurements/${v1.id}`, { calipers: { hemithorax: H, lung: lung(230) }, basedOnVersion: 1 })).status).toBe(200);
    const before = await rows(filmId);
    const res = await registrar.send("PUT", `/api/measurements/${v1.id}`, { calipers: { hemithorax: H, lung: lung(260) }, basedOnVersion: 1 });
    expect(res.status).toBe(409);
    const { error } = await json<ErrorBody>(res);
    expect(error.message).toMatch(/Version 2 of this measurement was saved by .* Your calipers are kept/);
    expect(error.details).toMatchObject({ currentVersion: 2 });
    expect(typeof error.details?.currentId).toBe("string");
    expect(await rows(filmId)).toEqual(before);
  });

  it("lets exactly one of two saves based on the same version land when they race", async () => {
    const filmId = await makeFilm();
    const v1 = await create(registrar, filmId, { hemithorax: H, lung: lung(215) });
    const [a, b] = await Promise.all([
      registrar.send("PUT", `/api/measurements/${v1.id}`, { calipers: { hemithorax: H, lung: lung(240) }, basedOnVersion: 1 }),
      registrar.send("PUT", `/api/measurements/${v1.id}`, { calipers: { hemithorax: H, lung: lung(270) }, basedOnVersion: 1 }),
    ]);
    expect([a.status, b.status].sort()).toEqual([200, 409]);
    const stored = await rows(filmId);
    expect(stored.map((r) => r.version)).toEqual([1, 2]);
    expect(stored.filter((r) => r.superseded_at === null)).toHaveLength(1);
  });

  it("refuses another reader's chain (403) and a second chain for the same reader (409)", async () => {
    const filmId = await makeFilm();
    const v1 = await create(registrar, filmId, { hemithorax: H, lung: lung(215) });
    const res = await consultant.send("PUT", `/api/measurements/${v1.id}`, { calipers: { hemithorax: H, lung: lung(300) }, basedOnVersion: 1 });
    expect(res.status).toBe(403);
    expect((await json<ErrorBody>(res)).error.message).toMatch(/reading of the film/);
    const again = await registrar.send("POST", `/api/films/${filmId}/measurements`, { calipers: { hemithorax: H } });
    expect(again.status).toBe(409);
    expect((await json<ErrorBody>(again)).error.details).toMatchObject({ measurementId: v1.id, version: 1 });
    expect((await rows(filmId)).length).toBe(1);
  });
});

describe("a second reader", () => {
  it("gets a chain of their own; both current readings are listed side by side", async () => {
    const filmId = await makeFilm();
    const mine = await create(registrar, filmId, { hemithorax: H, lung: lung(215) });
    const theirs = await create(consultant, filmId, { hemithorax: H, lung: lung(250) });
    expect(theirs.chainId).not.toBe(mine.chainId);
    expect(theirs.version).toBe(1);
    const list = await json<{ readers: { reader: { id: string }; current: View }[] }>(await registrar.get(`/api/films/${filmId}/measurements`));
    const byReader = new Map(list.readers.map((r) => [r.reader.id, r.current.figures.lightPercent]));
    expect(byReader.size).toBe(2);
    // 100 (1 - 0.77^3) = 54.35 % and 100 (1 - 0.70^3) = 65.70 %: 11.35 points apart (Light RW, Pleural Diseases).
    expect(byReader.get(team.users.registrar.id)).toBeCloseTo(54.3467, 4);
    expect(byReader.get(team.users.consultant.id)).toBeCloseTo(65.7, 9);
  });
});

describe("sign-off", () => {
  it("is for consultants only, locks the version, and a change then needs a reason", async () => {
    const filmId = await makeFilm();
    const v1 = await create(registrar, filmId, { hemithorax: H, lung: lung(215), hilum: { a: { x: 210, y: 805 }, b: { x: 100, y: 805 } } });

    expect((await registrar.send("POST", `/api/measurements/${v1.id}/sign-off`, {})).status).toBe(403);
    const res = await consultant.send("POST", `/api/measurements/${v1.id}/sign-off`, {});
    expect(res.status).toBe(200);
    const signed = (await json<{ measurement: View }>(res)).measurement;
    expect(signed.signedOff?.by.id).toBe(team.users.consultant.id);
    const audit: { actor_id: string } | undefined = await testDb()("audit_log").where({ entity_id: v1.id, action: "measurement.signoff" }).first("actor_id");
    expect(audit).toMatchObject({ actor_id: team.users.consultant.id });

    // Twice is refused.
    expect((await consultant.send("POST", `/api/measurements/${v1.id}/sign-off`, {})).status).toBe(409);

    // A change without a reason: 400 naming the reason field; nothing written.
    const before = await rows(filmId);
    const noReason = await registrar.send("PUT", `/api/measurements/${v1.id}`, { calipers: { hemithorax: H, lung: lung(240) }, basedOnVersion: 1 });
    expect(noReason.status).toBe(400);
    const err = (await json<ErrorBody>(noReason)).error;
    expect(err.message).toMatch(/signed off; say why/);
    expect(err.fields?.reason).toBeTruthy();
    const blank = await registrar.send("PUT", `/api/measurements/${v1.id}`, { calipers: { hemithorax: H, lung: lung(240) }, basedOnVersion: 1, reason: "   " });
    expect(blank.status).toBe(400);
    expect(await rows(filmId)).toEqual(before);

    // With a reason: a new, unsigned version; the signed one keeps its calipers and its sign-off.
    const withReason = await registrar.send("PUT", `/api/measurements/${v1.id}`, { calipers: { hemithorax: H, lung: lung(240) }, basedOnVersion: 1, reason: "missed the lateral pleural line" });
    expect(withReason.status).toBe(200);
    const v2 = (await json<{ measurement: View }>(withReason)).measurement;
    expect(v2).toMatchObject({ version: 2, signedOff: null, reason: "missed the lateral pleural line" });
    const stored = await rows(filmId);
    expect(stored[0]).toMatchObject({ version: 1, calipers: { lung: lung(215) } });
    expect(stored[0]?.signed_off_at).not.toBeNull();
    expect(stored[0]?.superseded_at).not.toBeNull();

    // The old, superseded version can no longer be signed off; the new one can.
    expect((await consultant.send("POST", `/api/measurements/${v1.id}/sign-off`, {})).status).toBe(409);
    expect((await consultant.send("POST", `/api/measurements/${v2.id}/sign-off`, {})).status).toBe(200);
  });
});
