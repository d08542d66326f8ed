// Nothing half-written: a film is either a row with its three objects, or nothing at all. Over HTTP with
// the run's S3 fake stopped, and in-process with stores that fail part-way and an insert that loses a race.
import { createServer } from "node:net";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createObjectStore, storageConfigFromEnv, StorageUnavailableError, type ObjectStore } from "@/storage";
import { cleanupOrphanObjects, storeFilm } from "@/lib/films/store-film";
import { toErrorBody } from "@/lib/errors";
import { signIn, type Client } from "../support/http";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { closeTestDb, testDb } from "../support/db";
import {
  canStopFakeS3,
  cleanupFilmFixtures,
  closeTestStore,
  listKeys,
  makeDicom,
  makePng,
  restartFakeS3,
  stopFakeS3,
  storedSnapshot,
  testStore,
  uploadFilm,
  uploadOk,
} from "../support/films";

let team: TestTeam;
let registrar: Client;
let episodeId: string;
let actor: { id: string; teamId: string; name: string };

const rowsWithSha = async (sha: string) => Number((await testDb()("films").where({ sha256: sha }).count<{ count: string }[]>({ count: "*" }))[0]?.count ?? 0);
const sha256 = async (b: Buffer) => (await import("node:crypto")).createHash("sha256").update(b).digest("hex");

/** A store that delegates to the real one but records every key put, and can be told to fail or wait. */
function recordingStore(real: ObjectStore, behaviour: { failOnPut?: number; beforePut?: (key: string) => Promise<void> } = {}) {
  const putKeys: string[] = [];
  let puts = 0;
  const store: ObjectStore = {
    put: async (key, body, options) => {
      puts += 1;
      if (behaviour.failOnPut === puts) throw new StorageUnavailableError("The object store is unavailable (put).");
      await behaviour.beforePut?.(key);
      await real.put(key, body, options);
      putKeys.push(key);
    },
    get: (key) => real.get(key),
    getBuffer: (key) => real.getBuffer(key),
    head: (key) => real.head(key),
    remove: (key) => real.remove(key),
    presignGet: (key, s) => real.presignGet(key, s),
  };
  return { store, putKeys };
}

function closedPort(): Promise<number> {
  return new Promise((resolve) => {
    const s = createServer();
    s.listen(0, "127.0.0.1", () => {
      const address = s.address();
      const port = typeof address === "object" && address ? address.port : 1;
      s.close(() => resolve(port));
    });
  });
}

beforeAll(async () => {
  team = await makeTeam("films-cons");
  const patient = await makePatient(team);
  episodeId = (await makeEpisode(team, patient.id)).id;
  registrar = await signIn(team.users.registrar.email, TEST_PASSWORD);
  actor = { id: team.users.registrar.id, teamId: team.id, name: "registrar" };
});

afterAll(async () => {
  cleanupFilmFixtures();
  closeTestStore();
  await closeTestDb();
});

describe("the object store stops", () => {
  it.skipIf(!canStopFakeS3())("over HTTP: the upload answers 503, and no row and no object remain; after a restart it works", async () => {
    const before = await storedSnapshot(episodeId);
    const bytes = makeDicom({ "(0018,1164)": "DS [0.150\\0.150]" });
    await stopFakeS3();
    let status = 0;
    let message = "";
    try {
      const res = await uploadFilm(registrar, episodeId, bytes, "during-outage.dcm", "application/dicom");
      status = res.status;
      message = ((await res.json()) as { error: { message: string } }).error.message;
    } finally {
      await restartFakeS3();
    }
    expect(status).toBe(503);
    expect(message).toContain("not saved");
    expect(await rowsWithSha(await sha256(bytes))).toBe(0);
    expect(await storedSnapshot(episodeId)).toEqual(before);
    // The same film goes in once the store is back.
    const film = await uploadOk(registrar, episodeId, bytes, "after-outage.dcm", "application/dicom");
    for (const v of ["original", "display", "thumb"]) expect(await testStore().head(`films/${film.id}/${v}`)).not.toBeNull();
  });

  it("in-process, a store on a closed port: 503, nothing stored", async () => {
    const port = await closedPort();
    const dead = createObjectStore({ ...storageConfigFromEnv(), endpoint: `http://127.0.0.1:${port}` });
    const bytes = await makePng();
    const before = await storedSnapshot(episodeId);
    const err = await storeFilm({ actor, episodeId, filename: "x.png", contentType: "image/png", bytes, now: new Date() }, { store: dead, knex: testDb() }).catch((e: unknown) => e);
    dead.destroy();
    expect(toErrorBody(err).status).toBe(503);
    expect(await rowsWithSha(await sha256(bytes))).toBe(0);
    expect(await storedSnapshot(episodeId)).toEqual(before);
  });

  for (const failOnPut of [1, 2, 3]) {
    it(`in-process, put ${failOnPut} of 3 fails: the objects already put are removed, no row, 503`, async () => {
      const { store, putKeys } = recordingStore(testStore(), { failOnPut });
      const bytes = await makePng();
      const before = await storedSnapshot(episodeId);
      const err = await storeFilm({ actor, episodeId, filename: "y.png", contentType: "image/png", bytes, now: new Date() }, { store, knex: testDb() }).catch((e: unknown) => e);
      expect(toErrorBody(err).status).toBe(503);
      expect(putKeys).toHaveLength(2); // the other two puts ran and succeeded...
      for (const key of putKeys) expect(await testStore().head(key), key).toBeNull(); // ...and were removed
      expect(await rowsWithSha(await sha256(bytes))).toBe(0);
      expect(await storedSnapshot(episodeId)).toEqual(before);
    });
  }
});

