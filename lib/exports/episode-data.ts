// Everything the episode's outputs (letter, FHIR bundle) need, read once within the caller's team.
import "server-only";
import type { Trx } from "@/db/knex";
import { getEpisode, listOxygenPeriods, listProcedures, type EpisodeRow, type OxygenPeriodRow, type ProcedureRow } from "@/db/episodes";
import { getPatient, type PatientRow } from "@/db/patients";
import { listEpisodeDrains, type DrainWithObservations } from "@/db/drains";
import { getEpisodeTrend, type TrendData } from "@/lib/followup/trend";
import type { FlagPlan } from "@/lib/followup/rules";
import type { CaliperEstimate } from "@/measure";

export interface ExportMeasurement {
  id: string;
  filmId: string;
  chainId: string;
  version: number;
  readerName: string;
  createdAt: Date;
  signedOffAt: Date | null;
  signedOffByName: string | null;
  plane: string;
  calibrationSource: string | null;
  light: number | null;
  rhea: number | null;
  collins: number | null;
  hilumCm: number | null;
  apexCm: number | null;
  aidCm: number | null;
  btsClass: string | null;
  accpClass: string | null;
  film: { takenAt: Date | null; createdAt: Date; projection: string | null; position: string | null };
}

export interface ExportBooking {
  id: string;
  kind: string;
  scheduledAt: Date;
  dueOn: string | null;
  location: string | null;
  state: string;
}

export interface ExportFlag {
  id: string;
  rule: string;
  state: string;
  reason: string;
  raisedAt: Date;
  resolvedAt: Date | null;
  resolvedByName: string | null;
  plan: FlagPlan | null;
}

export interface EpisodeExport {
  hospital: string;
  teamName: string;
  patient: PatientRow;
  episode: EpisodeRow;
  consultantName: string | null;
  registrarName: string | null;
  /** Current versions (one per reader) of the measurements of films not withdrawn, oldest film first. */
  measurements: ExportMeasurement[];
  filmCount: number;
  oxygen: OxygenPeriodRow[];
  procedures: ProcedureRow[];
  drains: DrainWithObservations[];
  bookings: ExportBooking[];
  flags: ExportFlag[];
  /** The resorption chart's data (lib/followup/trend.ts). */
  trend: TrendData;
}

interface MeasurementJoined {
  id: string;
  film_id: string;
  chain_id: string;
  version: number;
  reader_name: string;
  created_at: Date;
  signed_off_at: Date | null;
  signed_off_by_name: string | null;
  plane: string;
  calibration_source: string | null;
  light_percent: number | null;
  rhea_percent: number | null;
  collins_percent: number | null;
  hilum_cm: number | null;
  apex_cm: number | null;
  aid_cm: number | null;
  results: Partial<CaliperEstimate> | null;
  taken_at: Date | null;
  film_created_at: Date;
  projection: string | null;
  position: string | null;
}

const num = (v: unknown): number | null => {
  const n = typeof v === "string" ? Number(v) : v;
  return typeof n === "number" && Number.isFinite(n) ? n : null;
};

export function toExportMeasurement(r: MeasurementJoined): ExportMeasurement {
  return {
    id: r.id,
    filmId: r.film_id,
    chainId: r.chain_id,
    version: r.version,
    readerName: r.reader_name,
    createdAt: r.created_at,
    signedOffAt: r.signed_off_at,
    signedOffByName: r.signed_off_by_name,
    plane: r.plane,
    calibrationSource: r.calibration_source,
    light: num(r.light_percent),
    rhea: num(r.rhea_percent),
    collins: num(r.collins_percent),
    hilumCm: num(r.hilum_cm),
    apexCm: num(r.apex_cm),
    aidCm: num(r.aid_cm),
    btsClass: r.results?.guideline?.bts.size ?? null,
    accpClass: r.results?.guideline?.accp.size ?? null,
    film: { takenAt: r.taken_at, createdAt: r.film_created_at, projection: r.projection, position: r.position },
  };
}

