// The resorption chart's data: measured points per method, the expected line with its band (one
// point per day), the predicted resolution date, events on the time axis, and the live flags.
import "server-only";
import type { Trx } from "@/db/knex";
import { notFound } from "@/lib/errors";
import type { FlagRow } from "@/db/flags";
import { LIVE_STATES } from "@/lib/followup/rules";
import { deviationGroup, groupValues, readDeviationSettings } from "@/lib/settings-registry";
import { SETTING_VALUE_SQL, settingValueBindings } from "@/lib/settings";
import type { DeviationSettings } from "@/measure";
import { compactSql, daysBetween, EPISODE_SERIES_SQL, inTurn, loadEpisodeSeries, seriesBindings, seriesFromRow, type SeriesRow } from "./series";
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

// The chart's reads beside the series, in one statement (a round trip costs more than these lookups):
// the team's deviation settings as stored, the episode's procedures and drains, and its live flags.
const CHART_EXTRAS_SQL = compactSql(`
    select ${SETTING_VALUE_SQL} as settings,
           coalesce((select json_agg(json_build_object('kind', p.kind, 'at', extract(epoch from p.performed_at) * 1000, 'volume', p.volume_ml) order by p.performed_at)
                       from procedures p where p.episode_id = ?), '[]'::json) as procedures,
           coalesce((select json_agg(json_build_object('in', extract(epoch from d.inserted_at) * 1000, 'out', extract(epoch from d.removed_at) * 1000, 'fr', d.size_fr) order by d.inserted_at)
                       from drains d where d.episode_id = ? and d.team_id = ?), '[]'::json) as drains,
           coalesce((select json_agg(json_build_object('id', f.id, 'rule', f.rule, 'state', f.state, 'film', f.film_id, 'reason', f.reason, 'at', extract(epoch from f.raised_at) * 1000) order by f.raised_at)
                       from flags f where f.episode_id = ? and f.team_id = ? and f.state = any(?::text[])), '[]'::json) as flags`);

interface ChartExtrasRow {
  settings: unknown;
  procedures: { kind: string; at: number; volume: number | null }[];
  drains: { in: number; out: number | null; fr: number }[];
  flags: { id: string; rule: string; state: FlagRow["state"]; film: string | null; reason: string; at: number }[];
}

/** Everything the resorption chart shows for one episode of the caller's team (404 otherwise). */
export async function getEpisodeTrend(trx: Trx, teamId: string, episodeId: string, now: Date): Promise<TrendData> {
  // Two statements side by side on the pool (one after the other inside a transaction).
  const [series, chart] = await inTurn<[{ rows: SeriesRow[] }, { rows: ChartExtrasRow[] }]>(trx, [
    async () => await trx.raw<{ rows: SeriesRow[] }>(EPISODE_SERIES_SQL, seriesBindings([episodeId])),
    async () => await trx.raw<{ rows: ChartExtrasRow[] }>(CHART_EXTRAS_SQL, [...settingValueBindings(teamId, deviationGroup.key), episodeId, episodeId, teamId, episodeId, teamId, [...LIVE_STATES]]),
  ]);
  const row = series.rows[0];
  const extras = chart.rows[0];
  // The series carries the episode's team: another team's episode (or none) is not found.
  if (!row || !extras || row.team_id !== teamId) throw notFound("That episode");
  const data = seriesFromRow(row);
  const settings: DeviationSettings = groupValues(deviationGroup, extras.settings ?? null);
  const base = trendFromSeries(data, settings, now);
  const at = (d: Date) => ({ day: round2(daysBetween(data.origin, d)), at: iso(d) });
  const events: TrendEvent[] = [];
  for (const p of extras.procedures) {
    const e = PROCEDURE_EVENTS[p.kind] ?? { kind: "procedure" as const, label: "Procedure" };
    events.push({ kind: e.kind, label: p.volume ? `${e.label} (${p.volume} mL)` : e.label, ...at(new Date(p.at)) });
  }
  for (const d of extras.drains) {
    events.push({ kind: "drain-in", label: `Drain in (${d.fr} Fr)`, ...at(new Date(d.in)) });
    if (d.out !== null) events.push({ kind: "drain-out", label: "Drain out", ...at(new Date(d.out)) });
  }
  for (const o of data.oxygen) {
    events.push({ kind: "oxygen-on", label: "Oxygen on", ...at(o.startedAt) });
    if (o.endedAt) events.push({ kind: "oxygen-off", label: "Oxygen off", ...at(o.endedAt) });
  }
  events.sort((a, b) => a.day - b.day);
  return {
    ...base,
    events,
    flags: extras.flags.map((f) => ({ id: f.id, rule: f.rule, state: f.state, filmId: f.film, reason: f.reason, raisedAt: iso(new Date(f.at)) })),
  };
}

/** Sparklines for several episodes of one team at once (one load for a page of the board). */
export async function sparklinesFor(trx: Trx, teamId: string, episodeIds: readonly string[], now: Date): Promise<Map<string, Sparkline | null>> {
  const settings = await readDeviationSettings(trx, teamId);
  const seriesMap = await loadEpisodeSeries(trx, episodeIds);
  const out = new Map<string, Sparkline | null>();
  for (const [id, data] of seriesMap) if (data.teamId === teamId) out.set(id, sparklineFromSeries(data, settings, now));
  return out;
}
