/**
 * Hostile uploads: every file of the generated corpus (tests/support/hostile-corpus.ts, 300+ malformed
 * or hostile films) is POSTed to the film upload route exactly as the browser's upload zone sends it
 * (the file as the body, its type as Content-Type, its name URI-encoded in X-Film-Filename). Each must
 * get a 4xx with a message a person can read, never a 5xx; the server must keep answering; and
 * afterwards neither the object store nor the films table may hold any trace of them. The valid films
 * the corpus was made from are then accepted, so the refusals are about the damage, not the source.
 */
import { ListObjectsV2Command } from "@aws-sdk/client-s3";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createObjectStore, storageConfigFromEnv, type S3ObjectStore } from "../../storage";
import { closeTestDb, testDb } from "../support/db";
import { fixtureDir, hasDcmtk } from "../support/dicom-fixtures";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { anonymous, signIn, type Client } from "../support/http";
import { hostileCorpus, makeSources, type CorpusSources, type HostileFile } from "../support/hostile-corpus";

let team: TestTeam;
let registrar: Client;
let episodeId: string;
let store: S3ObjectStore;
let sources: CorpusSources;
let corpus: HostileFile[];
const dir = fixtureDir("rimwatch-hostile-");

async function bucketKeys(): Promise<Set<string>> {
  const keys = new Set<string>();
  let token: string | undefined;
  do {
    const page = await store.client.send(new ListObjectsV2Command({ Bucket: store.bucket, ContinuationToken: token, MaxKeys: 1000 }));
    for (const o of page.Contents ?? []) if (o.Key) keys.add(o.Key);
    token = page.IsTruncated ? page.NextContinuationToken : undefined;
  } while (token);
  return keys;
}

const count = async (table: string, where: Record<string, unknown> = {}) => Number((await testDb()(table).where(where).count<{ c: string }[]>({ c: "*" }))[0]?.c ?? 0);

/** As components/films/upload-zone.tsx sends a file. */
function upload(c: Client, episode: string, f: { filename: string; contentType: string }, bytes: Buffer): Promise<Response> {
  return c.fetch(`/api/episodes/${episode}/films`, {
    method: "POST",
    headers: { accept: "application/json", "content-type": f.contentType || "application/octet-stream", "x-film-filename": encodeURIComponent(f.filename) },
    body: new Uint8Array(bytes),
  });
}

let before: { keys: Set<string>; films: number; episodeFilms: number; filmAudit: number };

beforeAll(async () => {
  expect(hasDcmtk(), "dcmtk makes the source films (npm test installs it)").toBe(true);
  team = await makeTeam("hostile");
  registrar = await signIn(team.users.registrar.email, TEST_PASSWORD);
  expect(registrar.ok).toBe(true);
  const patient = await makePatient(team);
  episodeId = (await makeEpisode(team, patient.id)).id;
  store = createObjectStore(storageConfigFromEnv());
  sources = await makeSources(dir.dir);
  corpus = hostileCorpus(sources);
  before = {
    keys: await bucketKeys(),
    films: await count("films"),
    episodeFilms: await count("films", { episode_id: episodeId }),
    filmAudit: Number((await testDb()("audit_log").where({ actor_id: team.users.registrar.id }).where("action", "like", "film%").count<{ c: string }[]>({ c: "*" }))[0]?.c ?? 0),
  };
}, 120_000);

afterAll(async () => {
  dir.cleanup();
  store?.destroy();
  await closeTestDb();
});

