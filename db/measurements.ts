// Measurements of films with the caliper set: versioned per reader (a chain), computed on the
// server with measure/, signed off by consultants. Always within the caller's team; every change
// writes an audit row in the same transaction.
import "server-only";
import { randomUUID } from "node:crypto";
import { estimateFromCalipers, type CaliperEstimate, type CaliperSet, type Plane } from "@/measure";
import { AppError, notFound } from "@/lib/errors";
import { effectiveCalibration } from "@/lib/film-view";
import {
  calipersOutsideFilm,
  toCaliperSet,
  type EstimateSettings,
  type MeasurementCreate,
  type MeasurementUpdate,
  type MeasurementView,
  type ReaderChain,
} from "@/lib/validation/measurements";
import { readDeviationSettings } from "@/lib/settings-registry";
import { writeAudit } from "./audit";
import { getFilm, type FilmRecord } from "./films";
import type { Trx } from "./knex";
import type { Actor } from "./types";

export interface MeasurementRow {
  id: string;
  film_id: string;
  episode_id: string;
  team_id: string;
  chain_id: string;
  version: number;
  reader_id: string;
  calipers: CaliperSet;
  plane: "film" | "patient" | "none";
  calibration_source: string | null;
  results: CaliperEstimate;
  light_percent: number | null;
  rhea_percent: number | null;
  collins_percent: number | null;
  hilum_cm: number | null;
  apex_cm: number | null;
  aid_cm: number | null;
  reason: string | null;
  created_by: string;
  created_at: Date;
  signed_off_by: string | null;
  signed_off_at: Date | null;
  superseded_at: Date | null;
}

const COLUMNS = [
  "m.id", "m.film_id", "m.episode_id", "m.team_id", "m.chain_id", "m.version", "m.reader_id", "m.calipers", "m.plane",
  "m.calibration_source", "m.results", "m.light_percent", "m.rhea_percent", "m.collins_percent", "m.hilum_cm", "m.apex_cm",
  "m.aid_cm", "m.reason", "m.created_by", "m.created_at", "m.signed_off_by", "m.signed_off_at", "m.superseded_at",
] as const;

type JoinedRow = MeasurementRow & { reader_name: string; created_by_name: string; signed_off_by_name: string | null };

/** The film facts a measurement needs: its size, calibration, projection and position. */
type FilmForMeasure = Pick<FilmRecord, "id" | "episode_id" | "rows" | "columns" | "projection" | "position" | "calibration" | "calibration_override" | "deleted_at">;

const filmForMeasure = (trx: Trx, teamId: string, filmId: string): Promise<FilmForMeasure> => getFilm(trx, teamId, filmId);

function baseQuery(trx: Trx, teamId: string) {
  return trx("measurements as m")
    .join("users as r", "r.id", "m.reader_id")
    .join("users as c", "c.id", "m.created_by")
    .leftJoin("users as s", "s.id", "m.signed_off_by")
    .where("m.team_id", teamId)
    .select(...COLUMNS, "r.name as reader_name", "c.name as created_by_name", "s.name as signed_off_by_name");
}

const iso = (d: Date | null): string | null => (d ? new Date(d).toISOString() : null);

export function toView(row: JoinedRow): MeasurementView {
  return {
    id: row.id,
    filmId: row.film_id,
    episodeId: row.episode_id,
    chainId: row.chain_id,
    version: row.version,
    current: row.superseded_at === null,
    reader: { id: row.reader_id, name: row.reader_name },
    createdBy: { id: row.created_by, name: row.created_by_name },
    createdAt: new Date(row.created_at).toISOString(),
    calipers: row.calipers,
    plane: row.plane,
    calibrationSource: row.calibration_source,
    results: row.results,
    figures: {
      lightPercent: row.light_percent,
      rheaPercent: row.rhea_percent,
      collinsPercent: row.collins_percent,
      aidCm: row.aid_cm,
      apexCm: row.apex_cm,
      hilumCm: row.hilum_cm,
    },
    reason: row.reason,
    signedOff: row.signed_off_at && row.signed_off_by ? { by: { id: row.signed_off_by, name: row.signed_off_by_name ?? "" }, at: new Date(row.signed_off_at).toISOString() } : null,
    supersededAt: iso(row.superseded_at),
  };
}

/** One version, by id (404 when missing or of another team). */
export async function getMeasurement(trx: Trx, teamId: string, id: string): Promise<MeasurementView> {
  const row = (await baseQuery(trx, teamId).where("m.id", id).first()) as JoinedRow | undefined;
  if (!row) throw notFound("That measurement");
  return toView(row);
}

/** Every version of every reader's measurement of a film, oldest first within each chain. */
export async function listFilmMeasurements(trx: Trx, teamId: string, filmId: string): Promise<{ versions: MeasurementView[]; readers: ReaderChain[] }> {
  await filmForMeasure(trx, teamId, filmId);
  const rows = (await baseQuery(trx, teamId).where("m.film_id", filmId).orderBy([{ column: "m.created_at" }, { column: "m.version" }])) as JoinedRow[];
  const versions = rows.map(toView);
  const readers: ReaderChain[] = [];
  for (const v of versions) {
    if (!v.current) continue;
    readers.push({ chainId: v.chainId, reader: v.reader, current: v, versions: versions.filter((x) => x.chainId === v.chainId).length });
  }
  return { versions, readers };
}

