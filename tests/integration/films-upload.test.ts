// The upload route over HTTP against the running app: what is stored (rows and all three objects,
// checked in PostgreSQL and the object store directly), and what is refused with nothing stored.
import { request as httpRequest } from "node:http";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { anonymous, baseUrl, signIn, type Client } from "../support/http";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { closeTestDb, testDb } from "../support/db";
import {
  cleanupFilmFixtures,
  closeTestStore,
  listKeys,
  makeDicom,
  makePng,
  storedSnapshot,
  testStore,
  uploadFilm,
  uploadOk,
} from "../support/films";

let team: TestTeam;
let other: TestTeam;
let registrar: Client;
let nurse: Client;
let outsider: Client;
let episodeId: string;

/** Imager Pixel Spacing 0.15 mm (a common CR/DX detector pitch: common practice), PA, taken 21 Nov 2026 09:30. */
const PA_FILM = {
  "(0018,1164)": "DS [0.150\\0.150]",
  "(0018,5101)": "CS [PA]",
  "(0008,0022)": "DA [20261121]",
  "(0008,0032)": "TM [093000]",
};

async function errorOf(res: Response): Promise<{ code: string; message: string; details?: Record<string, unknown> }> {
  const body = (await res.json()) as { error: { code: string; message: string; details?: Record<string, unknown> } };
  return body.error;
}

beforeAll(async () => {
  team = await makeTeam("films-up");
  other = await makeTeam("films-up-other");
  const patient = await makePatient(team);
  episodeId = (await makeEpisode(team, patient.id, { presented_on: "2026-11-20" })).id;
  registrar = await signIn(team.users.registrar.email, TEST_PASSWORD);
  nurse = await signIn(team.users.nurse.email, TEST_PASSWORD);
  outsider = await signIn(other.users.registrar.email, TEST_PASSWORD);
});

afterAll(async () => {
  cleanupFilmFixtures();
  closeTestStore();
  await closeTestDb();
});

describe("upload of a DICOM film and a PNG export", () => {
  it("stores the row, the audit row and all three objects, the original byte for byte", async () => {
    const dicom = makeDicom(PA_FILM);
    const png = await makePng();
    const d = await uploadOk(registrar, episodeId, dicom, "chest pa.dcm", "application/dicom");
    const p = await uploadOk(registrar, episodeId, png, "ward photo.png", "image/png");

    // The DICOM film: date from the header (09:30 GMT = 09:30Z; UK winter time, common practice), PA from View Position.
    expect(d.kind).toBe("dicom");
    expect(d.takenAt).toBe("2026-11-21T09:30:00.000Z");
    expect(d.takenAtSource).toBe("dicom");
    expect(d.projection).toBe("PA");
    expect([d.rows, d.columns]).toEqual([320, 256]);
    // Imager Pixel Spacing is the detector (film) plane spacing (DICOM PS3.3 10.7.1.3).
    expect(d.calibration.source).toBe("dicom");
    expect(d.calibration.film).toEqual({ rowMm: 0.15, columnMm: 0.15, source: "imager-pixel-spacing" });
    expect(d.calibration.words).toBe("detector plane from Imager Pixel Spacing");
    expect(d.display).toEqual({ width: 256, height: 320, scale: 1 });

    // The PNG: no calibration, dated by its upload until a person confirms it.
    expect(p.kind).toBe("image");
    expect(p.takenAtSource).toBe("upload");
    expect(Math.abs(Date.parse(p.takenAt ?? "") - Date.now())).toBeLessThan(120_000);
    expect(p.calibration.source).toBe("none");
    expect(p.calibration.words).toBe("no calibration: Light index only");
    expect(p.editable).toEqual({ takenAt: true, projection: true, position: true });

    const rows = await testDb()("films").where({ episode_id: episodeId }).whereIn("id", [d.id, p.id]).select("id", "original_key", "display_key", "thumb_key", "uploaded_by", "filename", "size_bytes", "team_id");
    expect(rows).toHaveLength(2);
    for (const row of rows as { id: string; original_key: string; display_key: string; thumb_key: string; uploaded_by: string; team_id: string }[]) {
      expect(row.uploaded_by).toBe(team.users.registrar.id);
      expect(row.team_id).toBe(team.id);
      expect([row.original_key, row.display_key, row.thumb_key]).toEqual([`films/${row.id}/original`, `films/${row.id}/display`, `films/${row.id}/thumb`]);
      for (const key of [row.original_key, row.display_key, row.thumb_key]) expect(await testStore().head(key), key).not.toBeNull();
      const audits = await testDb()("audit_log").where({ entity_id: row.id, action: "film.upload" }).count<{ count: string }[]>({ count: "*" });
      expect(Number(audits[0]?.count)).toBe(1);
    }
    expect((await testStore().getBuffer(`films/${d.id}/original`)).equals(dicom)).toBe(true);
    expect((await testStore().getBuffer(`films/${p.id}/original`)).equals(png)).toBe(true);
    expect((await testStore().head(`films/${d.id}/display`))?.contentType).toBe("image/png");
    expect((await testStore().head(`films/${d.id}/thumb`))?.contentType).toBe("image/jpeg");
  });

  it("keeps no patient identifier from the DICOM header in the row", async () => {
    const film = await uploadOk(registrar, episodeId, makeDicom(PA_FILM), "id-check.dcm", "application/dicom");
    const row: { dicom: unknown; spacing_attrs: unknown } | undefined = await testDb()("films").where({ id: film.id }).first("dicom", "spacing_attrs");
    const stored = JSON.stringify(row);
    // The invented identity dcmtk wrote into every fixture (tests/support/dicom-fixtures.ts).
    for (const value of ["Quillfeather", "RW-TEST-40417", "19610229", "ACC-55512", "Larkmoor Test Infirmary"]) expect(stored).not.toContain(value);
  });

  it("answers 409 for the same bytes on the same episode, naming the first film's date and id, and stores nothing more", async () => {
    const bytes = makeDicom(PA_FILM);
    const first = await uploadOk(registrar, episodeId, bytes, "first.dcm", "application/dicom");
    const before = await storedSnapshot(episodeId);
    const res = await uploadFilm(registrar, episodeId, bytes, "again.dcm", "application/dicom");
    expect(res.status).toBe(409);
    const err = await errorOf(res);
    expect(err.message).toContain("21 Nov 2026, 09:30");
    expect(err.details?.filmId).toBe(first.id);
    expect(await storedSnapshot(episodeId)).toEqual(before);
  });

  it("accepts the same bytes on another episode of the team (the duplicate check is per episode)", async () => {
    const bytes = await makePng();
    await uploadOk(registrar, episodeId, bytes, "a.png", "image/png");
    const patient = await makePatient(team);
    const second = (await makeEpisode(team, patient.id)).id;
    await uploadOk(registrar, second, bytes, "a.png", "image/png");
  });
});

