// An episode's films as a series for the deviation rules and the resorption chart: one chosen
// measurement per film, days counted from the first film, oxygen periods and the next booked film.
//
// Why Collins is the default primary method (episodes.primary_method defaults to 'collins') on erect PA films:
// Collins' regression was fitted to helical CT volume (Collins CD et al., AJR 1995;165:1127-1130), so it is
// the closest to CT on average; the Light index reads lower than CT volume; and the published resorption
// rate measured on serial films was measured with Collins (Kelly AM et al., Emerg Med J 2006;23:780-782),
// so a chart in Collins % compares like with like. The team can choose Light or Rhea per episode.
import type { FollowUpPlan, OxygenPeriod, SeriesFilm } from "@/measure";
import type { Trx } from "@/db/knex";

export const DAY_MS = 86_400_000;
export type Method = "collins" | "light" | "rhea";

export interface FilmPoint {
  filmId: string;
  takenAt: Date;
  dayIndex: number;
  projection: string | null;
  position: string | null;
  measurementId: string | null;
  signedOff: boolean;
  light: number | null;
  rhea: number | null;
  collins: number | null;
  hilumCm: number | null;
  apexCm: number | null;
}

export interface EpisodeSeriesData {
  episodeId: string;
  teamId: string;
  status: "active" | "resolved" | "closed";
  primaryMethod: Method;
  /** Day 0: the first film's time (or the presentation date when there is no film yet). */
  origin: Date;
  films: FilmPoint[];
  oxygen: { startedAt: Date; endedAt: Date | null; startDay: number; endDay: number | null }[];
  nextBooking: { id: string; scheduledAt: Date; dayIndex: number } | null;
}

/**
 * Runs independent queries: side by side on the pool, one after another inside a transaction (a
 * transaction is one connection, and pg wants one query at a time on it).
 */
export async function inTurn<T extends readonly unknown[]>(trx: Trx, thunks: { [K in keyof T]: () => Promise<T[K]> }): Promise<T> {
  if ("isTransaction" in trx && trx.isTransaction) {
    const out: unknown[] = [];
    for (const t of thunks) out.push(await t());
    return out as unknown as T;
  }
  return (await Promise.all(thunks.map((t) => t()))) as unknown as T;
}

export const daysBetween = (from: Date, to: Date): number => (to.getTime() - from.getTime()) / DAY_MS;

/** A stored percent the rules can use: finite and within 0-100, otherwise treated as not measured. */
function pct(v: unknown): number | null {
  const n = typeof v === "string" ? Number(v) : v;
  return typeof n === "number" && Number.isFinite(n) && n >= 0 && n <= 100 ? n : null;
}
function cm(v: unknown): number | null {
  const n = typeof v === "string" ? Number(v) : v;
  return typeof n === "number" && Number.isFinite(n) && n >= 0 ? n : null;
}

/** One episode's row with its films (each with its chosen measurement), oxygen and next booking, as one statement returns it. Times are epoch milliseconds. */
export interface SeriesRow {
  id: string;
  team_id: string;
  status: EpisodeSeriesData["status"];
  primary_method: Method;
  presented_on: string;
  films: {
    id: string;
    at: number;
    projection: string | null;
    position: string | null;
    m: string | null;
    light: number | null;
    rhea: number | null;
    collins: number | null;
    hilum: number | null;
    apex: number | null;
    signed: boolean | null;
  }[];
  oxygen: { s: number; e: number | null }[];
  next_booking: { id: string; s: number } | null;
}

/** SQL text without its comments and indentation (the text travels to the server with every call). */
export function compactSql(sql: string): string {
  return sql.split("\n").map((l) => l.replace(/--.*$/, "").trim()).filter(Boolean).join(" ");
}

// The statement behind loadEpisodeSeries and the chart: one for any number of episodes, instead of
// five. For one episode (the chart) the round trips cost more than the lookups; for hundreds (the
// diary's worklist) PostgreSQL joins films to their chosen measurements by hash. Measured by bench/trend-api.ts and bench/queues.ts.
export const EPISODE_SERIES_SQL = compactSql(`
with chosen as materialized (
  -- the chosen measurement of each film: the signed-off current version if any, else the latest current one
  select distinct on (m.film_id) m.film_id, m.id, m.light_percent, m.rhea_percent, m.collins_percent, m.hilum_cm, m.apex_cm, m.signed_off_at
    from measurements m
   where m.episode_id = any(?::uuid[]) and m.superseded_at is null
   order by m.film_id, (m.signed_off_at is not null) desc, m.signed_off_at desc nulls last, m.created_at desc, m.version desc
), fl as (
  select f.episode_id,
         json_agg(json_build_object(
           'id', f.id, 'at', extract(epoch from coalesce(f.taken_at, f.created_at)) * 1000,
           'projection', f.projection, 'position', f.position,
           'm', m.id, 'light', m.light_percent, 'rhea', m.rhea_percent, 'collins', m.collins_percent,
           'hilum', m.hilum_cm, 'apex', m.apex_cm, 'signed', m.signed_off_at is not null)) as films
    from films f
    left join chosen m on m.film_id = f.id
   where f.episode_id = any(?::uuid[]) and f.deleted_at is null
   group by f.episode_id
), ox as (
  select o.episode_id,
         json_agg(json_build_object('s', extract(epoch from o.started_at) * 1000, 'e', extract(epoch from o.ended_at) * 1000) order by o.started_at) as oxygen
    from oxygen_periods o
   where o.episode_id = any(?::uuid[])
   group by o.episode_id
)
select e.id, e.team_id, e.status, e.primary_method, e.presented_on,
       coalesce(fl.films, '[]'::json) as films, coalesce(ox.oxygen, '[]'::json) as oxygen, nb.next_booking
  from episodes e
  left join fl on fl.episode_id = e.id
  left join ox on ox.episode_id = e.id
  left join lateral (
    -- the next film is due at the earliest booked repeat film, or at a missed one nobody has rebooked
    -- yet (so that a missed film makes the episode overdue)
    select json_build_object('id', b.id, 's', extract(epoch from b.scheduled_at) * 1000) as next_booking
      from bookings b
     where b.episode_id = e.id and b.kind = 'repeat-film'
       and (b.state = 'booked' or (b.state = 'missed' and not exists (
             select 1 from bookings l where l.episode_id = b.episode_id and l.created_at > b.updated_at and l.state in ('booked', 'attended'))))
     order by b.scheduled_at
     limit 1
  ) nb on true
 where e.id = any(?::uuid[])`);