/**
 * Runs measure/ on the calipers with the film's calibration (a reference line wins over DICOM), its
 * projection and position. The same function the film desk calls in the browser, so live and saved
 * figures agree; the saved ones are these.
 */
export function computeEstimate(
  film: Pick<FilmForMeasure, "calibration" | "calibration_override" | "projection" | "position">,
  calipers: CaliperSet,
  plane: Plane,
  settings: EstimateSettings,
): CaliperEstimate {
  const calibration = effectiveCalibration(film.calibration, film.calibration_override);
  return estimateFromCalipers(calipers, { film: calibration.film, patient: calibration.patient, correctionUnknown: calibration.correctionUnknown, notes: calibration.notes }, {
    plane,
    projection: film.projection,
    position: film.position,
    disagreementPoints: settings.disagreementPoints,
    largeBtsHilumCm: settings.largeBtsHilumCm,
    largeAccpApexCm: settings.largeAccpApexCm,
  });
}

/** The thresholds in force (admin settings over the published defaults), for the server and the film desk alike. */
export async function estimateSettings(trx: Trx, teamId: string): Promise<EstimateSettings> {
  const s = await readDeviationSettings(trx, teamId);
  return { disagreementPoints: s.disagreementPoints, largeBtsHilumCm: s.largeBtsHilumCm, largeAccpApexCm: s.largeAccpApexCm };
}

/** The denormalised columns, from the estimate. */
function figureColumns(est: CaliperEstimate) {
  const mmToCm = (mm: number | null) => (mm === null ? null : mm / 10);
  return {
    plane: est.calibrationSource === null ? ("none" as const) : est.plane,
    calibration_source: est.calibrationSource,
    results: JSON.stringify(est),
    light_percent: est.light.status === "ok" ? est.light.percent : null,
    rhea_percent: est.rhea.status === "ok" ? est.rhea.percent : null,
    collins_percent: est.collins.status === "ok" ? est.collins.percent : null,
    hilum_cm: mmToCm(est.lengths.hilum.mm),
    apex_cm: mmToCm(est.lengths.apex.mm),
    aid_cm: est.aidCm,
  };
}

function checkOnFilm(film: FilmForMeasure, calipers: CaliperSet) {
  const fields = calipersOutsideFilm(calipers, film.columns, film.rows);
  const first = Object.values(fields)[0];
  if (first) throw new AppError("invalid", first, { fields });
}

/** Audit snapshot: geometry and figures, without the bulky results. */
function auditShape(v: Pick<MeasurementView, "id" | "chainId" | "version" | "calipers" | "plane" | "figures" | "reason">) {
  return { id: v.id, chainId: v.chainId, version: v.version, calipers: v.calipers, plane: v.plane, figures: v.figures, reason: v.reason };
}

function isUniqueViolation(err: unknown): boolean {
  return typeof err === "object" && err !== null && (err as { code?: unknown }).code === "23505";
}

/** Called after a change with the episode id; the follow-up engine re-evaluates flags in the same transaction. */
export type AfterChange = (trx: Trx, episodeId: string) => Promise<void>;

/** A reader's first measurement of a film: version 1 of a new chain. One chain per reader and film. */
export async function createMeasurement(trx: Trx, actor: Actor, filmId: string, input: MeasurementCreate, afterChange?: AfterChange): Promise<MeasurementView> {
  const film = await filmForMeasure(trx, actor.teamId, filmId);
  if (film.deleted_at) throw new AppError("conflict", "This film was withdrawn; it can no longer be measured.");
  const existing: { id: string; version: number } | undefined = await trx("measurements")
    .where({ film_id: filmId, reader_id: actor.id })
    .whereNull("superseded_at")
    .first("id", "version");
  if (existing) {
    throw new AppError("conflict", `You have already measured this film (version ${existing.version}); save your changes as a new version of that measurement.`, {
      details: { measurementId: existing.id, version: existing.version },
    });
  }
  const calipers = toCaliperSet(input.calipers);
  checkOnFilm(film, calipers);
  const est = computeEstimate(film, calipers, input.plane, await estimateSettings(trx, actor.teamId));
  const id = randomUUID();
  try {
    await trx("measurements").insert({
      id,
      film_id: film.id,
      episode_id: film.episode_id,
      team_id: actor.teamId,
      chain_id: randomUUID(),
      version: 1,
      reader_id: actor.id,
      calipers: JSON.stringify(calipers),
      ...figureColumns(est),
      reason: null,
      created_by: actor.id,
    });
  } catch (err) {
    if (isUniqueViolation(err)) throw new AppError("conflict", "You already saved a measurement of this film a moment ago; reload to see it.");
    throw err;
  }
  const view = await getMeasurement(trx, actor.teamId, id);
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "measurement.create", entity: "measurement", entityId: id, after: auditShape(view) });
  if (afterChange) await afterChange(trx, film.episode_id);
  return view;
}

