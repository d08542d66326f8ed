// Measurements over HTTP: who may measure, what the server refuses and why, and that every figure it
// stores is its own, computed from the caliper geometry with the film's calibration.
import { randomUUID } from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { anonymous, signIn, type Client } from "../support/http";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { closeTestDb, testDb } from "../support/db";
import { makeFilmAt } from "../support/followup";

interface Seg {
  a: { x: number; y: number };
  b: { x: number; y: number };
}
interface Saved {
  id: string;
  chainId: string;
  version: number;
  plane: string;
  calibrationSource: string | null;
  figures: Record<string, number | null>;
  results: {
    guideline: { bts: { size: string; valueCm: number | null }; accp: { size: string; valueCm: number | null } };
    rhea: { status: string };
    collins: { status: string };
    light: { status: string; unit?: string };
    spread: { points: number | null; disagreement: boolean };
  };
}

/** Detector pixel pitch of the test films, mm (typical DR pitch 0.1-0.2 mm, from memory). */
const PITCH = 0.2;

/**
 * A caliper set whose lengths at 0.2 mm a pixel are round: hemithorax 500 px = 100 mm, lung 385 px =
 * 77 mm, apex 200 px = 40 mm, upper 125 px = 25 mm, lower 50 px = 10 mm, hilum 110 px = 22 mm.
 */
const CALIPERS: Record<string, Seg> = {
  hemithorax: { a: { x: 100, y: 800 }, b: { x: 600, y: 800 } },
  lung: { a: { x: 215, y: 800 }, b: { x: 600, y: 800 } },
  apex: { a: { x: 400, y: 500 }, b: { x: 400, y: 300 } },
  upper: { a: { x: 230, y: 675 }, b: { x: 105, y: 675 } },
  lower: { a: { x: 160, y: 1025 }, b: { x: 110, y: 1025 } },
  hilum: { a: { x: 210, y: 805 }, b: { x: 100, y: 805 } },
};

let team: TestTeam;
let other: TestTeam;
let registrar: Client;
let consultant: Client;
let nurse: Client;
let outsider: Client;
let episodeId: string;

/** A film row straight into the table (the upload pipeline has its own tests): 1,300 x 1,500 px with the given calibration. */
const makeFilm = (t: TestTeam, epId: string, calibration: unknown, extra: Record<string, unknown> = {}): Promise<string> =>
  makeFilmAt(t, epId, new Date("2026-11-02T09:00:00Z"), { calibration: calibration === null ? null : JSON.stringify(calibration), ...extra });

const detector = (rowMm: number, columnMm: number) => ({ film: { rowMm, columnMm, source: "imager-pixel-spacing" }, patient: null, correctionUnknown: false, notes: [] });

async function json<T>(res: Response): Promise<T> {
  return (await res.json()) as T;
}

async function countMeasurements(filmId: string): Promise<number> {
  const [r] = await testDb()("measurements").where({ film_id: filmId }).count<{ count: string }[]>({ count: "*" });
  return Number(r?.count ?? 0);
}

const lengthMm = (s: Seg, rowMm: number, columnMm: number) => Math.hypot((s.b.x - s.a.x) * columnMm, (s.b.y - s.a.y) * rowMm);

/** Rhea nomogram points (AID cm -> %), Rhea JT et al., Radiology 1982;144:733-736, as tabulated in Wyatt JP et al., Oxford Handbook of A&E Medicine 1999 p. 114. */
const RHEA: [number, number][] = [[0.5, 10], [1, 14], [1.5, 18], [2, 23], [2.5, 27], [3, 32], [3.5, 36], [4, 40], [5, 49]];
function rheaFromTable(aid: number): number {
  for (let i = 0; i < RHEA.length - 1; i += 1) {
    const [x0, y0] = RHEA[i] as [number, number];
    const [x1, y1] = RHEA[i + 1] as [number, number];
    if (aid >= x0 && aid <= x1) return y0 + ((aid - x0) / (x1 - x0)) * (y1 - y0);
  }
  throw new Error("outside the nomogram");
}

