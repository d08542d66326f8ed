/**
 * Faults in the services Rimwatch depends on, against the running app: the object store killed before
 * and during uploads (and paused), PostgreSQL stopped while requests are in flight, the mail relay
 * refusing. Each must give a clear 503 (or, for mail, a job that is retried), leave nothing
 * half-written, and the app must recover by itself once the service is back, without a restart.
 *
 * The services are the private ones `npm test` started (scripts/services.sh); everything stopped here
 * is started again, in afterAll at the latest, so later test files are unaffected. vitest.config.mts
 * runs this file after the other integration files.
 */
import { execFileSync, spawn } from "node:child_process";
import { existsSync, mkdirSync, openSync, readdirSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { connect } from "node:net";
import { join } from "node:path";
import { randomUUID } from "node:crypto";
import { ListObjectsV2Command } from "@aws-sdk/client-s3";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createObjectStore, storageConfigFromEnv, type S3ObjectStore } from "../../storage";
import { closeTestDb, testDb } from "../support/db";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { signIn, type Client } from "../support/http";

const env = (name: string): string => {
  const v = process.env[name];
  if (!v) throw new Error(`${name} is not set: run integration tests through \`npm test\``);
  return v;
};
const runDir = () => env("RW_RUN_DIR");
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** Polls `probe` every `everyMs` until it returns true, at most `tries` times. */
async function until(probe: () => Promise<boolean>, tries: number, everyMs: number): Promise<boolean> {
  for (let i = 0; i < tries; i += 1) {
    if (await probe().catch(() => false)) return true;
    await sleep(everyMs);
  }
  return false;
}

const portOpen = (port: number) =>
  new Promise<boolean>((resolve) => {
    const s = connect({ host: "127.0.0.1", port });
    s.once("connect", () => {
      s.destroy();
      resolve(true);
    });
    s.once("error", () => resolve(false));
  });

// --- PostgreSQL (the cluster in $RW_RUN_DIR/pg, run as the postgres user as scripts/services.sh does) ---

function pgBin(): string {
  const dir = readdirSync("/usr/lib/postgresql").map((v) => `/usr/lib/postgresql/${v}/bin`).find((d) => existsSync(`${d}/pg_ctl`));
  if (!dir) throw new Error("pg_ctl not found under /usr/lib/postgresql");
  return dir;
}
const pgData = () => join(runDir(), "pg");
const pgPort = () => Number(new URL(env("DATABASE_URL")).port);
function pgCtl(args: string[]): string {
  const pgCtlPath = `${pgBin()}/pg_ctl`;
  const full = ["-D", pgData(), ...args];
  // PostgreSQL refuses to run as root: as root, run it as the postgres user (scripts/services.sh does the same).
  if (process.getuid?.() === 0) return execFileSync("runuser", ["-u", "postgres", "--", pgCtlPath, ...full], { encoding: "utf8", timeout: 60_000 });
  return execFileSync(pgCtlPath, full, { encoding: "utf8", timeout: 60_000 });
}
const pgRunning = () => {
  try {
    pgCtl(["status"]);
    return true;
  } catch {
    return false;
  }
};
const stopPg = () => pgCtl(["-m", "fast", "-w", "stop"]);
function startPg(): void {
  if (pgRunning()) return;
  const opts = `-c listen_addresses=127.0.0.1 -p ${pgPort()} -k ${pgData()} -c fsync=off -c synchronous_commit=off -c full_page_writes=off`;
  pgCtl(["-l", join(pgData(), "server.log"), "-w", "-t", "30", "-o", opts, "start"]);
}

// --- The object store fake (storage/fake-s3.ts, started by scripts/services.sh; its pid is $RW_S3_PID) ---

const s3Port = () => Number(new URL(env("S3_ENDPOINT")).port);
let s3Pid = 0;
let restarts = 0;
const s3Alive = () => {
  try {
    process.kill(s3Pid, 0);
    return true;
  } catch {
    return false;
  }
};

/**
 * The process now serving the object store's port. An earlier test file may have restarted the fake
 * (tests/support/films.ts restartFakeS3), so $RW_S3_PID can name a process that has gone.
 */
function pidOnS3Port(): number {
  try {
    const out = execFileSync("ss", ["-ltnpH", `sport = :${s3Port()}`], { encoding: "utf8" });
    const m = /pid=(\d+)/.exec(out);
    if (m?.[1]) return Number(m[1]);
  } catch {
    // no ss: fall back to the pid the test script recorded
  }
  return Number(env("RW_S3_PID"));
}