function staleConflict(current: { id: string; version: number; created_by_name: string; created_at: Date } | undefined): AppError {
  if (!current) return new AppError("conflict", "Someone saved this measurement at the same moment. Your calipers are kept; reload the saved version to compare.");
  return new AppError(
    "conflict",
    `Version ${current.version} of this measurement was saved by ${current.created_by_name} at ${new Date(current.created_at).toISOString().slice(11, 16)} UTC while you were working. Your calipers are kept; load that version, or save yours on top of it.`,
    { details: { currentId: current.id, currentVersion: current.version, savedBy: current.created_by_name, savedAt: new Date(current.created_at).toISOString() } },
  );
}

/**
 * The next version of a chain. The caller says which version they started from; if the chain has
 * moved on since, nothing is written and the answer is 409. A signed-off version is never changed in
 * place: the new version needs a reason.
 */
export async function updateMeasurement(trx: Trx, actor: Actor, id: string, input: MeasurementUpdate, afterChange?: AfterChange): Promise<MeasurementView> {
  const target = await getMeasurement(trx, actor.teamId, id);
  if (target.reader.id !== actor.id) {
    throw new AppError("forbidden", `This is ${target.reader.name}'s reading of the film. Measure the film yourself to add your own reading beside it.`);
  }
  // Lock the chain's current version: a second save based on the same version waits here, then finds it superseded.
  const current: { id: string; version: number; signed_off_at: Date | null; signed_off_by: string | null; created_at: Date; created_by_name: string } | undefined =
    await trx("measurements as m")
      .join("users as c", "c.id", "m.created_by")
      .where({ "m.chain_id": target.chainId, "m.team_id": actor.teamId })
      .whereNull("m.superseded_at")
      .forUpdate("m")
      .first("m.id", "m.version", "m.signed_off_at", "m.signed_off_by", "m.created_at", "c.name as created_by_name");
  if (!current || current.version !== input.basedOnVersion) throw staleConflict(current);
  if (current.signed_off_at && !input.reason) {
    throw new AppError("invalid", `Version ${current.version} was signed off; say why you are changing it.`, {
      fields: { reason: "A signed-off measurement changes only with a reason" },
    });
  }
  const film = await filmForMeasure(trx, actor.teamId, target.filmId);
  if (film.deleted_at) throw new AppError("conflict", "This film was withdrawn; its measurements can no longer change.");
  const calipers = toCaliperSet(input.calipers);
  checkOnFilm(film, calipers);
  const est = computeEstimate(film, calipers, input.plane, await estimateSettings(trx, actor.teamId));

  const superseded = await trx("measurements").where({ id: current.id }).whereNull("superseded_at").update({ superseded_at: trx.fn.now() });
  if (superseded !== 1) throw staleConflict(undefined);
  const newId = randomUUID();
  try {
    await trx("measurements").insert({
      id: newId,
      film_id: film.id,
      episode_id: film.episode_id,
      team_id: actor.teamId,
      chain_id: target.chainId,
      version: current.version + 1,
      reader_id: target.reader.id,
      calipers: JSON.stringify(calipers),
      ...figureColumns(est),
      reason: input.reason ?? null,
      created_by: actor.id,
    });
  } catch (err) {
    if (isUniqueViolation(err)) throw staleConflict(undefined);
    throw err;
  }
  const before = await getMeasurement(trx, actor.teamId, current.id);
  const view = await getMeasurement(trx, actor.teamId, newId);
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "measurement.version", entity: "measurement", entityId: newId, before: auditShape(before), after: auditShape(view) });
  if (afterChange) await afterChange(trx, film.episode_id);
  return view;
}

/** A consultant signs off the current version of a chain; the version is locked from then on. */
export async function signOffMeasurement(trx: Trx, actor: Actor, id: string, afterChange?: AfterChange): Promise<MeasurementView> {
  const m = await getMeasurement(trx, actor.teamId, id);
  if (!m.current) throw new AppError("conflict", `A newer version of this measurement exists; sign off the current one instead.`);
  if (m.signedOff) throw new AppError("conflict", `${m.signedOff.by.name} already signed off version ${m.version}.`);
  const updated = await trx("measurements")
    .where({ id, team_id: actor.teamId })
    .whereNull("superseded_at")
    .whereNull("signed_off_at")
    .update({ signed_off_by: actor.id, signed_off_at: trx.fn.now() });
  if (updated !== 1) throw new AppError("conflict", "This measurement changed while you were signing it off. Reload and look again.");
  const view = await getMeasurement(trx, actor.teamId, id);
  await writeAudit(trx, {
    actorId: actor.id,
    teamId: actor.teamId,
    action: "measurement.signoff",
    entity: "measurement",
    entityId: id,
    before: { signedOff: null },
    after: { ...auditShape(view), signedOff: view.signedOff },
  });
  if (afterChange) await afterChange(trx, m.episodeId);
  return view;
}
