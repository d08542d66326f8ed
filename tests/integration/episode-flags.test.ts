// Recording oxygen or changing an episode's status re-evaluates its flags at once, in the same
// transaction, rather than waiting for the nightly sweep.
import { randomUUID } from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeTestDb, testDb } from "../support/db";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { signIn, type Client } from "../support/http";
import { daysAgo, flagsOf, makeFilmAt } from "../support/followup";

let team: TestTeam;
let registrar: Client;
let consultant: Client;
const now = new Date();

/** An episode with a Collins 30 % film 10 days ago and 25 % yesterday, inserted without evaluation. */
async function twoFilmEpisode(): Promise<string> {
  const patient = await makePatient(team, { family_name: "Oxygenflag" });
  const episodeId = (await makeEpisode(team, patient.id, { presented_on: daysAgo(now, 10).toISOString().slice(0, 10) })).id;
  for (const [days, percent] of [[10, 30], [1, 25]] as const) {
    const film = await makeFilmAt(team, episodeId, daysAgo(now, days));
    await testDb()("measurements").insert({
      film_id: film, episode_id: episodeId, team_id: team.id, chain_id: randomUUID(), version: 1,
      reader_id: team.users.registrar.id, calipers: "{}", plane: "film", results: "{}", collins_percent: percent, created_by: team.users.registrar.id,
    });
  }
  return episodeId;
}

const liveSlower = async (episodeId: string) =>
  (await flagsOf(episodeId)).filter((f) => f.rule === "slower-than-expected" && ["open", "acknowledged"].includes(f.state));

beforeAll(async () => {
  team = await makeTeam("episode-flags");
  [registrar, consultant] = await Promise.all([signIn(team.users.registrar.email, TEST_PASSWORD), signIn(team.users.consultant.email, TEST_PASSWORD)]);
});

afterAll(async () => {
  await closeTestDb();
});

describe("oxygen changes the expected course at once", () => {
  it("raises slower-than-expected when oxygen is recorded from the first film, and clears it when oxygen is shortened", async () => {
    const episodeId = await twoFilmEpisode();
    // On air, 1.25 %/day (Kircher & Swartzel, JAMA 1954): 30 - 1.25 x 9 = 18.75 % expected on day 9; 25 % is
    // 6.25 points above, inside the default 10-point band: no flag.
    expect(await liveSlower(episodeId)).toHaveLength(0);

    // On oxygen throughout, x4 (Northfield, BMJ 1971): 30 - 5 x 9 < 0, so 0 % expected and 25 % is 25 points above.
    const start = await registrar.send("POST", `/api/episodes/${episodeId}/oxygen`, { startedAt: daysAgo(now, 10).toISOString(), flowLMin: 10 });
    expect(start.status).toBe(201);
    const { period } = (await start.json()) as { period: { id: string } };
    const raised = await liveSlower(episodeId);
    expect(raised).toHaveLength(1);
    expect(Number(raised[0]?.figures.excessPoints)).toBeCloseTo(25, 1);

    // Oxygen for the first half day only: 9 + 0.5 x 3 = 10.5 air-equivalent days, 30 - 13.125 = 16.875 % expected,
    // 8.125 points above: back inside the band, so the flag is superseded.
    const stop = await registrar.send("PATCH", `/api/episodes/${episodeId}/oxygen/${period.id}`, { endedAt: daysAgo(now, 9.5).toISOString() });
    expect(stop.status).toBe(200);
    expect(await liveSlower(episodeId)).toHaveLength(0);
    expect((await flagsOf(episodeId)).find((f) => f.id === raised[0]?.id)?.state).toBe("superseded");
  });
});

describe("the episode's status", () => {
  it("supersedes live flags when the episode is marked resolved", async () => {
    const episodeId = await twoFilmEpisode();
    const start = await registrar.send("POST", `/api/episodes/${episodeId}/oxygen`, { startedAt: daysAgo(now, 10).toISOString() });
    expect(start.status).toBe(201);
    expect(await liveSlower(episodeId)).toHaveLength(1);

    const body = {
      side: "right", presentedOn: daysAgo(now, 10).toISOString().slice(0, 10), aetiology: "primary-spontaneous", management: "observation",
      primaryMethod: "collins", status: "resolved", resolvedOn: now.toISOString().slice(0, 10), version: 1,
    };
    const res = await consultant.send("PATCH", `/api/episodes/${episodeId}`, body);
    expect(res.status).toBe(200);
    expect(await liveSlower(episodeId)).toHaveLength(0);
    expect((await flagsOf(episodeId)).filter((f) => f.rule === "slower-than-expected").map((f) => f.state)).toEqual(["superseded"]);
  });
});
