// Flags from saved measurements, over HTTP against the running app (the measurement routes call the
// follow-up engine in the same transaction), and the engine called directly for re-evaluation.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { evaluateEpisodeFlags, sweepFlags } from "@/lib/followup/evaluate";
import { closeTestDb, testDb } from "../support/db";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { signIn, type Client } from "../support/http";
import { auditCount, daysAgo, flagsOf, makeFilmAt, threeGaps } from "../support/followup";

let team: TestTeam;
let registrar: Client;
let consultant: Client;
let episodeId: string;
let film2: string;
let measurement2: string;

async function measure(filmId: string, cm: number): Promise<{ id: string; version: number }> {
  const res = await registrar.send("POST", `/api/films/${filmId}/measurements`, { calipers: threeGaps(cm) });
  expect(res.status).toBe(201);
  return ((await res.json()) as { measurement: { id: string; version: number } }).measurement;
}

beforeAll(async () => {
  team = await makeTeam("flags-eval");
  const patient = await makePatient(team);
  episodeId = (await makeEpisode(team, patient.id)).id;
  [registrar, consultant] = await Promise.all([signIn(team.users.registrar.email, TEST_PASSWORD), signIn(team.users.consultant.email, TEST_PASSWORD)]);
  const now = new Date();
  // Two erect PA films ten days apart, the second taken a little before now.
  const film1 = await makeFilmAt(team, episodeId, daysAgo(now, 10.1));
  film2 = await makeFilmAt(team, episodeId, daysAgo(now, 0.1));
  await measure(film1, 2);
});

afterAll(async () => {
  await closeTestDb();
});

describe("a saved measurement and the flags it raises", () => {
  it("creates exactly one flag when a film breaks the slower-than-expected rule", async () => {
    // Collins 1995: 2 + 2 + 2 cm -> 4.2 + 4.7 x 6 = 32.4 % on both films. Kircher & Swartzel 1954, 1.25 %/day:
    // 32.4 - 12.5 = 19.9 % expected ten days later, so 32.4 % is 12.5 points over the 10-point band (suggested setting).
    measurement2 = (await measure(film2, 2)).id;
    const flags = await flagsOf(episodeId);
    expect(flags.map((f) => [f.rule, f.state])).toEqual([["slower-than-expected", "open"]]);
    const flag = flags[0]!;
    expect(flag.film_id).toBe(film2);
    expect(flag.measurement_id).toBe(measurement2);
    expect(flag.figures.percent).toBeCloseTo(32.4, 9);
    expect(flag.figures.expectedPercent).toBeCloseTo(19.9, 9);
    expect(await auditCount("flag.raise", flag.id)).toBe(1);
    const [audit] = await testDb()("audit_log").where({ action: "flag.raise", entity_id: flag.id }).select("actor_id");
    expect(audit?.actor_id).toBe(team.users.registrar.id);
  });

  it("does not flag twice when the episode is evaluated again, even twice at once", async () => {
    const k = testDb();
    const results = await Promise.all([
      k.transaction((trx) => evaluateEpisodeFlags(trx, episodeId, new Date(), null)),
      k.transaction((trx) => evaluateEpisodeFlags(trx, episodeId, new Date(), null)),
    ]);
    expect(results.map((r) => r.raised.length)).toEqual([0, 0]);
    const flags = await flagsOf(episodeId);
    expect(flags).toHaveLength(1);
    expect(await auditCount("flag.raise", flags[0]!.id)).toBe(1);
  });

  it("supersedes the flag when the measurement is corrected below the band", async () => {
    // Collins 1995: 1.5 + 1.5 + 1.5 cm -> 4.2 + 4.7 x 4.5 = 25.35 %, 5.45 points over the 19.9 % expected: within the band
    const res = await registrar.send("PUT", `/api/measurements/${measurement2}`, { calipers: threeGaps(1.5), basedOnVersion: 1 });
    expect(res.status).toBe(200);
    const flags = await flagsOf(episodeId);
    expect(flags.map((f) => f.state)).toEqual(["superseded"]);
    expect(await auditCount("flag.supersede", flags[0]!.id)).toBe(1);
  });

  it("raises a new flag when the figure breaks the rule again, and a resolved one is not raised twice", async () => {
    const [current] = await testDb()("measurements").where({ film_id: film2 }).whereNull("superseded_at").select("id", "version");
    const res = await registrar.send("PUT", `/api/measurements/${current.id as string}`, { calipers: threeGaps(2), basedOnVersion: current.version as number });
    expect(res.status).toBe(200);
    const flags = await flagsOf(episodeId);
    expect(flags.map((f) => f.state)).toEqual(["superseded", "open"]);
    const open = flags[1]!;

    const resolved = await consultant.send("POST", `/api/flags/${open.id}`, {
      action: "resolve",
      note: "Seen in clinic; comfortable, no oxygen need.",
      plan: { kind: "repeat-film", days: 7 },
    });
    expect(resolved.status).toBe(200);

    const again = await testDb().transaction((trx) => evaluateEpisodeFlags(trx, episodeId, new Date(), null));
    expect(again.raised).toHaveLength(0);
    expect(again.alreadyDecided).toBe(1);
    expect((await flagsOf(episodeId)).map((f) => f.state)).toEqual(["superseded", "resolved"]);
  });

  it("audits the resolution with who, the note and the plan", async () => {
    const [flag] = await testDb()("flags").where({ episode_id: episodeId, state: "resolved" }).select("id", "resolved_by", "resolution_note", "plan");
    expect(flag.resolved_by).toBe(team.users.consultant.id);
    expect(flag.plan).toEqual({ kind: "repeat-film", days: 7 });
    const rows = await testDb()("audit_log").where({ action: "flag.resolve", entity: "flag", entity_id: flag.id }).select("actor_id", "team_id", "before", "after");
    expect(rows).toHaveLength(1);
    expect(rows[0].actor_id).toBe(team.users.consultant.id);
    expect(rows[0].team_id).toBe(team.id);
    expect(rows[0].before.state).toBe("open");
    expect(rows[0].after.state).toBe("resolved");
    expect(rows[0].after.resolution_note).toBe("Seen in clinic; comfortable, no oxygen need.");
  });
});

