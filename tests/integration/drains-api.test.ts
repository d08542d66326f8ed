// Chest drains over HTTP against the running app: record, observe, change suction, remove; the rules'
// prompts in the GET answer; the persistent air leak flag raised, escalated and superseded in step with
// the observations; refusals with field messages; nothing half-written; roles and team scope.
import { randomUUID } from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { calibrationFromDicom } from "../../measure";
import { anonymous, signIn, type Client } from "../support/http";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { closeTestDb, testDb } from "../support/db";

const HOUR = 3_600_000;
let team: TestTeam;
let other: TestTeam;
let registrar: Client;
let consultant: Client;
let nurse: Client;
let outsider: Client;
let admin: Client;

interface DrainJson {
  id: string;
  removed_at: string | null;
  suction_on: boolean;
  suction_kpa: number | null;
  observations: { id: string; bubbling: string; swinging: boolean }[];
  assessment: {
    size: { verdict: string };
    airLeak: { advice: string; persistent: boolean; bubblingForHours: number | null };
    check: { prompt: boolean; reason: string };
    lung: { reExpanded: boolean | null };
  };
}

const drainBody = (insertedAt: Date, extra: Record<string, unknown> = {}) => ({
  insertedAt: insertedAt.toISOString(),
  insertedBy: "Dr Imani Castellanos, registrar",
  sizeFr: 12,
  site: "5th intercostal space, mid-axillary line",
  technique: "seldinger",
  indication: "air",
  drainage: "underwater-seal",
  suctionOn: false,
  ...extra,
});

async function newEpisode(): Promise<string> {
  const p = await makePatient(team);
  return (await makeEpisode(team, p.id, { presented_on: "2026-11-01", management: "chest-drain" })).id;
}

async function insert(episodeId: string, insertedAt: Date, extra: Record<string, unknown> = {}): Promise<string> {
  const res = await registrar.send("POST", `/api/episodes/${episodeId}/drains`, drainBody(insertedAt, extra));
  expect(res.status, await res.clone().text()).toBe(201);
  return ((await res.json()) as { drain: { id: string } }).drain.id;
}

const observe = (drainId: string, at: Date, bubbling: string, swinging = true, c: Client = registrar) =>
  c.send("POST", `/api/drains/${drainId}/observations`, { observedAt: at.toISOString(), swinging, bubbling, fluidMl: 20 });

async function drainsOf(episodeId: string, c: Client = registrar): Promise<DrainJson[]> {
  const res = await c.get(`/api/episodes/${episodeId}/drains`);
  expect(res.status).toBe(200);
  return ((await res.json()) as { drains: DrainJson[] }).drains;
}

/** A film taken at `takenAt`, measured through the API: hilum caliper 110 px x 0.2 mm = 2.2 cm. */
async function measuredFilmWithGap(episodeId: string, takenAt: Date): Promise<void> {
  const filmId = randomUUID();
  await testDb()("films").insert({
    id: filmId, episode_id: episodeId, team_id: team.id, kind: "dicom", original_key: `films/${filmId}/original`, display_key: `films/${filmId}/display`,
    thumb_key: `films/${filmId}/thumb`, content_type: "application/dicom", filename: "check.dcm", size_bytes: 1000, sha256: filmId.replace(/-/g, "").padEnd(64, "0"),
    taken_at: takenAt.toISOString(), projection: "PA", position: "erect", rows: 1500, columns: 1300, display_width: 1300, display_height: 1500,
    display_scale: 1, calibration: JSON.stringify(calibrationFromDicom({ imagerPixelSpacingMm: [0.2, 0.2] })),
  });
  const m = await registrar.send("POST", `/api/films/${filmId}/measurements`, { plane: "film", calipers: { hilum: { a: { x: 210, y: 805 }, b: { x: 100, y: 805 } } } });
  expect(m.status, await m.clone().text()).toBe(201);
}

const leakFlags = (episodeId: string) => testDb()("flags").where({ episode_id: episodeId, rule: "persistent-air-leak" }).orderBy("raised_at").select<{ id: string; state: string; figures: Record<string, unknown>; reason: string }[]>("id", "state", "figures", "reason");
const count = async (table: string, where: Record<string, unknown>) => Number((await testDb()(table).where(where).count<{ c: string }[]>({ c: "*" }))[0]?.c ?? 0);

