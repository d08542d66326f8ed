import { describe, expect, it } from "vitest";
import { deviations, type Deviation } from "../../measure";
import { draftsFromDeviations, evidenceOf, reconcile, stableJson, type FlagDraft, type StoredLiveFlag } from "../../lib/followup/reconcile";
import { toPlan, toSeries, type EpisodeSeriesData, type FilmPoint } from "../../lib/followup/series";

// Invented episode: day 0 = 2026-11-01 08:00 UTC. Films are erect PA unless stated.
const ORIGIN = new Date("2026-11-01T08:00:00Z");
const at = (day: number) => new Date(ORIGIN.getTime() + day * 86_400_000);

function film(id: string, day: number, collins: number | null, extra: Partial<FilmPoint> = {}): FilmPoint {
  return {
    filmId: id,
    takenAt: at(day),
    dayIndex: day,
    projection: "PA",
    position: "erect",
    measurementId: collins === null ? null : `m-${id}`,
    signedOff: false,
    light: collins,
    rhea: collins,
    collins,
    hilumCm: null,
    apexCm: null,
    ...extra,
  };
}

function episode(films: FilmPoint[], extra: Partial<EpisodeSeriesData> = {}): EpisodeSeriesData {
  return { episodeId: "ep", teamId: "team", status: "active", primaryMethod: "collins", origin: ORIGIN, films, oxygen: [], nextBooking: null, ...extra };
}

const evaluate = (data: EpisodeSeriesData, nowDay: number) => draftsFromDeviations(deviations(toSeries(data), toPlan(data, at(nowDay))));
const rulesOf = (drafts: FlagDraft[]) => drafts.map((d) => d.rule);

describe("series and plan from stored films", () => {
  it("follows the episode's primary method", () => {
    // invented figures; the chosen method's column is the percent the rules use (common practice)
    const data = episode([film("a", 0, 30, { light: 41, rhea: 27 })], { primaryMethod: "light" });
    expect(toSeries(data)[0]?.percent).toBe(41);
    expect(toSeries({ ...data, primaryMethod: "rhea" })[0]?.percent).toBe(27);
    expect(toSeries({ ...data, primaryMethod: "collins" })[0]?.percent).toBe(30);
  });

  it("counts now and the next booked film in days since the first film", () => {
    // arithmetic: 36 h after day 0 is day 1.5; a booking 14 days after day 0 is due on day 14
    const data = episode([film("a", 0, 20)], { nextBooking: { id: "b", scheduledAt: at(14), dayIndex: 14 } });
    const plan = toPlan(data, new Date(ORIGIN.getTime() + 36 * 3_600_000));
    expect(plan.now).toBeCloseTo(1.5, 10);
    expect(plan.nextFilmDueDay).toBe(14);
    expect(plan.resolved).toBe(false);
    expect(toPlan({ ...data, status: "resolved" }, ORIGIN).resolved).toBe(true);
  });
});

describe("findings to one draft per rule, with published resorption rates", () => {
  it("flags a film well above the expected course at 1.25 %/day", () => {
    // Kircher & Swartzel, JAMA 1954: 1.25 % of the hemithorax per day; 30 % on day 0 -> 17.5 % expected on day 10;
    // 30 % observed is 12.5 points over, more than the 10-point band (suggested setting, no published figure)
    const drafts = evaluate(episode([film("a", 0, 30), film("b", 10, 30)]), 10);
    expect(rulesOf(drafts)).toEqual(["slower-than-expected"]);
    expect(drafts[0]?.filmId).toBe("b");
    expect(drafts[0]?.figures.expectedPercent).toBeCloseTo(17.5, 10);
    expect(drafts[0]?.figures.excessPoints).toBeCloseTo(12.5, 10);
    expect(drafts[0]?.evidence).toBe("film:b");
  });

  it("leaves a course that keeps to 1.25 %/day alone", () => {
    // Kircher & Swartzel 1954: 20 % -> 16.25 % expected on day 3 and 11.25 % on day 7; observed 16 and 11
    expect(evaluate(episode([film("a", 0, 20), film("b", 3, 16), film("c", 7, 11)]), 7)).toEqual([]);
  });

  it("expects four times faster resorption during oxygen taken from the stored times", () => {
    // Northfield, BMJ 1971: about x4 on supplemental oxygen. 20 % on day 0, oxygen from day 0: expected 20 - 4 x 1.25 x 4 = 0 % on day 4,
    // so 12 % on day 4 is 12 points over (flag); on air the expectation is 15 % (Kircher & Swartzel 1954), so 12 % is on track.
    const films = [film("a", 0, 20), film("b", 4, 12)];
    const onOxygen = episode(films, { oxygen: [{ startedAt: ORIGIN, endedAt: null, startDay: 0, endDay: null }] });
    const drafts = evaluate(onOxygen, 4);
    expect(rulesOf(drafts)).toEqual(["slower-than-expected"]);
    expect(drafts[0]?.figures.expectedPercent).toBeCloseTo(0, 10);
    expect(evaluate(episode(films), 4)).toEqual([]);
  });

  it("groups several findings of one rule into one draft led by the latest film", () => {
    // Light 49 / Rhea 23 / Collins 32 on one 2 cm pneumothorax (Light RW; Rhea JT et al. 1982; Collins CD et al. 1995): spread 26 > 20 (suggestion)
    const disagree = { light: 49, rhea: 23, collins: 32 };
    const drafts = evaluate(episode([film("a", 0, 32, disagree), film("b", 1, 32, disagree)]), 1);
    const d = drafts.find((x) => x.rule === "methods-disagree");
    expect(drafts.filter((x) => x.rule === "methods-disagree")).toHaveLength(1);
    expect(d?.filmId).toBe("b");
    expect(d?.evidence).toBe("film:a+film:b");
    expect(Array.isArray(d?.figures.items) ? d.figures.items.length : 0).toBe(2);
  });

  it("keys rules without a film on what they rest on", () => {
    // arithmetic on invented figures
    const overdue: Deviation = { rule: "overdue", filmId: null, figures: { dueDay: 14, now: 16, daysLate: 2, graceDays: 1 }, reason: "" };
    const open: Deviation = { rule: "unresolved-by-prediction", filmId: null, figures: { baselineFilmId: "a", predictedResolutionDay: 16 }, reason: "" };
    expect(evidenceOf(overdue)).toBe("due:14.000");
    expect(evidenceOf(open)).toBe("baseline:a:16.0");
  });
});

