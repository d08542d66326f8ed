// The pure half of the resorption chart: expected course with its band, predicted resolution, points per
// method, and the board's sparkline, from an episode's series. No database, no clock (now is passed in).
import { expectedBand, predictedResolutionDays, type DeviationSettings, type OxygenPeriod } from "@/measure";
import { DAY_MS, daysBetween, oxygenPeriodsOf, percentOf, type EpisodeSeriesData, type Method } from "./series";

export interface TrendPoint {
  filmId: string;
  day: number;
  takenAt: string;
  percent: number;
  projection: string | null;
  position: string | null;
  signedOff: boolean;
}

export interface ExpectedPoint {
  day: number;
  expected: number;
  lower: number;
  upper: number;
}

export type TrendEventKind = "aspiration" | "valve" | "surgery" | "procedure" | "drain-in" | "drain-out" | "oxygen-on" | "oxygen-off";
export interface TrendEvent {
  kind: TrendEventKind;
  day: number;
  at: string;
  label: string;
}

export interface TrendFlag {
  id: string;
  rule: string;
  state: string;
  filmId: string | null;
  reason: string;
  raisedAt: string;
}

export interface TrendFilm {
  filmId: string;
  day: number;
  takenAt: string;
  projection: string | null;
  position: string | null;
  measured: boolean;
  signedOff: boolean;
  light: number | null;
  rhea: number | null;
  collins: number | null;
  hilumCm: number | null;
  apexCm: number | null;
}

export interface TrendData {
  episodeId: string;
  primaryMethod: Method;
  /** Day 0 of the time axis (first film), ISO. */
  origin: string;
  /** Today on the time axis. */
  nowDay: number;
  films: TrendFilm[];
  series: Record<Method, TrendPoint[]>;
  /** Expected course from the baseline film of the primary method, one point per day, with the band. */
  band: ExpectedPoint[];
  prediction: {
    baselineFilmId: string;
    baselineDay: number;
    baselinePercent: number;
    resolutionDay: number;
    resolutionDate: string;
  } | null;
  model: { ratePerDay: number; oxygenMultiplier: number; tolerancePoints: number; sources: string[] };
  events: TrendEvent[];
  flags: TrendFlag[];
}

/** Longest stretch the expected line is drawn for, in days (a year covers any pneumothorax follow-up). */
const MAX_DAYS = 365;

const iso = (d: Date) => d.toISOString();
const round2 = (n: number) => Math.round(n * 100) / 100;

/** The first measured film of the primary method: the baseline of the expected course. */
function baselineOf(data: EpisodeSeriesData): { filmId: string; day: number; percent: number } | null {
  for (const p of data.films) {
    const v = percentOf(p, data.primaryMethod);
    if (v !== null && v > 0) return { filmId: p.filmId, day: p.dayIndex, percent: v };
  }
  return null;
}

/**
 * Expected course with band from the baseline, one point per whole day after it, plus the exact
 * predicted resolution day. Pure. Sources: Kircher & Swartzel 1954; BTS 2010; Northfield 1971 (via measure/).
 */
export function expectedCourse(
  baseline: { day: number; percent: number },
  oxygenPeriods: readonly OxygenPeriod[],
  settings: Pick<DeviationSettings, "ratePerDay" | "oxygenMultiplier" | "aboveBandPoints">,
  untilDay: number,
): { band: ExpectedPoint[]; resolutionDay: number } {
  const options = { ratePerDay: settings.ratePerDay, oxygenMultiplier: settings.oxygenMultiplier, oxygenPeriods, fromDay: baseline.day };
  const resolutionDay = baseline.day + predictedResolutionDays(baseline.percent, options);
  const end = Math.min(baseline.day + MAX_DAYS, Math.max(untilDay, resolutionDay + 1));
  const days: number[] = [];
  for (let d = baseline.day; d <= end + 1e-9; d += 1) days.push(d);
  if (resolutionDay <= end && !days.some((d) => Math.abs(d - resolutionDay) < 1e-6)) days.push(resolutionDay);
  days.sort((a, b) => a - b);
  const band = days.map((day) => {
    const b = expectedBand(baseline.percent, day - baseline.day, { ...options, tolerancePoints: settings.aboveBandPoints });
    return { day: round2(day), expected: round2(b.expected), lower: round2(b.lower), upper: round2(b.upper) };
  });
  return { band, resolutionDay };
}

/**
 * The predicted resolution alone, as trendFromSeries reports it, without drawing the expected line
 * (the follow-up diary and the travel note need only this, for many episodes at once).
 */