/** The bindings of EPISODE_SERIES_SQL (the ids appear in it four times). */
export const seriesBindings = (ids: readonly string[]): string[][] => [[...ids], [...ids], [...ids], [...ids]];

/** One row of EPISODE_SERIES_SQL as the rules and the chart take it. */
export function seriesFromRow(e: SeriesRow): EpisodeSeriesData {
  const own = e.films
    .map((f) => ({ f, at: new Date(f.at) }))
    .sort((a, b) => a.at.getTime() - b.at.getTime() || (a.f.id < b.f.id ? -1 : 1));
  const origin = own[0]?.at ?? new Date(`${e.presented_on}T00:00:00Z`);
  const films: FilmPoint[] = own.map(({ f, at }) => ({
    filmId: f.id,
    takenAt: at,
    dayIndex: daysBetween(origin, at),
    projection: f.projection,
    position: f.position,
    measurementId: f.m,
    signedOff: f.signed === true,
    light: pct(f.light),
    rhea: pct(f.rhea),
    collins: pct(f.collins),
    hilumCm: cm(f.hilum),
    apexCm: cm(f.apex),
  }));
  const next = e.next_booking ? { id: e.next_booking.id, scheduledAt: new Date(e.next_booking.s) } : null;
  return {
    episodeId: e.id,
    teamId: e.team_id,
    status: e.status,
    primaryMethod: e.primary_method,
    origin,
    films,
    oxygen: e.oxygen.map((o) => {
      const startedAt = new Date(o.s);
      const endedAt = o.e === null ? null : new Date(o.e);
      return {
        startedAt,
        endedAt,
        startDay: daysBetween(origin, startedAt),
        endDay: endedAt ? Math.max(daysBetween(origin, endedAt), daysBetween(origin, startedAt)) : null,
      };
    }),
    nextBooking: next ? { ...next, dayIndex: daysBetween(origin, next.scheduledAt) } : null,
  };
}

/**
 * Loads the series of several episodes in one statement. The chosen measurement of a film is its
 * signed-off current version if there is one, else the latest current one (current = not superseded).
 * Withdrawn films (deleted_at) are left out. Does no team check: callers scope the episode ids.
 */
export async function loadEpisodeSeries(trx: Trx, episodeIds: readonly string[]): Promise<Map<string, EpisodeSeriesData>> {
  const out = new Map<string, EpisodeSeriesData>();
  if (episodeIds.length === 0) return out;
  const ids = [...new Set(episodeIds)];
  const { rows } = await trx.raw<{ rows: SeriesRow[] }>(EPISODE_SERIES_SQL, seriesBindings(ids));
  for (const e of rows) out.set(e.id, seriesFromRow(e));
  return out;
}

/** The percent the team follows for a film: the episode's primary method. */
export function percentOf(p: FilmPoint, method: Method): number | null {
  return method === "light" ? p.light : method === "rhea" ? p.rhea : p.collins;
}

/** The series as measure/'s deviation rules take it. */
export function toSeries(data: EpisodeSeriesData): SeriesFilm[] {
  return data.films.map((p) => ({
    filmId: p.filmId,
    dayIndex: p.dayIndex,
    percent: percentOf(p, data.primaryMethod),
    methodPercents: { light: p.light, rhea: p.rhea, collins: p.collins },
    projection: p.projection,
    position: p.position,
    hilumCm: p.hilumCm,
    apexCm: p.apexCm,
  }));
}

export function oxygenPeriodsOf(data: EpisodeSeriesData): OxygenPeriod[] {
  return data.oxygen.map((o) => ({ startDay: o.startDay, endDay: o.endDay }));
}

/** The follow-up plan at `now`: next film due from the next booked repeat film; resolved unless the episode is active. */
export function toPlan(data: EpisodeSeriesData, now: Date): FollowUpPlan {
  return {
    now: daysBetween(data.origin, now),
    nextFilmDueDay: data.nextBooking?.dayIndex ?? null,
    oxygenPeriods: oxygenPeriodsOf(data),
    resolved: data.status !== "active",
  };
}
