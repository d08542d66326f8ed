// The follow-up routes by role: the deviation board's list, a consultant's decisions, the trend and the settings.
import { randomUUID } from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { defaultDeviationSettings } from "../../measure";
import { closeTestDb, testDb } from "../support/db";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { anonymous, signIn, type Client } from "../support/http";
import { auditCount, daysAgo, makeFilmAt } from "../support/followup";

let team: TestTeam;
let other: TestTeam;
let c: Record<"registrar" | "consultant" | "nurse" | "admin" | "outsider", Client>;
let episodeId: string;
let slowerFlag: string;
let disagreeFlag: string;

async function insertFlag(rule: string, extra: Record<string, unknown> = {}): Promise<string> {
  const [row] = await testDb()("flags")
    .insert({ episode_id: episodeId, team_id: team.id, rule, reason: `Test finding for ${rule}`, figures: JSON.stringify({ evidence: "test" }), ...extra })
    .returning<{ id: string }[]>("id");
  return row!.id;
}

interface ListBody { total: number; rows: { id: string; rule: string; state: string; spark: { points: [number, number][] } | null; patient: { name: string } }[] }

beforeAll(async () => {
  team = await makeTeam("flags-routes");
  other = await makeTeam("flags-routes-other");
  const patient = await makePatient(team, { family_name: "Routetest" });
  episodeId = (await makeEpisode(team, patient.id)).id;
  const now = new Date();
  const film = await makeFilmAt(team, episodeId, daysAgo(now, 3));
  // a measurement row for the sparkline (invented figures)
  await testDb()("measurements").insert({
    film_id: film, episode_id: episodeId, team_id: team.id, chain_id: randomUUID(), version: 1,
    reader_id: team.users.registrar.id, calipers: "{}", plane: "film", results: "{}", collins_percent: 28, created_by: team.users.registrar.id,
  });
  slowerFlag = await insertFlag("slower-than-expected");
  disagreeFlag = await insertFlag("methods-disagree");
  const signed = await Promise.all([
    signIn(team.users.registrar.email, TEST_PASSWORD),
    signIn(team.users.consultant.email, TEST_PASSWORD),
    signIn(team.users.nurse.email, TEST_PASSWORD),
    signIn(team.users.admin.email, TEST_PASSWORD),
    signIn(other.users.consultant.email, TEST_PASSWORD),
  ]);
  c = { registrar: signed[0], consultant: signed[1], nurse: signed[2], admin: signed[3], outsider: signed[4] };
});

afterAll(async () => {
  await closeTestDb();
});

describe("GET /api/flags", () => {
  it("needs a session and the flag.read permission", async () => {
    expect((await anonymous().get("/api/flags")).status).toBe(401);
    expect((await c.admin.get("/api/flags")).status).toBe(403);
  });

  it("shows a consultant and a registrar their team's live flags with a sparkline", async () => {
    for (const who of [c.consultant, c.registrar]) {
      const res = await who.get("/api/flags?pageSize=100");
      expect(res.status).toBe(200);
      const body = (await res.json()) as ListBody;
      expect(body.rows.map((r) => r.id).sort()).toEqual([slowerFlag, disagreeFlag].sort());
      expect(body.rows[0]?.patient.name).toBe("Routetest, Alex");
      expect(body.rows[0]?.spark?.points).toEqual([[0, 28]]);
    }
  });

  it("shows a nurse only the flags that need a booking", async () => {
    const body = (await (await c.nurse.get("/api/flags")).json()) as ListBody;
    expect(body.rows.map((r) => r.id)).toEqual([slowerFlag]);
    const asked = (await (await c.nurse.get("/api/flags?rule=methods-disagree")).json()) as ListBody;
    expect(asked.total).toBe(0);
  });

  it("filters by rule and episode, and never shows another team's flags", async () => {
    const byRule = (await (await c.consultant.get("/api/flags?rule=methods-disagree")).json()) as ListBody;
    expect(byRule.rows.map((r) => r.id)).toEqual([disagreeFlag]);
    const outsider = (await (await c.outsider.get(`/api/flags?episode=${episodeId}`)).json()) as ListBody;
    expect(outsider.total).toBe(0);
    expect(outsider.rows).toEqual([]);
  });

  it("refuses a bad filter with a message", async () => {
    const res = await c.consultant.get("/api/flags?rule=nonsense&sort=sideways");
    expect(res.status).toBe(400);
    const body = (await res.json()) as { error: { fields: Record<string, string> } };
    expect(body.error.fields.rule).toMatch(/rule/i);
    expect(body.error.fields.sort).toBeDefined();
  });
});