beforeAll(async () => {
  team = await makeTeam("meas-api");
  other = await makeTeam("meas-api-other");
  const patient = await makePatient(team);
  episodeId = (await makeEpisode(team, patient.id)).id;
  [registrar, consultant, nurse, outsider] = await Promise.all([
    signIn(team.users.registrar.email, TEST_PASSWORD),
    signIn(team.users.consultant.email, TEST_PASSWORD),
    signIn(team.users.nurse.email, TEST_PASSWORD),
    signIn(other.users.registrar.email, TEST_PASSWORD),
  ]);
});

afterAll(async () => {
  await closeTestDb();
});

describe("a registrar measures a calibrated film", () => {
  let filmId: string;
  let saved: Saved;

  beforeAll(async () => {
    filmId = await makeFilm(team, episodeId, detector(PITCH, PITCH));
    const res = await registrar.send("POST", `/api/films/${filmId}/measurements`, { calipers: CALIPERS });
    expect(res.status).toBe(201);
    saved = (await json<{ measurement: Saved }>(res)).measurement;
  });

  it("stores version 1 of a new chain with the figures of the published formulas", async () => {
    expect(saved.version).toBe(1);
    const H = lengthMm(CALIPERS.hemithorax as Seg, PITCH, PITCH);
    const L = lengthMm(CALIPERS.lung as Seg, PITCH, PITCH);
    expect(H).toBeCloseTo(100, 9); // 500 px x 0.2 mm (plane geometry)
    expect(L).toBeCloseTo(77, 9); // 385 px x 0.2 mm
    // Light RW, Pleural Diseases: % = 100 (1 - L^3 / H^3); 100 (1 - 0.77^3) = 54.3467 %.
    expect(saved.figures.lightPercent).toBeCloseTo(100 * (1 - L ** 3 / H ** 3), 9);
    expect(saved.figures.lightPercent).toBeCloseTo(54.3467, 4);
    // Collins CD et al., AJR 1995;165:1127-1130: % = 4.2 + 4.7 (A + B + C), cm; 4.2 + 4.7 x 7.5 = 39.45 %.
    expect(saved.figures.collinsPercent).toBeCloseTo(4.2 + 4.7 * (4.0 + 2.5 + 1.0), 9);
    // Rhea JT et al., Radiology 1982: AID = (4.0 + 2.5 + 1.0) / 3 = 2.5 cm, read 27 % off the nomogram.
    expect(saved.figures.aidCm).toBeCloseTo(2.5, 9);
    expect(saved.figures.rheaPercent).toBeCloseTo(27, 9);
    expect(saved.figures.rheaPercent).toBeCloseTo(rheaFromTable(2.5), 9);
    expect(saved.figures.apexCm).toBeCloseTo(4.0, 9);
    expect(saved.figures.hilumCm).toBeCloseTo(2.2, 9);
  });

  it("classes the size by each guideline separately", () => {
    // BTS 2010 (MacDuff A et al., Thorax 2010;65 Suppl 2): hilum distance >= 2 cm is large; 2.2 cm.
    expect(saved.results.guideline.bts).toMatchObject({ size: "large", valueCm: expect.closeTo(2.2, 9) as number });
    // ACCP 2001 (Baumann MH et al., Chest 2001;119:590): apex to cupola >= 3 cm is large; 4.0 cm.
    expect(saved.results.guideline.accp).toMatchObject({ size: "large", valueCm: expect.closeTo(4.0, 9) as number });
    // Spread between Light 54.3 and Rhea 27: 27.3 points (plain subtraction of the two figures above).
    expect(saved.results.spread.points).toBeCloseTo(100 * (1 - 0.77 ** 3) - 27, 6);
  });

  it("stores the row with its denormalised columns, calibration source and plane, and an audit row", async () => {
    const row = (await testDb()("measurements").where({ id: saved.id }).first()) as Record<string, unknown>;
    expect(row).toMatchObject({ version: 1, reader_id: team.users.registrar.id, created_by: team.users.registrar.id, plane: "film", calibration_source: "imager-pixel-spacing", superseded_at: null, signed_off_at: null });
    expect(row.light_percent).toBeCloseTo(54.3467, 4); // Light formula, as above
    expect(row.collins_percent).toBeCloseTo(39.45, 9); // Collins 1995, as above
    expect(row.rhea_percent).toBeCloseTo(27, 9); // Rhea 1982 nomogram, as above
    expect(row.episode_id).toBe(episodeId);
    const audit = await testDb()("audit_log").where({ entity: "measurement", entity_id: saved.id, action: "measurement.create" }).select("actor_id", "team_id");
    expect(audit).toEqual([{ actor_id: team.users.registrar.id, team_id: team.id }]);
  });

  it("runs the follow-up rules in the same transaction: a hilum distance of 2.2 cm raises a large-by-guideline flag", async () => {
    const flags: { film_id: string; measurement_id: string }[] = await testDb()("flags")
      .where({ episode_id: episodeId, rule: "large-by-guideline" })
      .whereIn("state", ["open", "acknowledged"])
      .select("film_id", "measurement_id");
    expect(flags).toHaveLength(1);
    expect(flags[0]).toMatchObject({ film_id: filmId, measurement_id: saved.id });
  });

  it("lets every clinical role read it, and lists it with its reader", async () => {
    for (const c of [registrar, consultant, nurse]) {
      const res = await c.get(`/api/films/${filmId}/measurements`);
      expect(res.status).toBe(200);
      const body = await json<{ versions: Saved[]; readers: { reader: { id: string }; current: { id: string }; versions: number }[] }>(res);
      expect(body.versions.map((v) => v.id)).toEqual([saved.id]);
      expect(body.readers).toEqual([expect.objectContaining({ reader: expect.objectContaining({ id: team.users.registrar.id }) as unknown, versions: 1 })]);
      expect((await c.get(`/api/measurements/${saved.id}`)).status).toBe(200);
    }
  });
});

