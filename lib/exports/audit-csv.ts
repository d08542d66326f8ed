// The team's episodes and measurements as CSV for clinical audit: identifiers, coded fields and
// figures only. Free-text fields (notes, underlying disease, procedure, reasons, drain sites) are left
// out on purpose: they can carry anything, and an audit file travels.
import "server-only";
import type { Knex } from "knex";
import { z } from "zod";
import type { Trx } from "@/db/knex";
import { ageOn } from "@/lib/format";
import { isoDate, uuid } from "@/lib/validation/common";
import { EPISODE_STATUSES } from "@/lib/validation/episodes";
import { loadEpisodeSeries, percentOf } from "@/lib/followup/series";
import { measurementsQuery, toExportMeasurement, type MeasurementJoined } from "./episode-data";
import { round, toCsv } from "./csv";

export const exportFilter = z
  .object({
    from: isoDate.optional(),
    to: isoDate.optional(),
    status: z.enum(EPISODE_STATUSES, { message: "Use active, resolved or closed" }).optional(),
    episodeId: uuid.optional(),
  })
  .refine((v) => !v.from || !v.to || v.from <= v.to, { path: ["to"], message: "The end date is before the start date" });
export type ExportFilter = z.output<typeof exportFilter>;

/** Most episodes one file carries; a larger audit is cut into date ranges. */
export const MAX_EXPORT_EPISODES = 20_000;

interface EpisodeAuditRow {
  id: string;
  hospital_number: string;
  date_of_birth: string;
  sex: string;
  side: string;
  aetiology: string;
  management: string;
  status: string;
  primary_method: "collins" | "light" | "rhea";
  follow_up_protocol: string | null;
  onset_on: string | null;
  presented_on: string;
  discharged_on: string | null;
  resolved_on: string | null;
  consultant: string | null;
  registrar: string | null;
  created_at: Date;
}

function episodesBase(trx: Trx, teamId: string, f: ExportFilter) {
  return trx("episodes as e")
    .join("patients as p", "p.id", "e.patient_id")
    .where({ "e.team_id": teamId, "p.team_id": teamId })
    .modify((q) => {
      if (f.from) q.where("e.presented_on", ">=", f.from);
      if (f.to) q.where("e.presented_on", "<=", f.to);
      if (f.status) q.where("e.status", f.status);
      if (f.episodeId) q.where("e.id", f.episodeId);
    });
}

async function countsBy(trx: Trx, table: string, ids: string[], extra?: (q: Knex.QueryBuilder) => void): Promise<Map<string, number>> {
  if (ids.length === 0) return new Map();
  const rows = await trx(table)
    .whereIn("episode_id", ids)
    .modify((q: Knex.QueryBuilder) => extra?.(q))
    .groupBy("episode_id")
    .select("episode_id")
    .count<{ episode_id: string; count: number }[]>({ count: "*" });
  return new Map(rows.map((r) => [r.episode_id, Number(r.count)]));
}