describe("POST /api/flags/[id]", () => {
  const resolveBody = { action: "resolve", note: "Reviewed the films; continue.", plan: { kind: "continue-observation" } };

  it("refuses without a session (401), to a registrar and a nurse (403), and to another team (404), changing nothing", async () => {
    expect((await anonymous().send("POST", `/api/flags/${slowerFlag}`, resolveBody)).status).toBe(401);
    expect((await c.registrar.send("POST", `/api/flags/${slowerFlag}`, resolveBody)).status).toBe(403);
    expect((await c.nurse.send("POST", `/api/flags/${slowerFlag}`, resolveBody)).status).toBe(403);
    expect((await c.outsider.send("POST", `/api/flags/${slowerFlag}`, resolveBody)).status).toBe(404);
    expect((await c.outsider.send("POST", `/api/flags/${slowerFlag}`, { action: "acknowledge" })).status).toBe(404);
    const [row] = await testDb()("flags").where({ id: slowerFlag }).select("state");
    expect(row?.state).toBe("open");
  });

  it("asks for a note and the plan's details, field by field", async () => {
    const res = await c.consultant.send("POST", `/api/flags/${slowerFlag}`, { action: "resolve", note: "  ", plan: { kind: "repeat-film" } });
    expect(res.status).toBe(400);
    const body = (await res.json()) as { error: { fields: Record<string, string> } };
    expect(body.error.fields.note).toBe("Write a note on the decision");
    expect(body.error.fields["plan.days"]).toBe("Say in how many days the repeat film is wanted");
    const other = await c.consultant.send("POST", `/api/flags/${slowerFlag}`, { action: "resolve", note: "x", plan: { kind: "other" } });
    expect(((await other.json()) as { error: { fields: Record<string, string> } }).error.fields["plan.text"]).toBe("Describe the plan");
  });

  it("lets a consultant acknowledge, then resolve with a plan, each audited once", async () => {
    const ack = await c.consultant.send("POST", `/api/flags/${slowerFlag}`, { action: "acknowledge" });
    expect(ack.status).toBe(200);
    expect(((await ack.json()) as { flag: { state: string } }).flag.state).toBe("acknowledged");
    expect(await auditCount("flag.acknowledge", slowerFlag)).toBe(1);

    const res = await c.consultant.send("POST", `/api/flags/${slowerFlag}`, { action: "resolve", note: "Earlier film booked.", plan: { kind: "repeat-film", days: 5, text: "erect PA" } });
    expect(res.status).toBe(200);
    const [row] = await testDb()("flags").where({ id: slowerFlag }).select("state", "plan", "resolution_note", "resolved_by");
    expect(row).toEqual({ state: "resolved", plan: { kind: "repeat-film", days: 5, text: "erect PA" }, resolution_note: "Earlier film booked.", resolved_by: team.users.consultant.id });
    expect(await auditCount("flag.resolve", slowerFlag)).toBe(1);
  });

  it("answers 409 to a second decision on a resolved flag, and it leaves the live list", async () => {
    expect((await c.consultant.send("POST", `/api/flags/${slowerFlag}`, resolveBody)).status).toBe(409);
    expect((await c.consultant.send("POST", `/api/flags/${slowerFlag}`, { action: "acknowledge" })).status).toBe(409);
    expect(await auditCount("flag.resolve", slowerFlag)).toBe(1);
    const live = (await (await c.consultant.get("/api/flags")).json()) as ListBody;
    expect(live.rows.map((r) => r.id)).toEqual([disagreeFlag]);
    const resolved = (await (await c.consultant.get("/api/flags?state=resolved")).json()) as ListBody;
    expect(resolved.rows.map((r) => r.id)).toEqual([slowerFlag]);
  });
});