describe("refusals store nothing", () => {
  const refusals: [string, () => Promise<{ bytes: Buffer; type: string; name: string }>, number][] = [
    ["a truncated DICOM", async () => ({ bytes: makeDicom(PA_FILM).subarray(0, 1500), type: "application/dicom", name: "cut.dcm" }), 422],
    ["a DICOM whose pixel data stops early", async () => {
      const full = makeDicom(PA_FILM);
      return { bytes: full.subarray(0, full.length - 4000), type: "application/dicom", name: "short-pixels.dcm" };
    }, 422],
    ["a file named .dcm without the DICM prefix", async () => ({ bytes: Buffer.alloc(4096, 7), type: "application/dicom", name: "fake.dcm" }), 422],
    ["a text file", async () => ({ bytes: Buffer.from("chest film notes, not an image\n".repeat(20)), type: "text/plain", name: "notes.txt" }), 415],
    ["a corrupt PNG", async () => {
      const png = await makePng();
      const broken = Buffer.from(png);
      broken.fill(0, 60, 400);
      return { bytes: broken, type: "image/png", name: "broken.png" };
    }, 422],
    ["an empty body", async () => ({ bytes: Buffer.alloc(0), type: "application/dicom", name: "empty.dcm" }), 422],
  ];

  for (const [what, make, status] of refusals) {
    it(`${what}: ${status} with a message, no row and no object`, async () => {
      const { bytes, type, name } = await make();
      const before = await storedSnapshot(episodeId);
      const res = await uploadFilm(registrar, episodeId, bytes, name, type);
      expect(res.status).toBe(status);
      const err = await errorOf(res);
      expect(err.message.length).toBeGreaterThan(10);
      expect(err.message).not.toMatch(/stack|at .*\.ts:\d+/);
      expect(await storedSnapshot(episodeId)).toEqual(before);
    });
  }

  it("an unsupported transfer syntax: 415 naming it (RLE Lossless, DICOM PS3.5 annex G), nothing stored", async () => {
    const bytes = makeDicom(PA_FILM, "rle");
    const before = await storedSnapshot(episodeId);
    const res = await uploadFilm(registrar, episodeId, bytes, "rle.dcm", "application/dicom");
    expect(res.status).toBe(415);
    const err = await errorOf(res);
    // RLE Lossless is 1.2.840.10008.1.2.5 (DICOM PS3.5 annex A.4.2 / G).
    expect(err.message).toContain("1.2.840.10008.1.2.5");
    expect(err.message).toContain("RLE Lossless");
    expect(err.details?.transferSyntaxUid).toBe("1.2.840.10008.1.2.5");
    expect(await storedSnapshot(episodeId)).toEqual(before);
  });

  it("a multipart form instead of the file: 415 explaining how to send it", async () => {
    const form = new FormData();
    form.append("file", new Blob([new Uint8Array(await makePng())], { type: "image/png" }), "x.png");
    const res = await registrar.fetch(`/api/episodes/${episodeId}/films`, { method: "POST", body: form });
    expect(res.status).toBe(415);
    expect((await errorOf(res)).message).toContain("X-Film-Filename");
  });
});