describe("hostile uploads", () => {
  it("the corpus holds at least 200 distinct hostile files", () => {
    expect(corpus.length).toBeGreaterThanOrEqual(200);
    expect(new Set(corpus.map((f) => f.name)).size).toBe(corpus.length);
  });

  it("every one is refused with a 4xx and a message, and the server keeps answering", async () => {
    const wrong: string[] = [];
    const statuses = new Map<number, number>();
    let i = 0;
    for (const f of corpus) {
      i += 1;
      const bytes = await f.make();
      let res: Response;
      try {
        res = await upload(registrar, episodeId, f, bytes).catch((e: unknown) => {
          // Making a big file can take longer than the server keeps an idle connection open (5 s); the
          // client then writes into a socket the server already closed. That is this client's stale
          // connection, not an answer: send once more on a fresh one.
          const code = (e as { cause?: { code?: string } }).cause?.code ?? "";
          if (["EPIPE", "ECONNRESET", "UND_ERR_SOCKET"].includes(code)) return upload(registrar, episodeId, f, bytes);
          throw e;
        });
      } catch (e) {
        const cause = (e as { cause?: { code?: string; message?: string } }).cause;
        wrong.push(`${f.name} (${f.why}): no answer: ${e instanceof Error ? e.message : String(e)} ${cause?.code ?? ""} ${cause?.message ?? ""}`);
        continue;
      }
      statuses.set(res.status, (statuses.get(res.status) ?? 0) + 1);
      const type = res.headers.get("content-type") ?? "";
      const text = await res.text();
      let message = "";
      try {
        message = ((JSON.parse(text) as { error?: { message?: unknown } }).error?.message as string | undefined) ?? "";
      } catch {
        message = "";
      }
      if (![400, 413, 415, 422].includes(res.status)) wrong.push(`${f.name} (${f.why}): ${res.status} ${text.slice(0, 200)}`);
      else if (!/application\/json/.test(type) || typeof message !== "string" || message.length < 10) wrong.push(`${f.name}: ${res.status} without a JSON message (${type}): ${text.slice(0, 120)}`);
      // Every 50 files, and after the big ones, the server must still answer a plain request.
      if (i % 50 === 0 || bytes.length > 1_000_000) {
        const alive = await anonymous().get("/api/auth/csrf").catch(() => null);
        if (alive?.status !== 200) wrong.push(`after ${f.name}: the server did not answer (${alive?.status ?? "no connection"})`);
      }
    }
    console.log(`hostile uploads: ${corpus.length} files; answers ${[...statuses].sort((a, b) => a[0] - b[0]).map(([s, n]) => `${s} x ${n}`).join(", ")}`);
    expect(wrong).toEqual([]);
  }, 900_000);

  it("leaves no trace: no object in the store, no film row, no audit row", async () => {
    const keys = await bucketKeys();
    const added = [...keys].filter((k) => !before.keys.has(k));
    expect(added, "objects put by refused uploads").toEqual([]);
    expect(await count("films")).toBe(before.films);
    expect(await count("films", { episode_id: episodeId })).toBe(before.episodeFilms);
    const filmAudit = Number((await testDb()("audit_log").where({ actor_id: team.users.registrar.id }).where("action", "like", "film%").count<{ c: string }[]>({ c: "*" }))[0]?.c ?? 0);
    expect(filmAudit).toBe(before.filmAudit);
  });

  it("afterwards the same server accepts the valid films the corpus was made from", async () => {
    const patient = await makePatient(team);
    const fresh = (await makeEpisode(team, patient.id)).id;
    const named: [keyof CorpusSources, string, string][] = [
      ["explicit", "source-explicit.dcm", "application/octet-stream"],
      ["implicit", "source-implicit.dcm", "application/dicom"],
      ["deflated", "source-deflated.dcm", "application/octet-stream"],
      ["jpegDicom", "source-jpeg.dcm", "application/octet-stream"],
      ["png", "source.png", "image/png"],
      ["jpeg", "source.jpg", "image/jpeg"],
    ];
    for (const [key, filename, contentType] of named) {
      const res = await upload(registrar, fresh, { filename, contentType }, sources[key]);
      expect(res.status, `${key}: ${await res.clone().text()}`).toBe(201);
    }
    expect(await count("films", { episode_id: fresh })).toBe(named.length);
  });
});
