// Film records: one row per uploaded chest film, always within the caller's team. The objects
// (original, display image, thumbnail) live in the object store under the keys the row names.
import "server-only";
import type { Knex } from "knex";
import { calibrationFromReferenceLine, MeasureInputError, segmentLengthPx, type FilmCalibration } from "@/measure";
import type { DicomMeta, FilmSpacingAttrs, Rendering } from "@/lib/films";
import { AppError, notFound } from "@/lib/errors";
import { effectiveCalibration, type CalibrationOverride, type FilmView, type TakenAtSource } from "@/lib/film-view";
import type { FilmUpdate, ReferenceLineInput } from "@/lib/validation/films";
import { writeAudit } from "./audit";
import type { Trx } from "./knex";
import type { Actor } from "./types";

/** What Rimwatch keeps from a DICOM header: allow-listed attributes only (no patient identifiers). */
export interface StoredDicom {
  meta: DicomMeta;
  rendering: Rendering;
  warnings: string[];
  /** What the header itself said, so the page knows which values a person may still supply. */
  header: { takenAt: string | null; projection: string | null; position: string | null };
}

export interface FilmRow {
  id: string;
  episode_id: string;
  team_id: string;
  kind: "dicom" | "image";
  original_key: string;
  display_key: string;
  thumb_key: string;
  content_type: string;
  filename: string;
  size_bytes: number;
  sha256: string;
  taken_at: Date | null;
  taken_at_source: TakenAtSource | null;
  projection: string | null;
  position: string | null;
  rows: number;
  columns: number;
  display_width: number;
  display_height: number;
  display_scale: number;
  spacing_attrs: FilmSpacingAttrs | null;
  calibration: FilmCalibration | null;
  calibration_override: CalibrationOverride | null;
  dicom: StoredDicom | null;
  uploaded_by: string | null;
  created_at: Date;
  deleted_at: Date | null;
  deleted_by: string | null;
  delete_reason: string | null;
}

/** A film row with the names and counts the pages show. */
export interface FilmRecord extends FilmRow {
  uploader_name: string | null;
  deleted_by_name: string | null;
  measurement_count: number;
}

export const FILM_COLUMNS = [
  "id", "episode_id", "team_id", "kind", "original_key", "display_key", "thumb_key", "content_type", "filename", "size_bytes",
  "sha256", "taken_at", "taken_at_source", "projection", "position", "rows", "columns", "display_width", "display_height",
  "display_scale", "spacing_attrs", "calibration", "calibration_override", "dicom", "uploaded_by", "created_at", "deleted_at",
  "deleted_by", "delete_reason",
] as const;

function recordQuery(trx: Trx) {
  return trx("films as f")
    .leftJoin("users as u", "u.id", "f.uploaded_by")
    .leftJoin("users as d", "d.id", "f.deleted_by")
    .select(
      ...FILM_COLUMNS.map((c) => `f.${c}`),
      "u.name as uploader_name",
      "d.name as deleted_by_name",
      trx.raw("(select count(*) from measurements m where m.film_id = f.id)::int as measurement_count"),
    );
}

/** One film of the caller's team, withdrawn or not (measurements may refer to a withdrawn film). */
export async function getFilm(trx: Trx, teamId: string, id: string): Promise<FilmRecord> {
  const row = (await recordQuery(trx).where({ "f.id": id, "f.team_id": teamId }).first()) as FilmRecord | undefined;
  if (!row) throw notFound("That film");
  return row;
}

/** An episode's films in the order they were taken (undated last). Withdrawn films only when asked. */
export async function listEpisodeFilms(trx: Trx, teamId: string, episodeId: string, opts: { includeWithdrawn?: boolean } = {}): Promise<FilmRecord[]> {
  const rows: unknown[] = await recordQuery(trx)
    .where({ "f.episode_id": episodeId, "f.team_id": teamId })
    .modify((q) => {
      if (!opts.includeWithdrawn) q.whereNull("f.deleted_at");
    })
    .orderByRaw("f.taken_at asc nulls last, f.created_at asc");
  return rows as FilmRecord[];
}

/** The live film of this episode with these exact bytes, if any. */
export async function findLiveFilmBySha(trx: Trx, episodeId: string, sha256: string): Promise<Pick<FilmRow, "id" | "taken_at" | "created_at" | "filename"> | null> {
  const row = (await trx("films")
    .select("id", "taken_at", "created_at", "filename")
    .where({ episode_id: episodeId, sha256 })
    .whereNull("deleted_at")
    .first()) as Pick<FilmRow, "id" | "taken_at" | "created_at" | "filename"> | undefined;
  return row ?? null;
}

export interface NewFilm {
  id: string;
  episodeId: string;
  kind: "dicom" | "image";
  keys: { original: string; display: string; thumb: string };
  contentType: string;
  filename: string;
  sizeBytes: number;
  sha256: string;
  takenAt: Date;
  takenAtSource: TakenAtSource;
  projection: string | null;
  position: string | null;
  rows: number;
  columns: number;
  display: { width: number; height: number; scale: number };
  spacingAttrs: FilmSpacingAttrs | null;
  calibration: FilmCalibration | null;
  dicom: StoredDicom | null;
}