/** Measurements of the team's films with their film and people, for the letter, FHIR and the CSV. */
export function measurementsQuery(trx: Trx, teamId: string) {
  return trx("measurements as m")
    .join("films as f", "f.id", "m.film_id")
    .join("users as r", "r.id", "m.reader_id")
    .leftJoin("users as s", "s.id", "m.signed_off_by")
    .where({ "m.team_id": teamId, "f.team_id": teamId })
    .whereNull("f.deleted_at")
    .select(
      "m.id", "m.film_id", "m.chain_id", "m.version", "r.name as reader_name", "m.created_at", "m.signed_off_at", "s.name as signed_off_by_name",
      "m.plane", "m.calibration_source", "m.light_percent", "m.rhea_percent", "m.collins_percent", "m.hilum_cm", "m.apex_cm", "m.aid_cm",
      "m.results", "f.taken_at", "f.created_at as film_created_at", "f.projection", "f.position",
    );
}

export type { MeasurementJoined };

export async function loadEpisodeExport(trx: Trx, teamId: string, episodeId: string, now: Date): Promise<EpisodeExport> {
  const episode = await getEpisode(trx, teamId, episodeId);
  const [patient, team, people, measurementRows, filmCount, oxygen, procedures, drains, bookings, flags, trend] = await Promise.all([
    getPatient(trx, teamId, episode.patient_id),
    trx("teams").where({ id: teamId }).first<{ name: string; hospital: string }>("name", "hospital"),
    trx("users").whereIn("id", [episode.consultant_id, episode.registrar_id].filter((v): v is string => v !== null)).select<{ id: string; name: string }[]>("id", "name"),
    measurementsQuery(trx, teamId)
      .where("m.episode_id", episodeId)
      .whereNull("m.superseded_at")
      .orderByRaw("coalesce(f.taken_at, f.created_at), f.id, m.created_at") as Promise<MeasurementJoined[]>,
    trx("films").where({ episode_id: episodeId, team_id: teamId }).whereNull("deleted_at").count<{ count: number }[]>({ count: "*" }),
    listOxygenPeriods(trx, episodeId),
    listProcedures(trx, episodeId),
    listEpisodeDrains(trx, teamId, episodeId),
    trx("bookings")
      .where({ episode_id: episodeId, team_id: teamId })
      .orderBy("scheduled_at")
      .select<{ id: string; kind: string; scheduled_at: Date; due_on: string | null; location: string | null; state: string }[]>("id", "kind", "scheduled_at", "due_on", "location", "state"),
    trx("flags as fl")
      .leftJoin("users as u", "u.id", "fl.resolved_by")
      .where({ "fl.episode_id": episodeId, "fl.team_id": teamId })
      .whereNot("fl.state", "superseded")
      .orderBy("fl.raised_at")
      .select<{ id: string; rule: string; state: string; reason: string; raised_at: Date; resolved_at: Date | null; resolved_by_name: string | null; plan: FlagPlan | null }[]>(
        "fl.id", "fl.rule", "fl.state", "fl.reason", "fl.raised_at", "fl.resolved_at", "u.name as resolved_by_name", "fl.plan",
      ),
    getEpisodeTrend(trx, teamId, episodeId, now),
  ]);
  const nameOf = (id: string | null) => (id ? (people.find((p) => p.id === id)?.name ?? null) : null);
  return {
    hospital: team?.hospital ?? "",
    teamName: team?.name ?? "",
    patient,
    episode,
    consultantName: nameOf(episode.consultant_id),
    registrarName: nameOf(episode.registrar_id),
    measurements: measurementRows.map(toExportMeasurement),
    filmCount: Number(filmCount[0]?.count ?? 0),
    oxygen,
    procedures,
    drains,
    bookings: bookings.map((b) => ({ id: b.id, kind: b.kind, scheduledAt: b.scheduled_at, dueOn: b.due_on, location: b.location, state: b.state })),
    flags: flags.map((f) => ({ id: f.id, rule: f.rule, state: f.state, reason: f.reason, raisedAt: f.raised_at, resolvedAt: f.resolved_at, resolvedByName: f.resolved_by_name, plan: f.plan })),
    trend,
  };
}