describe("reconcile with stored flags", () => {
  const slower = evaluate(episode([film("a", 0, 30), film("b", 10, 30)]), 10);
  const draft = slower[0] as FlagDraft;
  const liveFrom = (d: FlagDraft, id = "f1"): StoredLiveFlag => ({
    id,
    rule: d.rule,
    state: "open",
    filmId: d.filmId,
    // jsonb gives keys back in its own order: reverse them to prove the comparison does not depend on order
    figures: Object.fromEntries(Object.entries(d.figures).reverse()),
    reason: d.reason,
  });

  it("raises a new finding", () => {
    expect(reconcile(slower, [], [])).toEqual([{ op: "raise", draft }]);
  });

  it("keeps a live flag whose figures did not change, so re-evaluating never flags twice", () => {
    expect(reconcile(slower, [liveFrom(draft)], [])).toEqual([{ op: "keep", id: "f1", rule: "slower-than-expected" }]);
  });

  it("updates the figures of the live flag when a later film changes them", () => {
    // Kircher & Swartzel 1954: 30 % on day 0 -> 15 % expected on day 12; 28 % is 13 points over
    const later = evaluate(episode([film("a", 0, 30), film("b", 10, 30), film("c", 12, 28)]), 12);
    const steps = reconcile(later, [liveFrom(draft)], []);
    expect(steps).toHaveLength(1);
    expect(steps[0]?.op).toBe("update");
    expect(steps[0]?.op === "update" ? steps[0].draft.figures.expectedPercent : null).toBeCloseTo(15, 10);
  });

  it("supersedes a live flag whose rule no longer fires, but not another part's rule", () => {
    // a corrected measurement (20 % on day 10, expected 17.5 %: Kircher & Swartzel 1954) ends the finding
    const corrected = evaluate(episode([film("a", 0, 30), film("b", 10, 20)]), 10);
    expect(corrected).toEqual([]);
    const drain: StoredLiveFlag = { id: "f2", rule: "persistent-air-leak", state: "open", filmId: null, figures: {}, reason: "bubbling" };
    expect(reconcile(corrected, [liveFrom(draft), drain], [])).toEqual([{ op: "supersede", id: "f1", rule: "slower-than-expected" }]);
  });

  it("does not raise again what a consultant resolved on the same evidence, but does on a new film", () => {
    expect(reconcile(slower, [], [{ id: "r1", rule: "slower-than-expected", evidence: "film:b" }])).toEqual([
      { op: "already-decided", resolvedId: "r1", draft },
    ]);
    const later = evaluate(episode([film("a", 0, 30), film("b", 10, 30), film("c", 12, 28)]), 12);
    expect(reconcile(later, [], [{ id: "r1", rule: "slower-than-expected", evidence: "film:b" }])[0]?.op).toBe("raise");
  });

  it("compares JSON independent of key order", () => {
    // common practice: jsonb does not keep key order
    expect(stableJson({ b: 1, a: [1, { d: 2, c: null }] })).toBe(stableJson({ a: [1, { c: null, d: 2 }], b: 1 }));
    expect(stableJson({ a: 1 })).not.toBe(stableJson({ a: 2 }));
  });
});
