// The resorption chart of the letter as plain geometry (page points), from the trend data. Pure, so
// the mapping from days and percent to the page can be tested without a PDF.
import type { TrendData } from "@/lib/followup/trend";

export interface Box {
  x: number;
  y: number;
  width: number;
  height: number;
}

export interface ChartPoint {
  x: number;
  y: number;
  day: number;
  percent: number;
  signedOff: boolean;
}

export interface ChartGeometry {
  box: Box;
  maxDay: number;
  maxPercent: number;
  xTicks: { x: number; label: string }[];
  yTicks: { y: number; label: string }[];
  /** The primary method's points, in time order. */
  points: ChartPoint[];
  /** The other methods' points, drawn small and grey. */
  others: { method: string; points: ChartPoint[] }[];
  expected: { x: number; y: number }[];
  /** Closed polygon: upper edge forwards, lower edge backwards. */
  band: { x: number; y: number }[];
  events: { x: number; label: string; kind: string }[];
  resolution: { x: number; day: number } | null;
}

const niceStep = (span: number, target: number): number => {
  const raw = span / Math.max(1, target);
  const pow = 10 ** Math.floor(Math.log10(raw));
  for (const m of [1, 2, 5, 10]) if (m * pow >= raw) return m * pow;
  return 10 * pow;
};

/**
 * Lays out the chart. Days run from 0 (first film) to the later of the last film, today and the
 * predicted resolution (at most 60 days past the last film); percent from 0 to the next 10 above the
 * largest value (at least 20).
 */
export function chartGeometry(trend: Pick<TrendData, "primaryMethod" | "series" | "band" | "prediction" | "events" | "nowDay">, box: Box): ChartGeometry {
  const primary = trend.series[trend.primaryMethod];
  const lastFilmDay = Math.max(0, ...(["collins", "light", "rhea"] as const).flatMap((m) => trend.series[m].map((p) => p.day)));
  const resolutionDay = trend.prediction?.resolutionDay ?? 0;
  const maxDay = Math.max(7, Math.ceil(Math.max(lastFilmDay, Math.min(trend.nowDay, lastFilmDay + 60), Math.min(resolutionDay, lastFilmDay + 60))));
  const allPercents = [...(["collins", "light", "rhea"] as const).flatMap((m) => trend.series[m].map((p) => p.percent)), ...trend.band.map((b) => b.upper)];
  const maxPercent = Math.min(100, Math.max(20, Math.ceil(Math.max(0, ...allPercents) / 10) * 10));
  const sx = (day: number) => box.x + (Math.min(Math.max(day, 0), maxDay) / maxDay) * box.width;
  const sy = (pct: number) => box.y + box.height - (Math.min(Math.max(pct, 0), maxPercent) / maxPercent) * box.height;
  const toPoint = (p: { day: number; percent: number; signedOff: boolean }): ChartPoint => ({ x: sx(p.day), y: sy(p.percent), day: p.day, percent: p.percent, signedOff: p.signedOff });

  const dayStep = niceStep(maxDay, 8);
  const xTicks: ChartGeometry["xTicks"] = [];
  for (let d = 0; d <= maxDay + 1e-9; d += dayStep) xTicks.push({ x: sx(d), label: String(d) });
  const pctStep = niceStep(maxPercent, 5);
  const yTicks: ChartGeometry["yTicks"] = [];
  for (let p = 0; p <= maxPercent + 1e-9; p += pctStep) yTicks.push({ y: sy(p), label: `${p}` });

  const inRange = trend.band.filter((b) => b.day <= maxDay + 1e-9);
  const expected = inRange.map((b) => ({ x: sx(b.day), y: sy(b.expected) }));
  const band = [...inRange.map((b) => ({ x: sx(b.day), y: sy(b.upper) })), ...[...inRange].reverse().map((b) => ({ x: sx(b.day), y: sy(b.lower) }))];
  const others = (["collins", "light", "rhea"] as const)
    .filter((m) => m !== trend.primaryMethod && trend.series[m].length > 0)
    .map((m) => ({ method: m, points: trend.series[m].map(toPoint) }));
  return {
    box,
    maxDay,
    maxPercent,
    xTicks,
    yTicks,
    points: primary.map(toPoint),
    others,
    expected,
    band,
    events: trend.events.filter((e) => e.day >= 0 && e.day <= maxDay).map((e) => ({ x: sx(e.day), label: e.label, kind: e.kind })),
    resolution: trend.prediction && trend.prediction.resolutionDay <= maxDay ? { x: sx(trend.prediction.resolutionDay), day: trend.prediction.resolutionDay } : null,
  };
}