describe("the nightly sweep", () => {
  it("raises the overdue flag for a booked film not taken, once, and supersedes it when the episode is resolved", async () => {
    const other = await makeTeam("flags-sweep");
    const patient = await makePatient(other);
    const ep = (await makeEpisode(other, patient.id)).id;
    const now = new Date();
    await makeFilmAt(other, ep, daysAgo(now, 20));
    await testDb()("bookings").insert({ episode_id: ep, team_id: other.id, kind: "repeat-film", scheduled_at: daysAgo(now, 5).toISOString(), state: "booked" });
    // due on day 15, now day 20: 5 days late, more than 1 day of grace (common practice)
    const first = await sweepFlags(now, { knex: testDb(), teamId: other.id });
    expect(first.episodes).toBe(1);
    expect(first.raised).toBe(1);
    const second = await sweepFlags(now, { knex: testDb(), teamId: other.id });
    expect(second.raised).toBe(0);
    const flags = await flagsOf(ep);
    expect(flags.map((f) => [f.rule, f.state])).toEqual([["overdue", "open"]]);
    expect(flags[0]!.figures.daysLate).toBeCloseTo(5, 6);

    // Once the episode is marked resolved, the next sweep still reaches it and supersedes the flag (the rule no longer applies).
    await testDb()("episodes").where({ id: ep }).update({ status: "resolved", resolved_on: now.toISOString().slice(0, 10) });
    const third = await sweepFlags(now, { knex: testDb(), teamId: other.id });
    expect(third.episodes).toBe(1);
    expect(third.superseded).toBe(1);
    expect((await flagsOf(ep)).map((f) => f.state)).toEqual(["superseded"]);
    expect((await sweepFlags(now, { knex: testDb(), teamId: other.id })).episodes).toBe(0);
  });
});
