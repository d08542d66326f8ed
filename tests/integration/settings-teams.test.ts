// Settings belong to a team: one team's administrator changes that team's rules only, and each team's
// charts and evaluations use its own values. A row stored before settings were per team (no team) is
// what every team reads until it saves its own.
import { randomUUID } from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { getSetting } from "@/lib/settings";
import { closeTestDb, testDb } from "../support/db";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { signIn, type Client } from "../support/http";
import { makeFilmAt } from "../support/followup";

let a: TestTeam;
let b: TestTeam;
let c: Record<"adminA" | "adminB" | "consultantA" | "consultantB", Client>;

interface GroupsBody { groups: { key: string; values: Record<string, unknown>; defaults: Record<string, unknown> }[] }
const deviation = async (who: Client) => ((await (await who.get("/api/settings")).json()) as GroupsBody).groups.find((g) => g.key === "deviationRules");

/** An episode with one measured film, Collins 20 %, two days ago. */
async function episodeWithFilm(team: TestTeam): Promise<string> {
  const patient = await makePatient(team);
  const episodeId = (await makeEpisode(team, patient.id)).id;
  const film = await makeFilmAt(team, episodeId, new Date(Date.now() - 2 * 86_400_000));
  await testDb()("measurements").insert({
    film_id: film, episode_id: episodeId, team_id: team.id, chain_id: randomUUID(), version: 1,
    reader_id: team.users.registrar.id, calipers: "{}", plane: "film", results: "{}", collins_percent: 20, created_by: team.users.registrar.id,
  });
  return episodeId;
}
const resolutionDay = async (who: Client, episodeId: string) =>
  ((await (await who.get(`/api/episodes/${episodeId}/trend`)).json()) as { prediction: { resolutionDay: number } | null }).prediction?.resolutionDay;

beforeAll(async () => {
  a = await makeTeam("settings-a");
  b = await makeTeam("settings-b");
  const [adminA, adminB, consultantA, consultantB] = await Promise.all([
    signIn(a.users.admin.email, TEST_PASSWORD),
    signIn(b.users.admin.email, TEST_PASSWORD),
    signIn(a.users.consultant.email, TEST_PASSWORD),
    signIn(b.users.consultant.email, TEST_PASSWORD),
  ]);
  c = { adminA, adminB, consultantA, consultantB };
});

afterAll(async () => {
  await closeTestDb();
});

describe("settings per team", () => {
  it("keeps one team's change away from another team, in the settings and in the chart", async () => {
    const defaults = (await deviation(c.adminA))?.defaults ?? {};
    const saved = await c.adminA.send("PUT", "/api/settings", { key: "deviationRules", values: { ...defaults, ratePerDay: 2.5 } });
    expect(saved.status, await saved.clone().text()).toBe(200);
    expect((await deviation(c.adminA))?.values.ratePerDay).toBe(2.5);
    expect((await deviation(c.adminB))?.values.ratePerDay).toBe(defaults.ratePerDay);

    // 20 % on day 0: at 2.5 %/day it resolves on day 8; at the default 1.25 %/day (Kircher & Swartzel,
    // JAMA 1954) on day 16
    expect(await resolutionDay(c.consultantA, await episodeWithFilm(a))).toBeCloseTo(8, 5);
    expect(await resolutionDay(c.consultantB, await episodeWithFilm(b))).toBeCloseTo(16, 5);
    expect(defaults.ratePerDay).toBe(1.25);
  });

  it("reads a row stored without a team until the team saves its own", async () => {
    const key = `test-shared-${randomUUID()}`; // a key nothing else reads, so other tests are untouched
    await testDb()("settings").insert({ key, team_id: null, value: JSON.stringify({ n: 1 }) });
    try {
      expect(await getSetting(testDb(), a.id, key, null)).toEqual({ n: 1 });
      await testDb()("settings").insert({ key, team_id: a.id, value: JSON.stringify({ n: 2 }) });
      expect(await getSetting(testDb(), a.id, key, null)).toEqual({ n: 2 });
      expect(await getSetting(testDb(), b.id, key, null)).toEqual({ n: 1 });
      // a second shared row for the same key is refused by the database
      await expect(testDb()("settings").insert({ key, team_id: null, value: JSON.stringify({ n: 3 }) })).rejects.toThrow(/settings_shared_key/);
    } finally {
      await testDb()("settings").where({ key }).delete();
    }
  });
});
