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