async function killS3(): Promise<void> {
  process.kill(s3Pid, "SIGTERM");
  expect(await until(async () => !(await portOpen(s3Port())), 100, 100), "the object store stopped").toBe(true);
}

/** Starts the fake again on the same port and folder; services_down stops it through its pid file. */
async function startS3(): Promise<void> {
  if (await portOpen(s3Port())) return;
  restarts += 1;
  const log = join(runDir(), `s3-restarted-${restarts}.log`);
  const out = openSync(log, "a");
  const child = spawn(process.execPath, ["--import", "tsx", "storage/fake-s3.ts"], {
    env: { ...process.env, FAKE_S3_PORT: String(s3Port()), FAKE_S3_DIR: join(runDir(), "s3") },
    detached: true, // its own process group, as setsid gives the first one
    stdio: ["ignore", out, out],
  });
  child.unref();
  s3Pid = child.pid ?? 0;
  writeFileSync(join(runDir(), "restarted-fake-s3.pid"), String(s3Pid));
  const up = await until(async () => readFileSync(log, "utf8").includes("listening") && (await portOpen(s3Port())), 150, 200);
  expect(up, `the object store came back (${log})`).toBe(true);
}

// ---------------------------------------------------------------------------------------------------

let team: TestTeam;
let registrar: Client;
let episodeId: string;
let store: S3ObjectStore;
const mailDir = () => env("FAKE_SMTP_DIR");

async function png(seed: number, side = 96): Promise<Buffer> {
  const px = Buffer.alloc(side * side);
  for (let i = 0; i < px.length; i += 1) px[i] = (i * 31 + seed * 17 + ((i * seed) % 13)) % 256;
  return sharp(px, { raw: { width: side, height: side, channels: 1 } }).png({ compressionLevel: 0 }).toBuffer();
}

function upload(c: Client, episode: string, bytes: Buffer, name: string): Promise<Response> {
  return c.fetch(`/api/episodes/${episode}/films`, {
    method: "POST",
    headers: { "content-type": "image/png", "x-film-filename": encodeURIComponent(name) },
    body: new Uint8Array(bytes),
  });
}

async function filmKeys(): Promise<string[]> {
  const keys: string[] = [];
  let token: string | undefined;
  do {
    const page = await store.client.send(new ListObjectsV2Command({ Bucket: store.bucket, Prefix: "films/", ContinuationToken: token }));
    for (const o of page.Contents ?? []) if (o.Key) keys.push(o.Key);
    token = page.IsTruncated ? page.NextContinuationToken : undefined;
  } while (token);
  return keys;
}

const count = async (table: string, where: Record<string, unknown>) => Number((await testDb()(table).where(where).count<{ c: string }[]>({ c: "*" }))[0]?.c ?? 0);

async function errorOf(res: Response): Promise<{ code: string; message: string }> {
  const body = (await res.json()) as { error?: { code?: string; message?: string } };
  return { code: body.error?.code ?? "", message: body.error?.message ?? "" };
}

beforeAll(async () => {
  s3Pid = pidOnS3Port();
  team = await makeTeam("faults");
  registrar = await signIn(team.users.registrar.email, TEST_PASSWORD);
  expect(registrar.ok).toBe(true);
  const patient = await makePatient(team);
  episodeId = (await makeEpisode(team, patient.id)).id;
  store = createObjectStore(storageConfigFromEnv());
});

afterAll(async () => {
  // Whatever happened above, leave every service running for the test files after this one.
  startPg();
  await startS3();
  rmSync(join(mailDir(), "refuse"), { force: true });
  store?.destroy();
  await closeTestDb();
}, 120_000);