export async function episodesCsv(trx: Trx, teamId: string, f: ExportFilter): Promise<string> {
  const rows = (await episodesBase(trx, teamId, f)
    .leftJoin("users as c", "c.id", "e.consultant_id")
    .leftJoin("users as r", "r.id", "e.registrar_id")
    .select(
      "e.id", "p.hospital_number", "p.date_of_birth", "p.sex", "e.side", "e.aetiology", "e.management", "e.status", "e.primary_method",
      "e.follow_up_protocol", "e.onset_on", "e.presented_on", "e.discharged_on", "e.resolved_on", "c.name as consultant", "r.name as registrar", "e.created_at",
    )
    .orderBy([{ column: "e.presented_on" }, { column: "p.hospital_number" }, { column: "e.id" }])
    .limit(MAX_EXPORT_EPISODES)) as EpisodeAuditRow[];
  const ids = rows.map((r) => r.id);
  const [series, drains, flagsRaised, flagsLive, leakFlags, attended, missed] = await Promise.all([
    loadEpisodeSeries(trx, ids),
    countsBy(trx, "drains", ids),
    countsBy(trx, "flags", ids, (q) => { q.whereNot("state", "superseded"); }),
    countsBy(trx, "flags", ids, (q) => { q.whereIn("state", ["open", "acknowledged"]); }),
    countsBy(trx, "flags", ids, (q) => { q.where("rule", "persistent-air-leak").whereNot("state", "superseded"); }),
    countsBy(trx, "bookings", ids, (q) => { q.where("state", "attended"); }),
    countsBy(trx, "bookings", ids, (q) => { q.where("state", "missed"); }),
  ]);
  const enriched = rows.map((r) => {
    const s = series.get(r.id);
    const measured = (s?.films ?? []).filter((p) => percentOf(p, r.primary_method) !== null);
    const first = measured[0];
    const latest = measured[measured.length - 1];
    return { r, films: s?.films.length ?? 0, measured: measured.length, first, latest, method: r.primary_method };
  });
  type E = (typeof enriched)[number];
  return toCsv<E>(
    [
      { header: "episode_id", value: (e) => e.r.id },
      { header: "hospital_number", value: (e) => e.r.hospital_number },
      { header: "sex", value: (e) => e.r.sex },
      { header: "age_at_presentation", value: (e) => ageOn(e.r.date_of_birth, new Date(`${e.r.presented_on}T00:00:00Z`)) },
      { header: "side", value: (e) => e.r.side },
      { header: "aetiology", value: (e) => e.r.aetiology },
      { header: "management", value: (e) => e.r.management },
      { header: "status", value: (e) => e.r.status },
      { header: "onset_on", value: (e) => e.r.onset_on },
      { header: "presented_on", value: (e) => e.r.presented_on },
      { header: "discharged_on", value: (e) => e.r.discharged_on },
      { header: "resolved_on", value: (e) => e.r.resolved_on },
      { header: "follow_up_protocol", value: (e) => e.r.follow_up_protocol },
      { header: "consultant", value: (e) => e.r.consultant },
      { header: "registrar", value: (e) => e.r.registrar },
      { header: "primary_method", value: (e) => e.method },
      { header: "films", value: (e) => e.films },
      { header: "measured_films", value: (e) => e.measured },
      { header: "first_measured_film_at", value: (e) => e.first?.takenAt ?? null },
      { header: "first_percent", value: (e) => (e.first ? round(percentOf(e.first, e.method), 1) : null) },
      { header: "latest_measured_film_at", value: (e) => e.latest?.takenAt ?? null },
      { header: "latest_percent", value: (e) => (e.latest ? round(percentOf(e.latest, e.method), 1) : null) },
      { header: "drains", value: (e) => drains.get(e.r.id) ?? 0 },
      { header: "persistent_air_leak", value: (e) => (leakFlags.get(e.r.id) ?? 0) > 0 },
      { header: "flags_raised", value: (e) => flagsRaised.get(e.r.id) ?? 0 },
      { header: "flags_open", value: (e) => flagsLive.get(e.r.id) ?? 0 },
      { header: "bookings_attended", value: (e) => attended.get(e.r.id) ?? 0 },
      { header: "bookings_missed", value: (e) => missed.get(e.r.id) ?? 0 },
    ],
    enriched,
  );
}

/** Every version of every measurement of the team's films (withdrawn films left out), with `current`. */
export async function measurementsCsv(trx: Trx, teamId: string, f: ExportFilter): Promise<string> {
  const episodes = episodesBase(trx, teamId, f).select("e.id");
  const rows = (await measurementsQuery(trx, teamId)
    .join("episodes as e", "e.id", "m.episode_id")
    .join("patients as p", "p.id", "e.patient_id")
    .whereIn("m.episode_id", episodes)
    .select("m.episode_id", "p.hospital_number", "m.superseded_at")
    .orderByRaw("e.presented_on, p.hospital_number, coalesce(f.taken_at, f.created_at), m.chain_id, m.version")
    .limit(MAX_EXPORT_EPISODES * 20)) as (MeasurementJoined & { episode_id: string; hospital_number: string; superseded_at: Date | null })[];
  const items = rows.map((r) => ({ m: toExportMeasurement(r), episodeId: r.episode_id, hn: r.hospital_number, current: r.superseded_at === null }));
  type I = (typeof items)[number];
  return toCsv<I>(
    [
      { header: "measurement_id", value: (i) => i.m.id },
      { header: "chain_id", value: (i) => i.m.chainId },
      { header: "version", value: (i) => i.m.version },
      { header: "current", value: (i) => i.current },
      { header: "episode_id", value: (i) => i.episodeId },
      { header: "hospital_number", value: (i) => i.hn },
      { header: "film_id", value: (i) => i.m.filmId },
      { header: "film_taken_at", value: (i) => i.m.film.takenAt },
      { header: "projection", value: (i) => i.m.film.projection },
      { header: "position", value: (i) => i.m.film.position },
      { header: "reader", value: (i) => i.m.readerName },
      { header: "measured_at", value: (i) => i.m.createdAt },
      { header: "plane", value: (i) => i.m.plane },
      { header: "calibration_source", value: (i) => i.m.calibrationSource },
      { header: "light_percent", value: (i) => round(i.m.light, 1) },
      { header: "rhea_percent", value: (i) => round(i.m.rhea, 1) },
      { header: "collins_percent", value: (i) => round(i.m.collins, 1) },
      { header: "aid_cm", value: (i) => round(i.m.aidCm, 2) },
      { header: "hilum_cm", value: (i) => round(i.m.hilumCm, 2) },
      { header: "apex_cm", value: (i) => round(i.m.apexCm, 2) },
      { header: "bts_2010_class", value: (i) => i.m.btsClass },
      { header: "accp_2001_class", value: (i) => i.m.accpClass },
      { header: "signed_off_at", value: (i) => i.m.signedOffAt },
      { header: "signed_off_by", value: (i) => i.m.signedOffByName },
    ],
    items,
  );
}
