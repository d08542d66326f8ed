/**
 * The consistent write of an uploaded film: everything is computed first (decode, previews, SHA-256,
 * calibration), then the three objects are put, then the row and its audit row are inserted in one
 * transaction. Whatever fails, nothing half-written is left: a failed put removes the objects already
 * put; a failed insert removes all three. Objects orphaned by a crash between the two are swept later
 * by `cleanupOrphanObjects`.
 */
import "server-only";
import { randomUUID } from "node:crypto";
import { ListObjectsV2Command } from "@aws-sdk/client-s3";
import type { Knex } from "knex";
import { calibrationFromDicom } from "@/measure";
import { objectStore, toStorageError, type ObjectStore, type S3ObjectStore } from "@/storage";
import { db } from "@/db/knex";
import { getEpisode } from "@/db/episodes";
import { existingFilmIds, findLiveFilmBySha, insertFilm, type FilmRecord, type NewFilm } from "@/db/films";
import type { Actor } from "@/db/types";
import { AppError } from "@/lib/errors";
import { formatDateTime } from "@/lib/format";
import { dicomTimeToInstant } from "@/lib/film-time";
import { ingestFilm } from "./ingest";

/** Largest film accepted, bytes: FILM_MAX_BYTES, default 100 MB (a 43 x 43 cm detector at 16 bits is about 35 MB). */
export function filmMaxBytes(env: Record<string, string | undefined> = process.env): number {
  const raw = env.FILM_MAX_BYTES?.trim();
  const n = raw ? Number(raw) : NaN;
  return Number.isInteger(n) && n > 0 ? n : 100 * 1024 * 1024;
}

export type FilmVariant = "original" | "display" | "thumb";

export function filmKeys(filmId: string): Record<FilmVariant, string> {
  return { original: `films/${filmId}/original`, display: `films/${filmId}/display`, thumb: `films/${filmId}/thumb` };
}

/** The name as the uploader's computer gave it, without any folder part or control characters. */
export function cleanFilename(name: string): string {
  const base = name.split(/[\\/]/).pop() ?? "";
  const clean = base.replace(/[\u0000-\u001f\u007f]/g, "").trim().slice(0, 255);
  return clean || "film";
}

export interface StoreFilmInput {
  actor: Actor & { name?: string };
  episodeId: string;
  filename: string;
  contentType: string;
  bytes: Buffer;
  now: Date;
}

export interface StoreDeps {
  store?: ObjectStore;
  knex?: Knex;
}

async function removeQuietly(store: ObjectStore, keys: readonly string[]): Promise<void> {
  await Promise.all(
    keys.map((key) =>
      store.remove(key).catch((err: unknown) => {
        // Left for cleanupOrphanObjects: it has no row, so the sweep removes it after an hour.
        console.error(`[films] could not remove ${key} after a failed upload:`, err instanceof Error ? err.message : err);
      }),
    ),
  );
}

/** Puts all objects; if any put fails, removes those that succeeded and throws a 503. */
async function putAll(store: ObjectStore, objects: readonly { key: string; body: Buffer; contentType: string }[]): Promise<void> {
  const results = await Promise.allSettled(objects.map((o) => store.put(o.key, o.body, { contentType: o.contentType })));
  const failed = results.find((r): r is PromiseRejectedResult => r.status === "rejected");
  if (!failed) return;
  const put = objects.filter((_, i) => results[i]?.status === "fulfilled").map((o) => o.key);
  await removeQuietly(store, put);
  const cause = failed.reason as unknown;
  console.error("[films] object store refused a put:", cause instanceof Error ? `${cause.name}: ${cause.message}` : cause);
  throw new AppError("unavailable", "The film store is not answering, so the film was not saved. Nothing was kept; try again in a minute.");
}