describe("the object store", () => {
  let stored: { id: string };

  it("while it is down, an upload gets a clear 503 and nothing is kept; reading an image too", async () => {
    const ok = await upload(registrar, episodeId, await png(1), "before.png");
    expect(ok.status).toBe(201);
    stored = ((await ok.json()) as { film: { id: string } }).film;
    const rowsBefore = await count("films", { episode_id: episodeId });
    const keysBefore = await filmKeys();

    await killS3();
    try {
      const res = await upload(registrar, episodeId, await png(2), "while-down.png");
      expect(res.status).toBe(503);
      const err = await errorOf(res);
      expect(err.code).toBe("unavailable");
      expect(err.message).toMatch(/not answering|try again/i);
      const image = await registrar.get(`/api/films/${stored.id}/image?variant=thumb`);
      expect(image.status).toBe(503);
      expect(await count("films", { episode_id: episodeId })).toBe(rowsBefore);
    } finally {
      await startS3();
    }
    expect(await filmKeys()).toEqual(keysBefore);
  });

  it("once it is back, the very next upload and image read work (no app restart)", async () => {
    const res = await upload(registrar, episodeId, await png(3), "after.png");
    expect(res.status, await res.clone().text()).toBe(201);
    const image = await registrar.get(`/api/films/${stored.id}/image?variant=thumb`);
    expect(image.status).toBe(200);
    expect(image.headers.get("content-type")).toBe("image/jpeg");
  });

  it("killed in the middle of uploads: each answer is 201 or 503, no row lacks an object, strays are swept", async () => {
    const rowsBefore = await count("films", { episode_id: episodeId });
    const big = await Promise.all([10, 11, 12, 13].map((s) => png(s, 1400)));
    const pending = big.map((b, i) => upload(registrar, episodeId, b, `mid-${i}.png`).then((r) => r.status, () => 0));
    await sleep(250);
    await killS3();
    const statuses = await Promise.all(pending);
    await startS3();
    expect(statuses.every((s) => s === 201 || s === 503), `statuses ${statuses.join(", ")}`).toBe(true);
    const rows = await testDb()("films").where({ episode_id: episodeId }).select<{ id: string; original_key: string; display_key: string; thumb_key: string }[]>("id", "original_key", "display_key", "thumb_key");
    expect(rows.length - rowsBefore).toBe(statuses.filter((s) => s === 201).length);
    for (const r of rows) for (const key of [r.original_key, r.display_key, r.thumb_key]) expect(await store.head(key), `${key} of film ${r.id}`).not.toBeNull();
    // Objects put before the store died, whose film was then refused, have no row: the nightly sweep
    // (films.cleanup, lib/films/store-film.ts cleanupOrphanObjects) removes them. Run it now.
    const withRows = new Set((await testDb()("films").select<{ id: string }[]>("id")).map((r) => r.id));
    const strays = (await filmKeys()).filter((k) => !withRows.has(k.split("/")[1] ?? ""));
    if (strays.length > 0) {
      const { cleanupOrphanObjects } = await import("../../lib/films/store-film");
      const sweep = await cleanupOrphanObjects({ now: new Date(Date.now() + 2 * 3_600_000), store });
      expect(sweep.removed.sort()).toEqual(expect.arrayContaining(strays.sort()));
      const { db } = await import("../../db/knex");
      await db().destroy();
    }
    const left = (await filmKeys()).filter((k) => !withRows.has(k.split("/")[1] ?? ""));
    expect(left).toEqual([]);
  }, 120_000);

  it("paused for two seconds, the store only slows an upload down", async () => {
    process.kill(s3Pid, "SIGSTOP");
    const pending = upload(registrar, episodeId, await png(20), "paused.png");
    await sleep(2_000);
    process.kill(s3Pid, "SIGCONT");
    const res = await pending;
    expect(res.status, await res.clone().text()).toBe(201);
    expect(s3Alive()).toBe(true);
  });
});

describe("PostgreSQL", () => {
  it("stopped while 20 patients are being registered: each answer is 201 or a clear 503, and every row has its audit row", async () => {
    const hns = Array.from({ length: 20 }, (_, i) => `FLT${randomUUID().slice(0, 6)}${i}`.toUpperCase());
    const body = (hn: string) => ({ hospitalNumber: hn, familyName: "Faultline", givenName: "Rowan", dateOfBirth: "1979-07-07", sex: "other", emailConsent: false });
    const pending = hns.map((hn, i) => sleep(i * 15).then(() => registrar.send("POST", "/api/patients", body(hn))));
    await sleep(120);
    stopPg();
    const answers = await Promise.all(pending.map((p) => p.then(async (r) => ({ status: r.status, body: await r.text() }), (e: unknown) => ({ status: 0, body: String(e) }))));
    try {
      // While it is down: reads and writes alike get the 503 with a plain message.
      const read = await registrar.get("/api/patients");
      expect(read.status).toBe(503);
      const err = await errorOf(read);
      expect(err.code).toBe("unavailable");
      expect(err.message).toMatch(/not answering.*Nothing was saved/);
      const write = await registrar.send("POST", "/api/patients", body(`FLT${randomUUID().slice(0, 6)}X`.toUpperCase()));
      expect(write.status).toBe(503);
      // A sign-in attempt is refused without a crash (next-auth answers with an error, no session).
      const attempt = await signIn(team.users.nurse.email, TEST_PASSWORD);
      expect(attempt.ok).toBe(false);
    } finally {
      startPg();
    }
    for (const a of answers) expect([201, 503], a.body.slice(0, 200)).toContain(a.status);
    for (const a of answers.filter((x) => x.status === 503)) expect(a.body).toMatch(/"code":"unavailable"/);

    await closeTestDb(); // the test's own pool lost its connections with the server
    for (const [i, hn] of hns.entries()) {
      const row = await testDb()("patients").where({ hospital_number: hn }).first<{ id: string } | undefined>("id");
      if (answers[i]?.status === 201) {
        expect(row, `${hn} answered 201 (${answers[i]?.body.slice(0, 120)}); answers ${answers.map((a) => a.status).join(",")}`).toBeTruthy();
        expect(await count("audit_log", { entity_id: row?.id ?? "", action: "patient.create" }), `${hn}: its audit row`).toBe(1);
      } else {
        expect(row, `${hn} answered ${answers[i]?.status}: nothing may be stored`).toBeUndefined();
      }
    }
  }, 120_000);

  it("once it is back, the very next request works (no app restart)", async () => {
    const first = await registrar.get("/api/patients");
    expect(first.status, await first.clone().text()).toBe(200);
    const write = await registrar.send("POST", "/api/patients", {
      hospitalNumber: `FLT${randomUUID().slice(0, 6)}OK`.toUpperCase(),
      familyName: "Faultline",
      givenName: "Rowan",
      dateOfBirth: "1979-07-07",
      sex: "other",
      emailConsent: false,
    });
    expect(write.status).toBe(201);
    expect((await signIn(team.users.nurse.email, TEST_PASSWORD)).ok).toBe(true);
  });
});

