import { describe, expect, it } from "vitest";
import { defaultDeviationSettings } from "../../measure";
import { expectedCourse, sparklineFromSeries, trendFromSeries } from "../../lib/followup/course";
import type { EpisodeSeriesData, FilmPoint } from "../../lib/followup/series";

const ORIGIN = new Date("2026-11-01T08:00:00Z");
const at = (day: number) => new Date(ORIGIN.getTime() + day * 86_400_000);
const s = { ratePerDay: 1.25, oxygenMultiplier: 4, aboveBandPoints: 10 };

function film(id: string, day: number, collins: number | null, light: number | null = null): FilmPoint {
  return { filmId: id, takenAt: at(day), dayIndex: day, projection: "PA", position: "erect", measurementId: collins === null ? null : `m${id}`, signedOff: false, light, rhea: null, collins, hilumCm: null, apexCm: null };
}
const episode = (films: FilmPoint[], extra: Partial<EpisodeSeriesData> = {}): EpisodeSeriesData => ({
  episodeId: "ep", teamId: "t", status: "active", primaryMethod: "collins", origin: ORIGIN, films, oxygen: [], nextBooking: null, ...extra,
});

describe("expected course", () => {
  it("resolves 20 % in 16 days at 1.25 %/day with one point per day and a band", () => {
    // Kircher & Swartzel, JAMA 1954: 1.25 %/day; 20 / 1.25 = 16 days; day 3 -> 16.25 % (clinical reference worked values)
    const { band, resolutionDay } = expectedCourse({ day: 0, percent: 20 }, [], s, 0);
    expect(resolutionDay).toBeCloseTo(16, 10);
    const day3 = band.find((b) => b.day === 3);
    expect(day3?.expected).toBeCloseTo(16.25, 10);
    // band of 10 points (suggested setting): 6.25 .. 26.25
    expect(day3?.lower).toBeCloseTo(6.25, 10);
    expect(day3?.upper).toBeCloseTo(26.25, 10);
    expect(band.some((b) => b.day === 16 && b.expected === 0)).toBe(true);
    // one point per whole day from day 0 to the day after resolution (arithmetic)
    expect(band.map((b) => b.day)).toEqual(Array.from({ length: 18 }, (_, i) => i));
  });

  it("resolves in 11.1 days at the BTS upper rate and 9.09 days at the rate measured with Collins", () => {
    // BTS 2010 (MacDuff A et al., Thorax 2010;65 Suppl 2): 1.8 %/day -> 20 / 1.8 = 11.1 days
    expect(expectedCourse({ day: 0, percent: 20 }, [], { ...s, ratePerDay: 1.8 }, 0).resolutionDay).toBeCloseTo(11.11, 2);
    // Kelly AM et al., Emerg Med J 2006;23:780-782: 2.2 %/day by Collins -> 20 / 2.2 = 9.09 days
    expect(expectedCourse({ day: 0, percent: 20 }, [], { ...s, ratePerDay: 2.2 }, 0).resolutionDay).toBeCloseTo(9.09, 2);
  });

  it("runs four times faster on oxygen", () => {
    // Northfield, BMJ 1971: x4 on oxygen; oxygen over days 0-2 consumes 2 x 4 x 1.25 = 10 points, the other 10 take 8 days on air -> day 10
    const { resolutionDay, band } = expectedCourse({ day: 0, percent: 20 }, [{ startDay: 0, endDay: 2 }], s, 0);
    expect(resolutionDay).toBeCloseTo(10, 10);
    expect(band.find((b) => b.day === 2)?.expected).toBeCloseTo(10, 10);
  });

  it("starts from a baseline that is not day 0", () => {
    // Kircher & Swartzel 1954: 25 % on day 2 at 1.25 %/day -> 0 on day 22
    const { resolutionDay, band } = expectedCourse({ day: 2, percent: 25 }, [], s, 0);
    expect(resolutionDay).toBeCloseTo(22, 10);
    expect(band[0]).toEqual({ day: 2, expected: 25, lower: 15, upper: 35 });
  });
});

describe("trend data", () => {
  it("draws the expected course from the first measured film of the chart method and dates the resolution", () => {
    // Kircher & Swartzel 1954: 20 % on day 1 -> resolved on day 17 = 2026-11-18 08:00 UTC
    const t = trendFromSeries(episode([film("u", 0, null), film("a", 1, 20, 35), film("b", 4, 17, 30)]), { ...defaultDeviationSettings }, at(5));
    expect(t.prediction?.baselineFilmId).toBe("a");
    expect(t.prediction?.resolutionDay).toBeCloseTo(17, 10);
    expect(t.prediction?.resolutionDate).toBe("2026-11-18T08:00:00.000Z");
    expect(t.series.collins.map((p) => p.percent)).toEqual([20, 17]);
    expect(t.series.light.map((p) => p.percent)).toEqual([35, 30]);
    expect(t.films).toHaveLength(3);
    expect(t.nowDay).toBeCloseTo(5, 10);
  });

  it("has no band before any film is measured", () => {
    // common practice: nothing to project from
    const t = trendFromSeries(episode([film("u", 0, null)]), { ...defaultDeviationSettings }, at(1));
    expect(t.band).toEqual([]);
    expect(t.prediction).toBeNull();
    expect(sparklineFromSeries(episode([film("u", 0, null)]), { ...defaultDeviationSettings }, at(1))).toBeNull();
  });

  it("gives the board's sparkline the chart method's points and the expected line", () => {
    // Kircher & Swartzel 1954: from 30 % on day 0 the expected line reaches 17.5 % on day 10
    const sp = sparklineFromSeries(episode([film("a", 0, 30), film("b", 10, 30)]), { ...defaultDeviationSettings }, at(10));
    expect(sp?.points).toEqual([[0, 30], [10, 30]]);
    expect(sp?.expected.find(([d]) => d === 10)?.[1]).toBeCloseTo(17.5, 10);
  });
});
