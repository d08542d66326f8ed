// Helpers for the films tests: invented films (DICOM written by dcmtk, PNG by sharp), the upload as the
// browser sends it, and direct looks at the object store and the films table.
import { spawn } from "node:child_process";
import { randomInt } from "node:crypto";
import { openSync, readFileSync } from "node:fs";
import { connect } from "node:net";
import { join } from "node:path";
import { ListObjectsV2Command } from "@aws-sdk/client-s3";
import sharp from "sharp";
import { createObjectStore, storageConfigFromEnv, type S3ObjectStore } from "@/storage";
import { fixtureDir, syntheticChest, writeDicom, type FixtureSyntax } from "./dicom-fixtures";
import { testDb } from "./db";
import type { Client } from "./http";

let store: S3ObjectStore | null = null;

/** The same bucket the app under test uses, read directly. */
export function testStore(): S3ObjectStore {
  store ??= createObjectStore(storageConfigFromEnv());
  return store;
}

export function closeTestStore(): void {
  store?.destroy();
  store = null;
}

/** Every key under a prefix (paginated). */
export async function listKeys(prefix = "films/"): Promise<string[]> {
  const s = testStore();
  const keys: string[] = [];
  let token: string | undefined;
  do {
    const page = await s.client.send(new ListObjectsV2Command({ Bucket: s.bucket, Prefix: prefix, ContinuationToken: token }));
    for (const o of page.Contents ?? []) if (o.Key) keys.push(o.Key);
    token = page.IsTruncated ? page.NextContinuationToken : undefined;
  } while (token);
  return keys;
}

export async function filmRowCount(episodeId: string): Promise<number> {
  const [row] = await testDb()("films").where({ episode_id: episodeId }).count<{ count: string }[]>({ count: "*" });
  return Number(row?.count ?? 0);
}

/** What is stored now: film rows of the episode and objects under films/. */
export async function storedSnapshot(episodeId: string): Promise<{ rows: number; objects: number }> {
  return { rows: await filmRowCount(episodeId), objects: (await listKeys()).length };
}

const dir = fixtureDir("rimwatch-films-test-");
export const cleanupFilmFixtures = dir.cleanup;
let counter = 0;

/**
 * An invented 256 x 320 chest film written by dcmtk. Each call makes new bytes (fresh UIDs), so the
 * duplicate check never trips by accident. `attributes` are dcmtk dump lines by tag.
 */
export function makeDicom(attributes: Record<string, string> = {}, syntax: FixtureSyntax = "explicit"): Buffer {
  counter += 1;
  const { pixels } = syntheticChest(256, 320);
  const path = writeDicom(dir.dir, `film-${process.pid}-${counter}`, { rows: 320, columns: 256, pixels, attributes, syntax });
  return readFileSync(path);
}

/** An invented 8-bit greyscale PNG export of a chest film; one random pixel makes the bytes new each call. */
export async function makePng(width = 256, height = 320): Promise<Buffer> {
  const { pixels } = syntheticChest(width, height);
  const grey = Uint8Array.from(pixels, (v) => Math.min(255, v >> 4));
  grey[0] = randomInt(256);
  grey[1] = randomInt(256);
  return sharp(grey, { raw: { width, height, channels: 1 } }).png().toBuffer();
}

/** POSTs one film the way the browser does: the file as the body, its name in X-Film-Filename. */
export function uploadFilm(client: Client, episodeId: string, bytes: Buffer, filename: string, contentType: string): Promise<Response> {
  return client.fetch(`/api/episodes/${episodeId}/films`, {
    method: "POST",
    headers: { "content-type": contentType, "x-film-filename": encodeURIComponent(filename) },
    body: new Uint8Array(bytes),
  });
}

export interface UploadedFilm {
  id: string;
  takenAt: string | null;
  takenAtSource: string | null;
  projection: string | null;
  position: string | null;
  kind: string;
  rows: number;
  columns: number;
  display: { width: number; height: number; scale: number };
  calibration: { source: string; words: string; film: { rowMm: number; columnMm: number; source: string } | null; patient: unknown; correctionUnknown: boolean };
  editable: { takenAt: boolean; projection: boolean; position: boolean };
  withdrawn: { reason: string | null } | null;
  measurementCount: number;
}

export async function uploadOk(client: Client, episodeId: string, bytes: Buffer, filename: string, contentType: string): Promise<UploadedFilm> {
  const res = await uploadFilm(client, episodeId, bytes, filename, contentType);
  const body = (await res.json()) as { film?: UploadedFilm; error?: { message: string } };
  if (res.status !== 201 || !body.film) throw new Error(`upload of ${filename} answered ${res.status}: ${body.error?.message ?? "?"}`);
  return body.film;
}

function portOf(url: string): { host: string; port: number } {
  const u = new URL(url);
  return { host: u.hostname, port: Number(u.port) };
}

function accepts(host: string, port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const s = connect({ host, port });
    s.once("connect", () => {
      s.destroy();
      resolve(true);
    });
    s.once("error", () => resolve(false));
  });
}

async function waitFor(what: string, check: () => Promise<boolean>, ms = 20_000): Promise<void> {
  const until = Date.now() + ms;
  while (Date.now() < until) {
    if (await check()) return;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`timed out waiting: ${what}`);
}

/** True when the test run's S3 fake was started by scripts/services.sh (so a test may stop and restart it). */
export const canStopFakeS3 = () => Boolean(process.env.RW_S3_PID && process.env.RW_RUN_DIR && process.env.S3_ENDPOINT);

/** Kills the test run's S3 fake (its whole process group) and waits until its port refuses connections. */
export async function stopFakeS3(): Promise<void> {
  const pid = Number(process.env.RW_S3_PID);
  if (!Number.isInteger(pid) || pid <= 1) throw new Error("RW_S3_PID is not set");
  try {
    process.kill(-pid, "SIGKILL");
  } catch {
    process.kill(pid, "SIGKILL");
  }
  const { host, port } = portOf(process.env.S3_ENDPOINT ?? "");
  await waitFor("the S3 fake to stop", async () => !(await accepts(host, port)));
}

/**
 * Starts a replacement S3 fake on the same port and directory. It runs detached (the app and the browser
 * tests need it after this file) and ends itself when the test run's PostgreSQL stops, so nothing
 * outlives `npm test`.
 */
export async function restartFakeS3(): Promise<void> {
  const { host, port } = portOf(process.env.S3_ENDPOINT ?? "");
  const runDir = process.env.RW_RUN_DIR ?? "";
  const log = openSync(join(runDir, "s3-restarted.log"), "a");
  const child = spawn(process.execPath, ["--import", "tsx", join(process.cwd(), "tests/support/fake-s3-watchdog.ts")], {
    detached: true,
    stdio: ["ignore", log, log],
    env: { ...process.env, FAKE_S3_PORT: String(port), FAKE_S3_DIR: join(runDir, "s3") },
  });
  child.unref();
  if (child.pid) process.env.RW_S3_PID = String(child.pid);
  await waitFor("the S3 fake to start again", () => accepts(host, port), 30_000);
}
