// The resorption chart's data: measured points per method, the expected line with its band (one
// point per day), the predicted resolution date, events on the time axis, and the live flags.
import "server-only";
import type { Trx } from "@/db/knex";
import { notFound } from "@/lib/errors";
import { FLAG_COLUMNS, type FlagRow } from "@/db/flags";
import { LIVE_STATES } from "@/lib/followup/rules";
import { readDeviationSettings } from "@/lib/settings-registry";
import type { DeviationSettings } from "@/measure";
import { daysBetween, inTurn, loadEpisodeSeries, type EpisodeSeriesData } from "./series";
import { sparklineFromSeries, trendFromSeries, type Sparkline, type TrendData, type TrendEvent, type TrendEventKind } from "./course";

export type { ExpectedPoint, Sparkline, TrendData, TrendEvent, TrendEventKind, TrendFilm, TrendFlag, TrendPoint } from "./course";
export { expectedCourse, predictionFromSeries, sparklineFromSeries, trendFromSeries } from "./course";

const iso = (d: Date) => d.toISOString();
const round2 = (n: number) => Math.round(n * 100) / 100;

const PROCEDURE_EVENTS: Record<string, { kind: TrendEventKind; label: string }> = {
  "needle-aspiration": { kind: "aspiration", label: "Needle aspiration" },
  "ambulatory-valve": { kind: "valve", label: "Ambulatory valve" },
  surgery: { kind: "surgery", label: "Surgery" },
};

/** Everything the resorption chart shows for one episode of the caller's team (404 otherwise). */
export async function getEpisodeTrend(trx: Trx, teamId: string, episodeId: string, now: Date): Promise<TrendData> {
  const [settings, seriesMap, procedures, drains, flags] = await inTurn<[DeviationSettings, Map<string, EpisodeSeriesData>, { kind: string; performed_at: Date; volume_ml: number | null }[], { inserted_at: Date; removed_at: Date | null; size_fr: number }[], FlagRow[]]>(trx, [
    () => readDeviationSettings(trx),
    () => loadEpisodeSeries(trx, [episodeId]),
    () => trx("procedures").where({ episode_id: episodeId }).select("kind", "performed_at", "volume_ml").orderBy("performed_at") as Promise<{ kind: string; performed_at: Date; volume_ml: number | null }[]>,
    () => trx("drains").where({ episode_id: episodeId, team_id: teamId }).select("inserted_at", "removed_at", "size_fr").orderBy("inserted_at") as Promise<{ inserted_at: Date; removed_at: Date | null; size_fr: number }[]>,
    () => trx("flags").where({ episode_id: episodeId, team_id: teamId }).whereIn("state", LIVE_STATES).select(FLAG_COLUMNS).orderBy("raised_at") as Promise<FlagRow[]>,
  ]);
  // The series carries the episode's team: another team's episode (or none) is not found. All queries ran
  // side by side; what they read for a foreign episode is dropped here.
  const data = seriesMap.get(episodeId);
  if (!data || data.teamId !== teamId) throw notFound("That episode");
  const base = trendFromSeries(data, settings, now);
  const at = (d: Date) => ({ day: round2(daysBetween(data.origin, d)), at: iso(d) });
  const events: TrendEvent[] = [];
  for (const p of procedures) {
    const e = PROCEDURE_EVENTS[p.kind] ?? { kind: "procedure" as const, label: "Procedure" };
    events.push({ kind: e.kind, label: p.volume_ml ? `${e.label} (${p.volume_ml} mL)` : e.label, ...at(p.performed_at) });
  }
  for (const d of drains) {
    events.push({ kind: "drain-in", label: `Drain in (${d.size_fr} Fr)`, ...at(d.inserted_at) });
    if (d.removed_at) events.push({ kind: "drain-out", label: "Drain out", ...at(d.removed_at) });
  }
  for (const o of data.oxygen) {
    events.push({ kind: "oxygen-on", label: "Oxygen on", ...at(o.startedAt) });
    if (o.endedAt) events.push({ kind: "oxygen-off", label: "Oxygen off", ...at(o.endedAt) });
  }
  events.sort((a, b) => a.day - b.day);
  return {
    ...base,
    events,
    flags: flags.map((f) => ({ id: f.id, rule: f.rule, state: f.state, filmId: f.film_id, reason: f.reason, raisedAt: iso(f.raised_at) })),
  };
}

/** Sparklines for several episodes at once (one load for a page of the board). */
export async function sparklinesFor(trx: Trx, episodeIds: readonly string[], now: Date): Promise<Map<string, Sparkline | null>> {
  const settings = await readDeviationSettings(trx);
  const seriesMap = await loadEpisodeSeries(trx, episodeIds);
  const out = new Map<string, Sparkline | null>();
  for (const [id, data] of seriesMap) out.set(id, sparklineFromSeries(data, settings, now));
  return out;
}