export function predictionFromSeries(data: EpisodeSeriesData, settings: Pick<DeviationSettings, "ratePerDay" | "oxygenMultiplier">): TrendData["prediction"] {
  const baseline = baselineOf(data);
  if (!baseline) return null;
  const options = { ratePerDay: settings.ratePerDay, oxygenMultiplier: settings.oxygenMultiplier, oxygenPeriods: oxygenPeriodsOf(data), fromDay: baseline.day };
  const resolutionDay = baseline.day + predictedResolutionDays(baseline.percent, options);
  return {
    baselineFilmId: baseline.filmId,
    baselineDay: round2(baseline.day),
    baselinePercent: baseline.percent,
    resolutionDay: round2(resolutionDay),
    resolutionDate: iso(new Date(data.origin.getTime() + resolutionDay * DAY_MS)),
  };
}

export function trendFromSeries(data: EpisodeSeriesData, settings: DeviationSettings, now: Date): Omit<TrendData, "events" | "flags"> {
  const nowDay = daysBetween(data.origin, now);
  const films: TrendFilm[] = data.films.map((p) => ({
    filmId: p.filmId,
    day: round2(p.dayIndex),
    takenAt: iso(p.takenAt),
    projection: p.projection,
    position: p.position,
    measured: p.measurementId !== null,
    signedOff: p.signedOff,
    light: p.light,
    rhea: p.rhea,
    collins: p.collins,
    hilumCm: p.hilumCm,
    apexCm: p.apexCm,
  }));
  const series: Record<Method, TrendPoint[]> = { collins: [], light: [], rhea: [] };
  for (const p of data.films) {
    for (const m of ["collins", "light", "rhea"] as const) {
      const v = percentOf(p, m);
      if (v !== null) {
        series[m].push({ filmId: p.filmId, day: round2(p.dayIndex), takenAt: iso(p.takenAt), percent: v, projection: p.projection, position: p.position, signedOff: p.signedOff });
      }
    }
  }
  const baseline = baselineOf(data);
  let band: ExpectedPoint[] = [];
  let prediction: TrendData["prediction"] = null;
  if (baseline) {
    const lastDay = data.films[data.films.length - 1]?.dayIndex ?? 0;
    const course = expectedCourse(baseline, oxygenPeriodsOf(data), settings, Math.max(lastDay, nowDay));
    band = course.band;
    prediction = {
      baselineFilmId: baseline.filmId,
      baselineDay: round2(baseline.day),
      baselinePercent: baseline.percent,
      resolutionDay: round2(course.resolutionDay),
      resolutionDate: iso(new Date(data.origin.getTime() + course.resolutionDay * DAY_MS)),
    };
  }
  return {
    episodeId: data.episodeId,
    primaryMethod: data.primaryMethod,
    origin: iso(data.origin),
    nowDay: round2(nowDay),
    films,
    series,
    band,
    prediction,
    model: {
      ratePerDay: settings.ratePerDay,
      oxygenMultiplier: settings.oxygenMultiplier,
      tolerancePoints: settings.aboveBandPoints,
      sources: [
        "Kircher LT, Swartzel RL, JAMA 1954;155:24-29 (1.25 % of the hemithorax per day on air)",
        "MacDuff A et al., BTS guideline, Thorax 2010;65 Suppl 2 (1.25-1.8 % per day)",
        "Northfield TC, BMJ 1971;4:86-88 (about 4x faster on supplemental oxygen)",
        "Band: no published figure; a local setting",
      ],
    },
  };
}

/** A tiny sparkline for the deviation board: the primary method's points and the expected line. */
export interface Sparkline {
  method: Method;
  points: [number, number][];
  expected: [number, number][];
}

export function sparklineFromSeries(data: EpisodeSeriesData, settings: DeviationSettings, now: Date): Sparkline | null {
  const points: [number, number][] = [];
  for (const p of data.films) {
    const v = percentOf(p, data.primaryMethod);
    if (v !== null) points.push([round2(p.dayIndex), v]);
  }
  if (points.length === 0) return null;
  const baseline = baselineOf(data);
  let expected: [number, number][] = [];
  if (baseline) {
    const lastDay = points[points.length - 1]?.[0] ?? 0;
    const until = Math.max(lastDay, Math.min(daysBetween(data.origin, now), lastDay + 30));
    expected = expectedCourse(baseline, oxygenPeriodsOf(data), settings, until).band.map((b) => [b.day, b.expected]);
  }
  return { method: data.primaryMethod, points, expected };
}