/** Reads, checks and stores one uploaded film. Throws AppError (404, 409, 503) or the pipeline's FilmError (415, 422). */
export async function storeFilm(input: StoreFilmInput, deps: StoreDeps = {}): Promise<FilmRecord> {
  const knex = deps.knex ?? db();
  const store = deps.store ?? objectStore();
  const { actor, episodeId, bytes, now } = input;
  await getEpisode(knex, actor.teamId, episodeId);

  // 1. Compute everything before anything is written.
  const filename = cleanFilename(input.filename);
  const film = await ingestFilm(bytes, filename, input.contentType);

  // 2. The same bytes already on this episode?
  const twin = await findLiveFilmBySha(knex, episodeId, film.sha256);
  if (twin) {
    throw new AppError(
      "conflict",
      `This file is already on this episode: the film of ${formatDateTime(twin.taken_at)} (uploaded as ${twin.filename}). It is stored once.`,
      { details: { filmId: twin.id, takenAt: twin.taken_at?.toISOString() ?? null } },
    );
  }

  const id = randomUUID();
  const keys = filmKeys(id);
  const originalType = film.kind === "dicom" ? "application/dicom" : film.meta.format === "png" ? "image/png" : "image/jpeg";
  const headerTakenAt = film.kind === "dicom" && film.takenAt ? dicomTimeToInstant(film.takenAt) : null;
  const row: NewFilm = {
    id,
    episodeId,
    kind: film.kind,
    keys,
    contentType: originalType,
    filename,
    sizeBytes: bytes.length,
    sha256: film.sha256,
    takenAt: headerTakenAt ?? now,
    takenAtSource: headerTakenAt ? "dicom" : "upload",
    projection: film.projection,
    position: film.position,
    rows: film.rows,
    columns: film.columns,
    display: { width: film.display.width, height: film.display.height, scale: film.display.scale },
    spacingAttrs: film.spacingAttrs,
    calibration: film.kind === "dicom" ? calibrationFromDicom(film.spacingAttrs) : null,
    dicom:
      film.kind === "dicom"
        ? { meta: film.meta, rendering: film.rendering, warnings: film.warnings, header: { takenAt: film.takenAt, projection: film.projection, position: film.position } }
        : null,
  };

  // 3. The objects, then 4. the row with its audit row.
  await putAll(store, [
    { key: keys.original, body: bytes, contentType: originalType },
    { key: keys.display, body: film.display.buffer, contentType: film.display.contentType },
    { key: keys.thumb, body: film.thumbnail.buffer, contentType: film.thumbnail.contentType },
  ]);
  try {
    const inserted = await knex.transaction((trx) => insertFilm(trx, actor, row));
    return { ...inserted, uploader_name: actor.name ?? null, deleted_by_name: null, measurement_count: 0 };
  } catch (err) {
    await removeQuietly(store, Object.values(keys));
    throw err;
  }
}

const FILM_KEY = /^films\/([0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12})\/(original|display|thumb)$/;

export interface OrphanSweep {
  scanned: number;
  removed: string[];
}

/**
 * Removes objects under films/ that have no film row (live or withdrawn) and are older than
 * `minAgeMs` (default one hour, so an upload between its puts and its insert is never touched).
 * For a job to call; safe to run on several servers at once.
 */
export async function cleanupOrphanObjects(opts: { now: Date; store?: S3ObjectStore; knex?: Knex; minAgeMs?: number; prefix?: string }): Promise<OrphanSweep> {
  const store = opts.store ?? objectStore();
  const knex = opts.knex ?? db();
  const cutoff = opts.now.getTime() - (opts.minAgeMs ?? 3_600_000);
  const prefix = opts.prefix ?? "films/";
  if (!prefix.startsWith("films/")) throw new RangeError("The orphan sweep only looks under films/.");
  const sweep: OrphanSweep = { scanned: 0, removed: [] };
  let token: string | undefined;
  do {
    let page;
    try {
      page = await store.client.send(new ListObjectsV2Command({ Bucket: store.bucket, Prefix: prefix, ContinuationToken: token, MaxKeys: 1000 }));
    } catch (e) {
      throw toStorageError(e, "list");
    }
    const candidates: { key: string; filmId: string }[] = [];
    for (const o of page.Contents ?? []) {
      if (!o.Key) continue;
      sweep.scanned += 1;
      const m = FILM_KEY.exec(o.Key);
      const old = o.LastModified !== undefined && o.LastModified.getTime() < cutoff;
      if (m?.[1] && old) candidates.push({ key: o.Key, filmId: m[1] });
    }
    const withRows = await existingFilmIds(knex, [...new Set(candidates.map((c) => c.filmId))]);
    for (const c of candidates) {
      if (withRows.has(c.filmId)) continue;
      await store.remove(c.key);
      sweep.removed.push(c.key);
    }
    token = page.IsTruncated ? page.NextContinuationToken : undefined;
  } while (token);
  return sweep;
}