beforeAll(async () => {
  team = await makeTeam("drains");
  other = await makeTeam("drains-other");
  registrar = await signIn(team.users.registrar.email, TEST_PASSWORD);
  consultant = await signIn(team.users.consultant.email, TEST_PASSWORD);
  nurse = await signIn(team.users.nurse.email, TEST_PASSWORD);
  outsider = await signIn(other.users.registrar.email, TEST_PASSWORD);
  admin = await signIn(team.users.admin.email, TEST_PASSWORD);
});
afterAll(closeTestDb);

describe("recording a drain", () => {
  it("stores the record with an audit row and answers with the size verdict", async () => {
    const episodeId = await newEpisode();
    const id = await insert(episodeId, new Date(Date.now() - 2 * HOUR), { sizeFr: 24, suctionOn: true, suctionKpa: 2 });
    expect(await count("audit_log", { entity_id: id, action: "drain.insert" })).toBe(1);
    const [d] = await drainsOf(episodeId);
    expect(d?.suction_on).toBe(true);
    expect(Number(d?.suction_kpa)).toBe(2);
    // 24 Fr for air is larger than 8-14 Fr: BTS 2010 (MacDuff A et al., Thorax 2010;65 Suppl 2)
    expect(d?.assessment.size.verdict).toBe("larger-than-guidance");
    // the nurse reads the record (episode.read)
    expect((await drainsOf(episodeId, nurse)).length).toBe(1);
  });

  it("refuses bad records with field messages and writes nothing", async () => {
    const episodeId = await newEpisode();
    const cases: [Record<string, unknown>, string][] = [
      [drainBody(new Date(Date.now() - HOUR), { sizeFr: 4 }), "sizeFr"],
      [drainBody(new Date(Date.now() - HOUR), { suctionOn: true }), "suctionKpa"],
      [drainBody(new Date(Date.now() + 48 * HOUR)), "insertedAt"],
      [drainBody(new Date("2026-10-20T10:00:00Z")), "insertedAt"],
      [{ ...drainBody(new Date(Date.now() - HOUR)), technique: "trocar" }, "technique"],
    ];
    for (const [body, field] of cases) {
      const res = await registrar.send("POST", `/api/episodes/${episodeId}/drains`, body);
      expect(res.status, JSON.stringify(body)).toBe(400);
      const err = ((await res.json()) as { error: { message: string; fields?: Record<string, string> } }).error;
      expect(err.fields?.[field], `${field}: ${JSON.stringify(err)}`).toBeTruthy();
    }
    expect(await count("drains", { episode_id: episodeId })).toBe(0);
  });
});

describe("persistent air leak", () => {
  it("raises one flag at 48 h of bubbling, escalates it at 72 h, and supersedes it when the bubbling stops", async () => {
    const episodeId = await newEpisode();
    const t0 = new Date(Date.now() - 100 * HOUR);
    const id = await insert(episodeId, t0);
    for (const h of [6, 30]) expect((await observe(id, new Date(t0.getTime() + h * HOUR), "continuous")).status).toBe(201);
    // 30 h of bubbling: not yet persistent (BTS 2010: 48 h, from memory)
    expect(await leakFlags(episodeId)).toHaveLength(0);
    expect((await drainsOf(episodeId))[0]?.assessment.airLeak.bubblingForHours).toBe(30);

    expect((await observe(id, new Date(t0.getTime() + 50 * HOUR), "on-expiration")).status).toBe(201);
    let flags = await leakFlags(episodeId);
    // bubbling from insertion to 50 h >= 48 h: respiratory specialist (BTS 2010, from memory)
    expect(flags).toHaveLength(1);
    expect(flags[0]?.state).toBe("open");
    expect((flags[0]?.figures as { advice: string }).advice).toBe("respiratory-specialist");
    expect(await count("audit_log", { entity_id: flags[0]?.id, action: "flag.raise" })).toBe(1);

    expect((await observe(id, new Date(t0.getTime() + 80 * HOUR), "continuous")).status).toBe(201);
    flags = await leakFlags(episodeId);
    // 80 h >= 72 h (3 days): thoracic surgical opinion (BTS 2010, from memory); still the same single flag
    expect(flags).toHaveLength(1);
    expect((flags[0]?.figures as { advice: string }).advice).toBe("thoracic-surgical-opinion");
    expect((await drainsOf(episodeId))[0]?.assessment.airLeak.advice).toBe("thoracic-surgical-opinion");

    expect((await observe(id, new Date(t0.getTime() + 90 * HOUR), "none")).status).toBe(201);
    flags = await leakFlags(episodeId);
    expect(flags.map((f) => f.state)).toEqual(["superseded"]);
    expect(await count("audit_log", { entity_id: flags[0]?.id, action: "flag.supersede" })).toBe(1);
  });

  it("does not raise the same leak again once a consultant has resolved it", async () => {
    const episodeId = await newEpisode();
    const t0 = new Date(Date.now() - 70 * HOUR);
    const id = await insert(episodeId, t0);
    expect((await observe(id, new Date(t0.getTime() + 49 * HOUR), "continuous")).status).toBe(201);
    const [flag] = await leakFlags(episodeId);
    const resolved = await consultant.send("POST", `/api/flags/${flag?.id ?? ""}`, { action: "resolve", note: "Seen by the chest team", plan: { kind: "other", text: "Chest team review" } });
    expect(resolved.status, await resolved.clone().text()).toBe(200);
    expect((await observe(id, new Date(t0.getTime() + 60 * HOUR), "continuous")).status).toBe(201);
    // same advice level (respiratory specialist, 48-72 h): the decided flag stands, no twin
    expect((await leakFlags(episodeId)).map((f) => f.state)).toEqual(["resolved"]);
  });
});

