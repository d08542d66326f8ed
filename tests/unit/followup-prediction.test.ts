// predictionFromSeries (used by the follow-up diary and the travel note for many episodes at once)
// gives exactly the prediction of the full resorption chart, without drawing its expected line.
import { describe, expect, it } from "vitest";
import { defaultDeviationSettings } from "../../measure";
import { predictionFromSeries, trendFromSeries } from "../../lib/followup/course";
import type { EpisodeSeriesData, FilmPoint } from "../../lib/followup/series";

const ORIGIN = new Date("2026-11-01T08:00:00Z");
const at = (day: number) => new Date(ORIGIN.getTime() + day * 86_400_000);
function film(id: string, day: number, collins: number | null): FilmPoint {
  return { filmId: id, takenAt: at(day), dayIndex: day, projection: "PA", position: "erect", measurementId: collins === null ? null : `m${id}`, signedOff: false, light: null, rhea: null, collins, hilumCm: null, apexCm: null };
}
const episode = (films: FilmPoint[], extra: Partial<EpisodeSeriesData> = {}): EpisodeSeriesData => ({
  episodeId: "ep", teamId: "t", status: "active", primaryMethod: "collins", origin: ORIGIN, films, oxygen: [], nextBooking: null, ...extra,
});

describe("predicted resolution without the chart", () => {
  it("dates a 20 % baseline on day 1 to day 17 at 1.25 %/day", () => {
    // Kircher LT, Swartzel RL, JAMA 1954;155:24-29: 1.25 % of the hemithorax per day; 20 / 1.25 = 16 days after day 1
    const p = predictionFromSeries(episode([film("u", 0, null), film("a", 1, 20), film("b", 4, 17)]), { ...defaultDeviationSettings, ratePerDay: 1.25 });
    expect(p?.baselineFilmId).toBe("a");
    expect(p?.resolutionDay).toBeCloseTo(17, 10);
    expect(p?.resolutionDate).toBe("2026-11-18T08:00:00.000Z");
  });

  it("dates a 20 % baseline to day 4 with oxygen throughout, and to day 10 when oxygen stops on day 2", () => {
    // Northfield TC, BMJ 1971;4:86-88: high-flow oxygen raised resorption about four-fold (x4 of 1.25 %/day = 5 %/day).
    // Throughout: 20 / 5 = 4 days. Stopped on day 2: 2 days x 5 = 10 points, then 10 / 1.25 = 8 days on air: day 10.
    const settings = { ...defaultDeviationSettings, ratePerDay: 1.25, oxygenMultiplier: 4 };
    const throughout = predictionFromSeries(episode([film("a", 0, 20)], { oxygen: [{ startedAt: at(0), endedAt: null, startDay: 0, endDay: null }] }), settings);
    expect(throughout?.resolutionDay).toBeCloseTo(4, 10);
    const stopped = predictionFromSeries(episode([film("a", 0, 20)], { oxygen: [{ startedAt: at(0), endedAt: at(2), startDay: 0, endDay: 2 }] }), settings);
    expect(stopped?.resolutionDay).toBeCloseTo(10, 10);
    expect(stopped?.resolutionDate).toBe("2026-11-11T08:00:00.000Z");
  });

  it("uses the BTS 2010 and Kelly 2006 rates as given", () => {
    // MacDuff A et al., BTS guideline, Thorax 2010;65 Suppl 2:ii18-ii31: 1.25-1.8 % per day; 20 / 1.8 = 11.11 days.
    // Kelly AM et al., Emerg Med J 2006;23:780-782: 2.2 % per day (Collins); 20 / 2.2 = 9.09 days.
    const data = episode([film("a", 0, 20)]);
    expect(predictionFromSeries(data, { ...defaultDeviationSettings, ratePerDay: 1.8 })?.resolutionDay).toBeCloseTo(11.11, 2);
    expect(predictionFromSeries(data, { ...defaultDeviationSettings, ratePerDay: 2.2 })?.resolutionDay).toBeCloseTo(9.09, 2);
  });

  it("is the chart's own prediction, on air, on oxygen, and with nothing measured", () => {
    const cases: EpisodeSeriesData[] = [
      episode([film("a", 0, 32), film("b", 3, 30), film("c", 9, 21)]),
      episode([film("a", 0.4, 18)], { oxygen: [{ startedAt: at(0), endedAt: at(2), startDay: 0, endDay: 2 }] }),
      episode([film("a", 0, null)]),
    ];
    for (const data of cases) {
      expect(predictionFromSeries(data, defaultDeviationSettings)).toEqual(trendFromSeries(data, defaultDeviationSettings, at(30)).prediction);
    }
    expect(predictionFromSeries(cases[2] as EpisodeSeriesData, defaultDeviationSettings)).toBeNull();
  });
});