const json = (v: unknown) => (v === null || v === undefined ? null : JSON.stringify(v));

/** Inserts the film row and its audit row (call inside a transaction). A twin of a live film is a 409. */
export async function insertFilm(trx: Knex.Transaction, actor: Actor, film: NewFilm): Promise<FilmRow> {
  let row: FilmRow | undefined;
  try {
    const inserted: unknown[] = await trx("films")
      .insert({
        id: film.id,
        episode_id: film.episodeId,
        team_id: actor.teamId,
        kind: film.kind,
        original_key: film.keys.original,
        display_key: film.keys.display,
        thumb_key: film.keys.thumb,
        content_type: film.contentType,
        filename: film.filename,
        size_bytes: film.sizeBytes,
        sha256: film.sha256,
        taken_at: film.takenAt,
        taken_at_source: film.takenAtSource,
        projection: film.projection,
        position: film.position,
        rows: film.rows,
        columns: film.columns,
        display_width: film.display.width,
        display_height: film.display.height,
        display_scale: film.display.scale,
        spacing_attrs: json(film.spacingAttrs),
        calibration: json(film.calibration),
        dicom: json(film.dicom),
        uploaded_by: actor.id,
      })
      .returning(FILM_COLUMNS);
    row = inserted[0] as FilmRow | undefined;
  } catch (err) {
    // The partial unique index on (episode_id, sha256) for live films: another upload of the same bytes won the race.
    if ((err as { code?: string; constraint?: string }).code === "23505") {
      throw new AppError("conflict", "This exact file was uploaded to this episode a moment ago; it is stored once.");
    }
    throw err;
  }
  if (!row) throw new Error("film insert returned no row");
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "film.upload", entity: "film", entityId: row.id, after: auditView(row) });
  return row;
}

/** The audit copy of a film row: everything but the bulky DICOM attribute list. */
function auditView(row: FilmRow) {
  const { dicom, ...rest } = row;
  return { ...rest, dicom: dicom ? { transferSyntaxUid: dicom.meta.transferSyntaxUid, header: dicom.header } : null };
}

async function liveFilmForChange(trx: Trx, teamId: string, id: string): Promise<FilmRecord> {
  const film = await getFilm(trx, teamId, id);
  if (film.deleted_at) throw new AppError("conflict", "This film was withdrawn; it can no longer be changed.");
  return film;
}

/** Which of a film's dates and views a person may still set: all for PNG/JPEG, only what the header lacked for DICOM. */
export function editableFields(row: FilmRow): FilmView["editable"] {
  if (row.kind === "image") return { takenAt: true, projection: true, position: true };
  const header = row.dicom?.header;
  return {
    takenAt: row.taken_at_source !== "dicom",
    projection: header ? header.projection === null : row.projection === null,
    position: header ? header.position === null : row.position === null,
  };
}

/** PATCH: corrects the date, projection or position of a film whose file did not say them. */
export async function updateFilmDetails(trx: Knex.Transaction, actor: Actor, id: string, input: FilmUpdate, now: Date): Promise<FilmRecord> {
  const before = await liveFilmForChange(trx, actor.teamId, id);
  const editable = editableFields(before);
  const fields: Record<string, string> = {};
  const header = "Read from the DICOM header; it cannot be changed here";
  if (input.takenAt !== undefined && !editable.takenAt) fields.takenAt = header;
  if (input.projection !== undefined && !editable.projection) fields.projection = header;
  if (input.position !== undefined && !editable.position) fields.position = header;
  // A few minutes' grace for a clock that runs slightly ahead of the server's.
  if (input.takenAt !== undefined && new Date(input.takenAt).getTime() > now.getTime() + 5 * 60_000) fields.takenAt = "The film cannot be taken in the future";
  if (Object.keys(fields).length > 0) throw new AppError("invalid", "Some details cannot be saved.", { fields });

  const patch: Record<string, unknown> = {};
  if (input.takenAt !== undefined) {
    patch.taken_at = new Date(input.takenAt);
    patch.taken_at_source = "entered";
  }
  if (input.projection !== undefined) patch.projection = input.projection;
  if (input.position !== undefined) patch.position = input.position;
  const updated: unknown[] = await trx("films").where({ id, team_id: actor.teamId }).update(patch).returning(FILM_COLUMNS);
  const after = updated[0] as FilmRow | undefined;
  if (!after) throw notFound("That film");
  await writeAudit(trx, {
    actorId: actor.id,
    teamId: actor.teamId,
    action: "film.update",
    entity: "film",
    entityId: id,
    before: { taken_at: before.taken_at, taken_at_source: before.taken_at_source, projection: before.projection, position: before.position },
    after: { taken_at: after.taken_at, taken_at_source: after.taken_at_source, projection: after.projection, position: after.position },
  });
  return getFilm(trx, actor.teamId, id);
}

/**
 * Withdraws a film uploaded in error: the row and its objects stay (measurements and flags may refer
 * to it, and the record must show what was seen); it leaves the episode's list and its charts.
 */