describe("the server computes every figure itself", () => {
  it("ignores figures, results and version fields sent by the client", async () => {
    const filmId = await makeFilm(team, episodeId, detector(PITCH, PITCH));
    const res = await consultant.send("POST", `/api/films/${filmId}/measurements`, {
      calipers: { hemithorax: CALIPERS.hemithorax, lung: CALIPERS.lung },
      lightPercent: 99,
      light_percent: 99,
      figures: { lightPercent: 99, collinsPercent: 1 },
      results: { light: { status: "ok", percent: 99 } },
      version: 7,
      readerId: team.users.registrar.id,
    });
    expect(res.status).toBe(201);
    const { measurement } = await json<{ measurement: Saved & { reader: { id: string } } }>(res);
    // Light RW, Pleural Diseases: 100 (1 - 0.77^3) = 54.3467 %, whatever the client claimed.
    expect(measurement.figures.lightPercent).toBeCloseTo(54.3467, 4);
    expect(measurement.figures.collinsPercent).toBeNull();
    expect(measurement.version).toBe(1);
    expect(measurement.reader.id).toBe(team.users.consultant.id);
    const row: { light_percent: number; reader_id: string } = await testDb()("measurements").where({ id: measurement.id }).first("light_percent", "reader_id");
    expect(row.light_percent).toBeCloseTo(54.3467, 4);
    expect(row.reader_id).toBe(team.users.consultant.id);
  });

  it("reads DICOM row and column spacing in their order: 0.30 (rows) \\ 0.25 (columns)", async () => {
    const filmId = await makeFilm(team, episodeId, detector(0.3, 0.25));
    // Displacement of 10 rows and 20 columns: sqrt((10 x 0.30)^2 + (20 x 0.25)^2) = 5.831 mm (DICOM PS3.3 10.7.1.3: first value = row spacing).
    const res = await registrar.send("POST", `/api/films/${filmId}/measurements`, { calipers: { apex: { a: { x: 100, y: 100 }, b: { x: 120, y: 110 } } } });
    expect(res.status).toBe(201);
    const { measurement } = await json<{ measurement: Saved }>(res);
    expect(measurement.figures.apexCm).toBeCloseTo(0.5831, 4);
  });

  it("on an uncalibrated film gives the Light index in pixels and leaves the centimetre methods not measured", async () => {
    const filmId = await makeFilm(team, episodeId, { film: null, patient: null, correctionUnknown: true, notes: [] }, { kind: "image" });
    const res = await registrar.send("POST", `/api/films/${filmId}/measurements`, { calipers: CALIPERS });
    expect(res.status).toBe(201);
    const { measurement } = await json<{ measurement: Saved }>(res);
    // Light is a ratio: the same 54.3467 % from pixel lengths (Light RW, Pleural Diseases).
    expect(measurement.figures.lightPercent).toBeCloseTo(54.3467, 4);
    expect(measurement.results.light.unit).toBe("px");
    expect(measurement.results.rhea.status).toBe("not-measured");
    expect(measurement.results.collins.status).toBe("not-measured");
    expect(measurement.figures.hilumCm).toBeNull();
    expect(measurement.plane).toBe("none");
    expect(measurement.calibrationSource).toBeNull();
  });

  it("uses a reference line over the DICOM spacing when one was drawn", async () => {
    const override = {
      segment: { a: { x: 0, y: 0 }, b: { x: 400, y: 0 } },
      knownLengthMm: 100,
      plane: "film",
      calibration: { film: { rowMm: 0.25, columnMm: 0.25, source: "reference-line" }, patient: null, correctionUnknown: false, notes: [] },
      setBy: team.users.registrar.id,
      setAt: "2026-11-02T10:00:00Z",
    };
    const filmId = await makeFilm(team, episodeId, detector(PITCH, PITCH), { calibration_override: JSON.stringify(override) });
    const res = await registrar.send("POST", `/api/films/${filmId}/measurements`, { calipers: { hilum: CALIPERS.hilum } });
    const { measurement } = await json<{ measurement: Saved }>(res);
    // 110 px x 0.25 mm (100 mm over 400 px) = 27.5 mm, not 22 mm from the DICOM pitch (plane geometry).
    expect(measurement.figures.hilumCm).toBeCloseTo(2.75, 9);
    expect(measurement.calibrationSource).toBe("reference-line");
  });
});