describe("the insert fails after the objects are stored", () => {
  it("two uploads of the same file at once: one row, the loser's objects removed, the loser gets 409", async () => {
    const bytes = makeDicom();
    // Both uploads pass the duplicate check, then wait for each other before putting, so both reach
    // the insert; the unique index on live (episode, sha256) refuses the second.
    const seen = new Set<string>();
    let release: () => void = () => undefined;
    const bothThere = new Promise<void>((r) => (release = r));
    const barrier = async (key: string) => {
      seen.add(key.split("/")[1] ?? "");
      if (seen.size >= 2) release();
      await bothThere;
    };
    const a = recordingStore(testStore(), { beforePut: barrier });
    const b = recordingStore(testStore(), { beforePut: barrier });
    const input = { actor, episodeId, filename: "race.dcm", contentType: "application/dicom", bytes, now: new Date() };
    const results = await Promise.allSettled([storeFilm(input, { store: a.store, knex: testDb() }), storeFilm(input, { store: b.store, knex: testDb() })]);

    const won = results.filter((r) => r.status === "fulfilled");
    const lost = results.filter((r): r is PromiseRejectedResult => r.status === "rejected");
    expect(won).toHaveLength(1);
    expect(lost).toHaveLength(1);
    expect(toErrorBody(lost[0]?.reason).status).toBe(409);
    expect(await rowsWithSha(await sha256(bytes))).toBe(1);

    const winner = results[0]?.status === "fulfilled" ? a : b;
    const loser = winner === a ? b : a;
    for (const key of winner.putKeys) expect(await testStore().head(key), key).not.toBeNull();
    expect(loser.putKeys).toHaveLength(3);
    for (const key of loser.putKeys) expect(await testStore().head(key), key).toBeNull();
  });
});

describe("cleanupOrphanObjects", () => {
  it("removes objects older than an hour that have no row; keeps younger ones, live and withdrawn films' objects", async () => {
    const orphanId = crypto.randomUUID();
    const orphanKeys = ["original", "display", "thumb"].map((v) => `films/${orphanId}/${v}`);
    for (const key of orphanKeys) await testStore().put(key, Buffer.from("left behind by a crash"), { contentType: "application/octet-stream" });
    const stranger = `films/${orphanId}/notes.txt`; // not a film key: never touched
    await testStore().put(stranger, Buffer.from("?"), { contentType: "text/plain" });

    const live = await uploadOk(registrar, episodeId, await makePng(), "kept.png", "image/png");
    const withdrawn = await uploadOk(registrar, episodeId, await makePng(), "withdrawn.png", "image/png");
    const del = await registrar.send("DELETE", `/api/films/${withdrawn.id}`, { reason: "uploaded twice" });
    expect(del.status).toBe(200);

    // Now: everything is younger than an hour, so nothing goes.
    const early = await cleanupOrphanObjects({ now: new Date(), knex: testDb(), store: testStore() });
    expect(early.removed).toEqual([]);
    for (const key of orphanKeys) expect(await testStore().head(key)).not.toBeNull();

    // Two hours on: the orphans go, every film with a row keeps its objects.
    const later = await cleanupOrphanObjects({ now: new Date(Date.now() + 2 * 3_600_000), knex: testDb(), store: testStore() });
    expect(later.scanned).toBeGreaterThanOrEqual(orphanKeys.length + 6);
    for (const key of orphanKeys) {
      expect(later.removed).toContain(key);
      expect(await testStore().head(key)).toBeNull();
    }
    expect(await testStore().head(stranger)).not.toBeNull();
    for (const id of [live.id, withdrawn.id]) {
      for (const v of ["original", "display", "thumb"]) expect(await testStore().head(`films/${id}/${v}`)).not.toBeNull();
    }
    // Every remaining film key has its row.
    const filmKeys = (await listKeys()).filter((k) => /^films\/[0-9a-f-]{36}\/(original|display|thumb)$/.test(k));
    const ids = [...new Set(filmKeys.map((k) => k.split("/")[1] ?? ""))];
    const rows: { id: string }[] = await testDb()("films").whereIn("id", ids).select("id");
    expect(rows.length).toBe(ids.length);
    await testStore().remove(stranger);
  });
});
