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

interface EpisodeFacts { id: string; team_id: string; status: EpisodeSeriesData["status"]; primary_method: Method; presented_on: string }
interface FilmFacts { id: string; episode_id: string; taken_at: Date | null; created_at: Date; projection: string | null; position: string | null }
interface MeasurementFacts {
  id: string;
  film_id: string;
  light_percent: number | null;
  rhea_percent: number | null;
  collins_percent: number | null;
  hilum_cm: number | null;
  apex_cm: number | null;
  signed_off_at: Date | null;
}
interface OxygenFacts { episode_id: string; started_at: Date; ended_at: Date | null }
interface BookingFacts { id: string; episode_id: string; scheduled_at: Date }

/**
 * Loads the series of several episodes in five queries. The chosen measurement of a film is its
 * signed-off current version if there is one, else the latest current one (current = not superseded).
 * Withdrawn films (deleted_at) are left out. Does no team check: callers scope the episode ids.
 */
export async function loadEpisodeSeries(trx: Trx, episodeIds: readonly string[]): Promise<Map<string, EpisodeSeriesData>> {
  const out = new Map<string, EpisodeSeriesData>();
  if (episodeIds.length === 0) return out;
  const ids = [...new Set(episodeIds)];
  const [episodes, films, measurements, oxygen, bookings] = await inTurn<[EpisodeFacts[], FilmFacts[], MeasurementFacts[], OxygenFacts[], BookingFacts[]]>(trx, [
    () => trx("episodes").whereIn("id", ids).select("id", "team_id", "status", "primary_method", "presented_on") as Promise<EpisodeFacts[]>,
    () => trx("films")
      .whereIn("episode_id", ids)
      .whereNull("deleted_at")
      .select("id", "episode_id", "taken_at", "created_at", "projection", "position") as Promise<FilmFacts[]>,
    () => trx
      .select("id", "film_id", "light_percent", "rhea_percent", "collins_percent", "hilum_cm", "apex_cm", "signed_off_at")
      .from(
        trx("measurements")
          .distinctOn("film_id")
          .whereIn("episode_id", ids)
          .whereNull("superseded_at")
          .select("id", "film_id", "light_percent", "rhea_percent", "collins_percent", "hilum_cm", "apex_cm", "signed_off_at")
          .orderBy("film_id")
          .orderByRaw("(signed_off_at is not null) desc, signed_off_at desc nulls last, created_at desc, version desc")
          .as("m"),
      ),
    () => trx("oxygen_periods").whereIn("episode_id", ids).select("episode_id", "started_at", "ended_at").orderBy("started_at") as Promise<OxygenFacts[]>,
    // The next film is due at the earliest booked repeat film, or at a missed one nobody has rebooked yet
    // (so that a missed film makes the episode overdue).
    () => trx("bookings as b")
      .whereIn("b.episode_id", ids)
      .where("b.kind", "repeat-film")
      .whereRaw(
        "(b.state = 'booked' or (b.state = 'missed' and not exists (select 1 from bookings l where l.episode_id = b.episode_id and l.created_at > b.updated_at and l.state in ('booked', 'attended'))))",
      )
      .select("b.id", "b.episode_id", "b.scheduled_at")
      .orderBy("b.scheduled_at") as Promise<BookingFacts[]>,
  ]);
  const byFilm = new Map(measurements.map((m) => [m.film_id, m]));
  // Grouped once (a worklist holds hundreds of episodes and thousands of films; filtering the whole
  // list for each episode was most of its time).
  const group = <T extends { episode_id: string }>(rows: readonly T[]) => {
    const m = new Map<string, T[]>();
    for (const r of rows) {
      const list = m.get(r.episode_id);
      if (list) list.push(r);
      else m.set(r.episode_id, [r]);
    }
    return m;
  };
  const filmsOf = group(films);
  const oxygenOf = group(oxygen);
  const bookingsOf = group(bookings); // in scheduled_at order, as queried
  for (const e of episodes) {
    const own = (filmsOf.get(e.id) ?? [])
      .map((f) => ({ f, at: f.taken_at ?? f.created_at }))
      .sort((a, b) => a.at.getTime() - b.at.getTime() || (a.f.id < b.f.id ? -1 : 1));
    const origin = own[0]?.at ?? new Date(`${e.presented_on}T00:00:00Z`);
    const points: FilmPoint[] = own.map(({ f, at }) => {
      const m = byFilm.get(f.id);
      return {
        filmId: f.id,
        takenAt: at,
        dayIndex: daysBetween(origin, at),
        projection: f.projection,
        position: f.position,
        measurementId: m?.id ?? null,
        signedOff: !!m?.signed_off_at,
        light: pct(m?.light_percent),
        rhea: pct(m?.rhea_percent),
        collins: pct(m?.collins_percent),
        hilumCm: cm(m?.hilum_cm),
        apexCm: cm(m?.apex_cm),
      };
    });
    const next = bookingsOf.get(e.id)?.[0];
    out.set(e.id, {
      episodeId: e.id,
      teamId: e.team_id,
      status: e.status,
      primaryMethod: e.primary_method,
      origin,
      films: points,
      oxygen: (oxygenOf.get(e.id) ?? []).map((o) => ({
        startedAt: o.started_at,
        endedAt: o.ended_at,
        startDay: daysBetween(origin, o.started_at),
        endDay: o.ended_at ? Math.max(daysBetween(origin, o.ended_at), daysBetween(origin, o.started_at)) : null,
      })),
      nextBooking: next ? { id: next.id, scheduledAt: next.scheduled_at, dayIndex: daysBetween(origin, next.scheduled_at) } : null,
    });
  }
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