describe("what the server refuses", () => {
  let filmId: string;
  beforeAll(async () => {
    filmId = await makeFilm(team, episodeId, detector(PITCH, PITCH));
  });

  async function refused(body: unknown, status = 400): Promise<{ message: string; fields?: Record<string, string> }> {
    const before = await countMeasurements(filmId);
    const res = await registrar.send("POST", `/api/films/${filmId}/measurements`, body);
    expect(res.status).toBe(status);
    expect(await countMeasurements(filmId)).toBe(before);
    return (await json<{ error: { message: string; fields?: Record<string, string> } }>(res)).error;
  }

  it("a caliper with no length, naming the caliper", async () => {
    const err = await refused({ calipers: { ...CALIPERS, lung: { a: { x: 300, y: 800 }, b: { x: 300, y: 800 } } } });
    expect(err.message).toMatch(/lung width caliper has no length/);
    expect(err.fields?.["calipers.lung"]).toMatch(/lung width/);
  });

  it("a point outside the film, naming the caliper and the film's size", async () => {
    const err = await refused({ calipers: { ...CALIPERS, apex: { a: { x: 400, y: 500 }, b: { x: 400, y: 1600 } } } });
    expect(err.message).toMatch(/apex to cupola caliper's second end \(400, 1600\) lies outside the film \(1300 x 1500 pixels\)/);
    expect(err.fields?.["calipers.apex"]).toBeTruthy();
  });

  it("negative and non-numeric coordinates", async () => {
    expect((await refused({ calipers: { hilum: { a: { x: -3, y: 10 }, b: { x: 50, y: 10 } } } })).message).toMatch(/outside the film \(negative\)/);
    expect((await refused({ calipers: { hilum: { a: { x: "12", y: 10 }, b: { x: 50, y: 10 } } } })).fields?.["calipers.hilum.a.x"]).toMatch(/numbers/);
    expect((await refused({ calipers: { hilum: { a: { x: 5 }, b: { x: 50, y: 10 } } } })).fields?.["calipers.hilum.a.y"]).toBeTruthy();
  });

  it("unknown calipers, an empty set, a bad plane and a body that is not JSON", async () => {
    expect((await refused({ calipers: { diaphragm: CALIPERS.hilum } })).message).toMatch(/Unknown caliper "diaphragm"/);
    expect((await refused({ calipers: {} })).message).toMatch(/Draw at least one caliper/);
    expect((await refused({ calipers: { hilum: null } })).message).toMatch(/Draw at least one caliper/);
    expect((await refused({ calipers: CALIPERS, plane: "sideways" })).fields?.plane).toMatch(/plane/);
    const res = await registrar.fetch(`/api/films/${filmId}/measurements`, { method: "POST", headers: { "content-type": "application/json" }, body: "{not json" });
    expect(res.status).toBe(400);
  });

  it("a withdrawn film", async () => {
    const withdrawn = await makeFilm(team, episodeId, detector(PITCH, PITCH), { deleted_at: new Date(), deleted_by: team.users.registrar.id, delete_reason: "wrong patient" });
    const res = await registrar.send("POST", `/api/films/${withdrawn}/measurements`, { calipers: CALIPERS });
    expect(res.status).toBe(409);
    expect(await countMeasurements(withdrawn)).toBe(0);
  });
});

describe("roles and teams", () => {
  let filmId: string;
  let measurementId: string;
  beforeAll(async () => {
    filmId = await makeFilm(team, episodeId, detector(PITCH, PITCH));
    const res = await registrar.send("POST", `/api/films/${filmId}/measurements`, { calipers: CALIPERS });
    measurementId = (await json<{ measurement: Saved }>(res)).measurement.id;
  });

  it("a nurse may read but not measure, change or sign off (403), and nothing is written", async () => {
    const before = await countMeasurements(filmId);
    expect((await nurse.send("POST", `/api/films/${filmId}/measurements`, { calipers: CALIPERS })).status).toBe(403);
    expect((await nurse.send("PUT", `/api/measurements/${measurementId}`, { calipers: CALIPERS, basedOnVersion: 1 })).status).toBe(403);
    expect((await nurse.send("POST", `/api/measurements/${measurementId}/sign-off`, {})).status).toBe(403);
    expect(await countMeasurements(filmId)).toBe(before);
  });

  it("another team's user gets 404 for everything, and nothing changes", async () => {
    const before = await countMeasurements(filmId);
    expect((await outsider.get(`/api/films/${filmId}/measurements`)).status).toBe(404);
    expect((await outsider.get(`/api/measurements/${measurementId}`)).status).toBe(404);
    expect((await outsider.send("POST", `/api/films/${filmId}/measurements`, { calipers: CALIPERS })).status).toBe(404);
    expect((await outsider.send("PUT", `/api/measurements/${measurementId}`, { calipers: CALIPERS, basedOnVersion: 1 })).status).toBe(404);
    const otherConsultant = await signIn(other.users.consultant.email, TEST_PASSWORD);
    expect((await otherConsultant.send("POST", `/api/measurements/${measurementId}/sign-off`, {})).status).toBe(404);
    expect(await countMeasurements(filmId)).toBe(before);
    const row: { signed_off_at: Date | null } = await testDb()("measurements").where({ id: measurementId }).first("signed_off_at");
    expect(row.signed_off_at).toBeNull();
  });

  it("no session is 401", async () => {
    const anon = anonymous();
    expect((await anon.get(`/api/films/${filmId}/measurements`)).status).toBe(401);
    expect((await anon.send("POST", `/api/films/${filmId}/measurements`, { calipers: CALIPERS })).status).toBe(401);
    expect((await anon.get(`/api/measurements/${measurementId}`)).status).toBe(401);
    expect((await anon.send("PUT", `/api/measurements/${measurementId}`, { calipers: CALIPERS, basedOnVersion: 1 })).status).toBe(401);
    expect((await anon.send("POST", `/api/measurements/${measurementId}/sign-off`, {})).status).toBe(401);
  });

  it("an unknown or malformed id is 404 or 400", async () => {
    expect((await registrar.get(`/api/measurements/${randomUUID()}`)).status).toBe(404);
    expect((await registrar.get(`/api/measurements/not-a-uuid`)).status).toBe(400);
    expect((await registrar.send("POST", `/api/films/${randomUUID()}/measurements`, { calipers: CALIPERS })).status).toBe(404);
  });
});