describe("GET /api/episodes/[id]/trend", () => {
  it("gives the team the series, the band and the prediction; 404 to another team; 401 without a session", async () => {
    const res = await c.nurse.get(`/api/episodes/${episodeId}/trend`);
    expect(res.status).toBe(200);
    const t = (await res.json()) as { series: { collins: { percent: number }[] }; band: { day: number; expected: number }[]; prediction: { resolutionDay: number } | null; flags: { id: string }[] };
    expect(t.series.collins.map((p) => p.percent)).toEqual([28]);
    // Kircher & Swartzel, JAMA 1954: 28 % at 1.25 %/day resolves in 22.4 days
    expect(t.prediction?.resolutionDay).toBeCloseTo(22.4, 2);
    expect(t.band[0]).toMatchObject({ day: 0, expected: 28 });
    expect(t.flags.map((f) => f.id)).toEqual([disagreeFlag]);
    expect((await c.outsider.get(`/api/episodes/${episodeId}/trend`)).status).toBe(404);
    expect((await anonymous().get(`/api/episodes/${episodeId}/trend`)).status).toBe(401);
  });
});

describe("GET and PUT /api/settings", () => {
  it("lists the deviation thresholds with their defaults and sources", async () => {
    const res = await c.registrar.get("/api/settings");
    expect(res.status).toBe(200);
    const body = (await res.json()) as { groups: { key: string; defaults: Record<string, number>; fields: Record<string, { source: string }> }[] };
    const g = body.groups.find((x) => x.key === "deviationRules");
    // Kircher & Swartzel 1954: 1.25 %/day; Northfield 1971: x4 on oxygen
    expect(g?.defaults.ratePerDay).toBe(1.25);
    expect(g?.defaults.oxygenMultiplier).toBe(4);
    expect(g?.fields.ratePerDay?.source).toMatch(/Kircher/);
    expect(g?.fields.oxygenMultiplier?.source).toMatch(/Northfield/);
    expect((await anonymous().get("/api/settings")).status).toBe(401);
  });

  it("lets only an admin store a group, refuses a bad value with a field message, and audits the change", async () => {
    const values = { ...defaultDeviationSettings, overdueGraceDays: 2 };
    expect((await c.consultant.send("PUT", "/api/settings", { key: "deviationRules", values })).status).toBe(403);
    const bad = await c.admin.send("PUT", "/api/settings", { key: "deviationRules", values: { ...values, ratePerDay: -1 } });
    expect(bad.status).toBe(400);
    expect(((await bad.json()) as { error: { fields: Record<string, string> } }).error.fields.ratePerDay).toMatch(/more than 0/);
    expect((await c.admin.send("PUT", "/api/settings", { key: "no-such-group", values })).status).toBe(404);
    const before = Number((await testDb()("audit_log").where({ action: "settings.update", entity_id: "deviationRules", team_id: team.id }).count<{ count: string }[]>({ count: "*" }))[0]?.count ?? 0);
    try {
      const ok = await c.admin.send("PUT", "/api/settings", { key: "deviationRules", values });
      expect(ok.status).toBe(200);
      const [stored] = await testDb()("settings").where({ key: "deviationRules", team_id: team.id }).select("value");
      expect(stored?.value.overdueGraceDays).toBe(2);
      const after = Number((await testDb()("audit_log").where({ action: "settings.update", entity_id: "deviationRules", team_id: team.id }).count<{ count: string }[]>({ count: "*" }))[0]?.count ?? 0);
      expect(after).toBe(before + 1);
    } finally {
      // put this team's settings back for the rest of this file
      await c.admin.send("PUT", "/api/settings", { key: "deviationRules", values: { ...defaultDeviationSettings } });
    }
  });
});

describe("a decision without a plan", () => {
  it("is recorded with the note alone", async () => {
    const res = await c.consultant.send("POST", `/api/flags/${disagreeFlag}`, { action: "resolve", note: "Calipers re-checked: the methods read differently on this film." });
    expect(res.status).toBe(200);
    const [row] = await testDb()("flags").where({ id: disagreeFlag }).select("state", "plan", "resolution_note");
    expect(row).toEqual({ state: "resolved", plan: null, resolution_note: "Calipers re-checked: the methods read differently on this film." });
  });
});