describe("no swing with the lung not re-expanded", () => {
  it("prompts a drain check when a film since insertion still shows a gap", async () => {
    const episodeId = await newEpisode();
    const t0 = new Date(Date.now() - 10 * HOUR);
    const id = await insert(episodeId, t0);
    await measuredFilmWithGap(episodeId, new Date(t0.getTime() + 2 * HOUR));

    expect((await observe(id, new Date(t0.getTime() + 3 * HOUR), "none", true)).status).toBe(201);
    expect((await drainsOf(episodeId))[0]?.assessment.check.prompt).toBe(false);
    expect((await observe(id, new Date(t0.getTime() + 4 * HOUR), "none", false)).status).toBe(201);
    const d = (await drainsOf(episodeId))[0];
    // common practice: no swing while the lung is not re-expanded -> check the drain
    expect(d?.assessment.lung.reExpanded).toBe(false);
    expect(d?.assessment.check.prompt).toBe(true);
  });
});

describe("suction and removal", () => {
  it("changes suction, removes with time and reason, and then refuses further changes", async () => {
    const episodeId = await newEpisode();
    const t0 = new Date(Date.now() - 30 * HOUR);
    const id = await insert(episodeId, t0);
    expect((await observe(id, new Date(t0.getTime() + 20 * HOUR), "none")).status).toBe(201);

    const on = await registrar.send("PATCH", `/api/drains/${id}`, { action: "suction", suctionOn: true, suctionKpa: 1.5 });
    expect(on.status).toBe(200);
    expect(await count("audit_log", { entity_id: id, action: "drain.suction" })).toBe(1);
    const bad = await registrar.send("PATCH", `/api/drains/${id}`, { action: "suction", suctionOn: true });
    expect(bad.status).toBe(400);

    const early = await registrar.send("PATCH", `/api/drains/${id}`, { action: "remove", removedAt: new Date(t0.getTime() + 10 * HOUR).toISOString(), removalReason: "Lung re-expanded" });
    // before the last observation (20 h): refused, with the field named
    expect(early.status).toBe(400);
    expect(((await early.json()) as { error: { fields: Record<string, string> } }).error.fields.removedAt).toBeTruthy();
    const noReason = await registrar.send("PATCH", `/api/drains/${id}`, { action: "remove", removedAt: new Date().toISOString() });
    expect(noReason.status).toBe(400);

    const out = await registrar.send("PATCH", `/api/drains/${id}`, { action: "remove", removedAt: new Date(t0.getTime() + 24 * HOUR).toISOString(), removalReason: "Lung re-expanded, no air leak" });
    expect(out.status).toBe(200);
    const again = await registrar.send("PATCH", `/api/drains/${id}`, { action: "remove", removedAt: new Date().toISOString(), removalReason: "Twice" });
    expect(again.status).toBe(409);
    expect((await registrar.send("PATCH", `/api/drains/${id}`, { action: "suction", suctionOn: false })).status).toBe(409);
    const late = await observe(id, new Date(t0.getTime() + 26 * HOUR), "none");
    expect(late.status).toBe(409);
    expect(await count("drain_observations", { drain_id: id })).toBe(1);
    const d = (await drainsOf(episodeId))[0];
    expect(d?.removed_at).not.toBeNull();
    expect(d?.assessment.check.prompt).toBe(false);
  });
});