/** Sends a POST with the given headers and writes `body` chunks until the server answers; returns the status. */
function rawPost(path: string, headers: Record<string, string>, chunks: () => Buffer | null): Promise<{ status: number; body: string; sent: number }> {
  return new Promise((resolve, reject) => {
    const url = new URL(path, baseUrl());
    let sent = 0;
    let answered = false;
    // A connection of its own (agent: false): a refused body must never leave a half-sent request on a shared socket.
    const req = httpRequest({ host: url.hostname, port: url.port, path: url.pathname, method: "POST", headers, agent: false }, (res) => {
      answered = true;
      let body = "";
      res.setEncoding("utf8");
      res.on("data", (c: string) => (body += c));
      res.on("end", () => {
        req.destroy();
        resolve({ status: res.statusCode ?? 0, body, sent });
      });
    });
    req.on("error", (e) => {
      if (!answered) reject(e);
    });
    const pump = () => {
      while (!answered) {
        const chunk = chunks();
        if (!chunk) {
          req.end();
          return;
        }
        sent += chunk.length;
        if (!req.write(chunk)) {
          req.once("drain", pump);
          return;
        }
      }
    };
    pump();
  });
}

describe("size limit (FILM_MAX_BYTES, 100 MB by default)", () => {
  const LIMIT = 100 * 1024 * 1024; // the default in lib/films/store-film.ts; npm test does not set FILM_MAX_BYTES

  it("refuses at once with 413 when Content-Length is over the limit, before reading the body", async () => {
    const before = await storedSnapshot(episodeId);
    let given = 0;
    const res = await rawPost(
      `/api/episodes/${episodeId}/films`,
      { cookie: registrar.cookie, "content-type": "application/dicom", "content-length": String(LIMIT + 1), "x-film-filename": "huge.dcm" },
      // Sends 64 KB, then waits: the answer must come without the rest of the body.
      () => (given++ === 0 ? Buffer.alloc(65_536) : null),
    ).catch((e: unknown) => ({ status: -1, body: String(e), sent: 0 }));
    expect(res.status).toBe(413);
    expect(res.body).toContain("100 MB");
    expect(await storedSnapshot(episodeId)).toEqual(before);
  });

  it("stops reading a streamed body (no Content-Length) once it passes the limit: 413", async () => {
    const before = await storedSnapshot(episodeId);
    const chunk = Buffer.alloc(1024 * 1024, 1);
    let chunksSent = 0;
    const res = await rawPost(
      `/api/episodes/${episodeId}/films`,
      { cookie: registrar.cookie, "content-type": "application/dicom", "transfer-encoding": "chunked", "x-film-filename": "endless.dcm" },
      () => (chunksSent++ < 400 ? chunk : null), // up to 400 MB, far past the limit
    );
    expect(res.status, res.body).toBe(413);
    // It answered once the stream passed the limit, not after everything was sent.
    expect(res.sent).toBeLessThan(400 * 1024 * 1024);
    expect(await storedSnapshot(episodeId)).toEqual(before);
  });
});

describe("who may upload", () => {
  it("a nurse may not upload: 403, nothing stored", async () => {
    const before = await storedSnapshot(episodeId);
    const res = await uploadFilm(nurse, episodeId, await makePng(), "n.png", "image/png");
    expect(res.status).toBe(403);
    expect(await storedSnapshot(episodeId)).toEqual(before);
  });

  it("another team's registrar gets 404 for this episode, for upload and for the list", async () => {
    const before = await storedSnapshot(episodeId);
    expect((await uploadFilm(outsider, episodeId, await makePng(), "o.png", "image/png")).status).toBe(404);
    expect((await outsider.get(`/api/episodes/${episodeId}/films`)).status).toBe(404);
    expect(await storedSnapshot(episodeId)).toEqual(before);
  });

  it("without a session: 401", async () => {
    const before = await storedSnapshot(episodeId);
    expect((await uploadFilm(anonymous(), episodeId, await makePng(), "a.png", "image/png")).status).toBe(401);
    expect((await anonymous().get(`/api/episodes/${episodeId}/films`)).status).toBe(401);
    expect(await storedSnapshot(episodeId)).toEqual(before);
  });

  it("an episode id that is not a uuid: 400", async () => {
    expect((await uploadFilm(registrar, "not-an-id", await makePng(), "a.png", "image/png")).status).toBe(400);
  });

  it("every object under films/ of this episode belongs to a row", async () => {
    const idRows: { id: string }[] = await testDb()("films").where({ episode_id: episodeId }).select("id");
    const ids = new Set(idRows.map((r) => r.id));
    const keys = await listKeys();
    const mine = keys.filter((k) => ids.has(k.split("/")[1] ?? ""));
    expect(mine.length).toBe(ids.size * 3);
  });
});