describe("the mail relay", () => {
  it("refusing: the message stays queued with the error, is retried, and goes out once the relay accepts", async () => {
    const patient = await makePatient(team, { email: `rowan.${randomUUID().slice(0, 6)}@example.org`, email_consent: true, email_consent_at: new Date() });
    const episode = (await makeEpisode(team, patient.id)).id;
    const nurse = await signIn(team.users.nurse.email, TEST_PASSWORD);
    mkdirSync(mailDir(), { recursive: true });
    writeFileSync(join(mailDir(), "refuse"), "");
    const scheduledAt = new Date(Date.now() + 5 * 86_400_000).toISOString();
    const res = await nurse.send("POST", "/api/bookings", { episodeId: episode, kind: "repeat-film", source: "manual", scheduledAt, location: "X-ray department, Larkmoor General" });
    expect(res.status, await res.clone().text()).toBe(201);
    const { message } = (await res.json()) as { message: { id: string; status: string } | null };
    expect(message, "a confirmation is recorded with the booking").toBeTruthy();
    const id = message?.id ?? "";

    // The worker tries, the relay answers 451, the message stays queued with the error and an attempt.
    const tried = await until(async () => {
      const m = await testDb()("messages").where({ id }).first<{ attempts: number; status: string }>("attempts", "status");
      return (m?.attempts ?? 0) >= 1;
    }, 60, 500);
    expect(tried, "the worker tried to send").toBe(true);
    const m1 = await testDb()("messages").where({ id }).first<{ status: string; last_error: string | null }>("status", "last_error");
    expect(m1?.status).toBe("queued");
    expect(m1?.last_error ?? "").toMatch(/451|temporar|unavailable/i);
    // The worker records the attempt, then hands the job back to pg-boss, which marks it for a retry.
    const jobState = async () =>
      (
        await testDb().raw<{ rows: { state: string }[] }>(
          "select state from pgboss.job where name = 'mail.send' and data->>'messageId' = ? order by created_on desc limit 1",
          [id],
        )
      ).rows[0]?.state;
    expect(await until(async () => (await jobState()) === "retry", 40, 250), `pg-boss holds the job for a retry (state ${await jobState()})`).toBe(true);

    // The relay accepts again; instead of waiting out the backoff, the retry is brought forward.
    rmSync(join(mailDir(), "refuse"), { force: true });
    await testDb().raw("update pgboss.job set start_after = now() where name = 'mail.send' and data->>'messageId' = ? and state = 'retry'", [id]);
    const sent = await until(async () => (await testDb()("messages").where({ id }).first<{ status: string }>("status"))?.status === "sent", 60, 500);
    expect(sent, "the retried job sent the message").toBe(true);
    const eml = readdirSync(mailDir()).filter((f) => f.endsWith(".eml")).map((f) => readFileSync(join(mailDir(), f), "utf8"));
    expect(eml.some((t) => t.includes(id)), "the relay received the message (X-Rimwatch-Message header)").toBe(true);
  }, 120_000);
});