export async function withdrawFilm(trx: Knex.Transaction, actor: Actor, id: string, reason: string): Promise<FilmRecord> {
  const before = await liveFilmForChange(trx, actor.teamId, id);
  await trx("films").where({ id, team_id: actor.teamId }).whereNull("deleted_at").update({ deleted_at: trx.fn.now(), deleted_by: actor.id, delete_reason: reason });
  await writeAudit(trx, {
    actorId: actor.id,
    teamId: actor.teamId,
    action: "film.withdraw",
    entity: "film",
    entityId: id,
    before: { deleted_at: null },
    after: { reason, measurements_kept: before.measurement_count },
  });
  return getFilm(trx, actor.teamId, id);
}

/** Stores a reference-line calibration for the film (replacing an earlier one; the audit keeps both). */
export async function setCalibrationOverride(trx: Knex.Transaction, actor: Actor, id: string, override: CalibrationOverride): Promise<FilmRecord> {
  const before = await liveFilmForChange(trx, actor.teamId, id);
  await trx("films").where({ id, team_id: actor.teamId }).update({ calibration_override: JSON.stringify(override) });
  await writeAudit(trx, {
    actorId: actor.id,
    teamId: actor.teamId,
    action: "film.calibrate",
    entity: "film",
    entityId: id,
    before: { calibration_override: before.calibration_override },
    after: { calibration_override: override },
  });
  return getFilm(trx, actor.teamId, id);
}

/** Shortest reference line accepted, original film pixels: one pixel of error is then at most 5 %. */
export const MIN_REFERENCE_LINE_PX = 20;

/** POST calibration: a line of known length drawn on the film (original pixels) becomes its calibration. */
export async function calibrateByReferenceLine(trx: Knex.Transaction, actor: Actor, id: string, input: ReferenceLineInput, now: Date): Promise<FilmRecord> {
  const film = await liveFilmForChange(trx, actor.teamId, id);
  const { a, b } = input.segment;
  const fields: Record<string, string> = {};
  for (const [name, p] of [["segment.a", a], ["segment.b", b]] as const) {
    if (p.x > film.columns || p.y > film.rows) fields[name] = `Outside the film (${film.columns} x ${film.rows} pixels)`;
  }
  if (Object.keys(fields).length === 0 && segmentLengthPx(input.segment) < MIN_REFERENCE_LINE_PX) {
    fields.segment = `Too short to calibrate from (under ${MIN_REFERENCE_LINE_PX} pixels): draw the line along the whole marker or ruler`;
  }
  if (Object.keys(fields).length > 0) throw new AppError("invalid", "The reference line cannot be used.", { fields });
  let calibration: FilmCalibration;
  try {
    calibration = calibrationFromReferenceLine(input.segment, input.knownLengthMm, input.plane);
  } catch (err) {
    if (err instanceof MeasureInputError) throw new AppError("invalid", err.message, { fields: { [err.field === "knownLengthMm" ? "knownLengthMm" : "segment"]: err.message } });
    throw err;
  }
  const override: CalibrationOverride = { segment: input.segment, knownLengthMm: input.knownLengthMm, plane: input.plane, calibration, setBy: actor.id, setAt: now.toISOString() };
  return setCalibrationOverride(trx, actor, id, override);
}

/** Of these film ids, the ones that have a row (live or withdrawn). For the orphan-object sweep, across teams. */
export async function existingFilmIds(trx: Trx, ids: readonly string[]): Promise<Set<string>> {
  if (ids.length === 0) return new Set();
  const rows = (await trx("films").select("id").whereIn("id", [...ids])) as { id: string }[];
  return new Set(rows.map((r) => r.id));
}

const iso = (d: Date | null) => (d ? d.toISOString() : null);

/** The browser's view of a film record. */
export function toFilmView(r: FilmRecord): FilmView {
  const base = `/api/films/${r.id}/image`;
  return {
    id: r.id,
    episodeId: r.episode_id,
    kind: r.kind,
    filename: r.filename,
    contentType: r.content_type,
    sizeBytes: Number(r.size_bytes),
    sha256: r.sha256,
    takenAt: iso(r.taken_at),
    takenAtSource: r.taken_at_source,
    projection: r.projection,
    position: r.position,
    rows: r.rows,
    columns: r.columns,
    display: { width: r.display_width, height: r.display_height, scale: r.display_scale },
    calibration: effectiveCalibration(r.calibration, r.calibration_override),
    dicomCalibration: r.calibration,
    calibrationOverride: r.calibration_override,
    editable: editableFields(r),
    uploadedBy: { id: r.uploaded_by, name: r.uploader_name },
    createdAt: r.created_at.toISOString(),
    withdrawn: r.deleted_at ? { at: r.deleted_at.toISOString(), byName: r.deleted_by_name, reason: r.delete_reason } : null,
    measurementCount: r.measurement_count,
    images: { display: `${base}?variant=display`, thumb: `${base}?variant=thumb`, original: `${base}?variant=original` },
  };
}