describe("roles and team scope", () => {
  it("401 without a session, 403 for the nurse and admin, 404 for another team", async () => {
    const episodeId = await newEpisode();
    const id = await insert(episodeId, new Date(Date.now() - 5 * HOUR));
    const admin = await signIn(team.users.admin.email, TEST_PASSWORD);
    const anon = anonymous();
    const obs = { observedAt: new Date(Date.now() - HOUR).toISOString(), swinging: true, bubbling: "none" };
    expect((await anon.get(`/api/episodes/${episodeId}/drains`)).status).toBe(401);
    expect((await anon.send("POST", `/api/drains/${id}/observations`, obs)).status).toBe(401);
    expect((await nurse.send("POST", `/api/episodes/${episodeId}/drains`, drainBody(new Date(Date.now() - HOUR)))).status).toBe(403);
    expect((await nurse.send("POST", `/api/drains/${id}/observations`, obs)).status).toBe(403);
    expect((await admin.get(`/api/episodes/${episodeId}/drains`)).status).toBe(403);
    expect((await outsider.get(`/api/episodes/${episodeId}/drains`)).status).toBe(404);
    expect((await outsider.send("POST", `/api/episodes/${episodeId}/drains`, drainBody(new Date(Date.now() - HOUR)))).status).toBe(404);
    expect((await outsider.send("POST", `/api/drains/${id}/observations`, obs)).status).toBe(404);
    expect((await outsider.send("PATCH", `/api/drains/${id}`, { action: "remove", removedAt: new Date().toISOString(), removalReason: "not mine" })).status).toBe(404);
    expect(await count("drain_observations", { drain_id: id })).toBe(0);
    expect(await count("drains", { episode_id: episodeId })).toBe(1);
    expect((await testDb()("drains").where({ id }).first<{ removed_at: Date | null }>("removed_at"))?.removed_at).toBeNull();
  });
});

// The drain settings of this file's own team (settings are per team); the defaults go back at the end.
describe("the drain settings", () => {
  const defaults = { specialistAfterHours: 48, surgicalOpinionAfterHours: 72, reExpandedBelowCm: 0.5, reExpandedBelowLightPercent: 5 };
  const put = (values: Record<string, unknown>) => admin.send("PUT", "/api/settings", { key: "drainRules", values });

  it("refuses a surgical threshold before the specialist one, with a field message, and changes nothing", async () => {
    const stored = async () => JSON.stringify((await testDb()("settings").where({ key: "drainRules", team_id: team.id }).first<{ value: unknown } | undefined>("value"))?.value ?? null);
    const before = await stored();
    const res = await put({ ...defaults, specialistAfterHours: 96 });
    expect(res.status).toBe(400);
    const body = (await res.json()) as { error: { fields: Record<string, string> } };
    expect(body.error.fields.surgicalOpinionAfterHours).toMatch(/not before/);
    expect(await stored()).toBe(before);
    expect((await registrar.send("PUT", "/api/settings", { key: "drainRules", values: defaults })).status).toBe(403);
  });

  it("applies the team's thresholds to the air leak flag and to the lung's re-expansion", async () => {
    try {
      expect((await put({ specialistAfterHours: 24, surgicalOpinionAfterHours: 96, reExpandedBelowCm: 2.5, reExpandedBelowLightPercent: 5 })).status).toBe(200);
      const episodeId = await newEpisode();
      const t0 = new Date(Date.now() - 40 * HOUR);
      const id = await insert(episodeId, t0);
      await measuredFilmWithGap(episodeId, new Date(t0.getTime() + 2 * HOUR));
      expect((await observe(id, new Date(t0.getTime() + 30 * HOUR), "continuous", false)).status).toBe(201);
      // 30 h of bubbling is past a 24 h threshold (the default 48 h would not flag it yet)
      const flags = await leakFlags(episodeId);
      expect(flags).toHaveLength(1);
      expect((flags[0]?.figures as { advice: string }).advice).toBe("respiratory-specialist");
      const d = (await drainsOf(episodeId))[0];
      expect(d?.assessment.airLeak.persistent).toBe(true);
      // a 2.2 cm gap counts as re-expanded under a 2.5 cm threshold, so no swing raises no check prompt
      expect(d?.assessment.lung.reExpanded).toBe(true);
      expect(d?.assessment.check.prompt).toBe(false);
    } finally {
      expect((await put(defaults)).status).toBe(200);
    }
  });
});
