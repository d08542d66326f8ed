// Film records over HTTP: the list and one film, correcting what a file did not say, withdrawing with a
// reason (measurements kept), reference-line calibration, and image serving behind the session.
import { randomUUID } from "node:crypto";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { anonymous, signIn, type Client } from "../support/http";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { closeTestDb, testDb } from "../support/db";
import { cleanupFilmFixtures, closeTestStore, makeDicom, makePng, testStore, uploadOk, type UploadedFilm } from "../support/films";

let team: TestTeam;
let registrar: Client;
let consultant: Client;
let nurse: Client;
let outsider: Client;
let episodeId: string;
let dicomFilm: UploadedFilm;
let pngFilm: UploadedFilm;
let dicomBytes: Buffer;
let pngBytes: Buffer;

async function json<T>(res: Response): Promise<T> {
  return (await res.json()) as T;
}

async function audits(entityId: string, action: string): Promise<{ before: unknown; after: unknown }[]> {
  return (await testDb()("audit_log").where({ entity_id: entityId, action }).select("before", "after").orderBy("id")) as { before: unknown; after: unknown }[];
}

beforeAll(async () => {
  team = await makeTeam("films-rec");
  const other = await makeTeam("films-rec-other");
  const patient = await makePatient(team);
  episodeId = (await makeEpisode(team, patient.id, { presented_on: "2026-11-20" })).id;
  registrar = await signIn(team.users.registrar.email, TEST_PASSWORD);
  consultant = await signIn(team.users.consultant.email, TEST_PASSWORD);
  nurse = await signIn(team.users.nurse.email, TEST_PASSWORD);
  outsider = await signIn(other.users.consultant.email, TEST_PASSWORD);
  // The PNG goes up first (dated now); the DICOM film was taken earlier and must come first in the list.
  pngBytes = await makePng();
  pngFilm = await uploadOk(registrar, episodeId, pngBytes, "portable.png", "image/png");
  // Pixel Spacing only, no Imager Pixel Spacing or calibration type: DICOM PS3.3 10.7 leaves its correction unknown.
  dicomBytes = makeDicom({ "(0028,0030)": "DS [0.143\\0.143]", "(0008,0022)": "DA [20261121]", "(0008,0032)": "TM [093000]" });
  dicomFilm = await uploadOk(registrar, episodeId, dicomBytes, "legacy.dcm", "application/dicom");
});

afterAll(async () => {
  cleanupFilmFixtures();
  closeTestStore();
  await closeTestDb();
});

describe("reading films", () => {
  it("lists the episode's films in the order they were taken, for every clinical role", async () => {
    for (const c of [registrar, consultant, nurse]) {
      const res = await c.get(`/api/episodes/${episodeId}/films`);
      expect(res.status).toBe(200);
      const { films } = await json<{ films: UploadedFilm[] }>(res);
      expect(films.map((f) => f.id)).toEqual([dicomFilm.id, pngFilm.id]);
    }
  });

  it("one film: display size and scale, calibration with its source in words, DICOM attributes without identity", async () => {
    const res = await nurse.get(`/api/films/${dicomFilm.id}`);
    expect(res.status).toBe(200);
    const { film, dicom } = await json<{ film: UploadedFilm; dicom: { meta: Record<string, unknown> } }>(res);
    expect(film.display).toEqual({ width: 256, height: 320, scale: 1 });
    // Pixel Spacing without Imager Pixel Spacing or a calibration type: film plane, correction unknown (DICOM PS3.3 10.7.1.3).
    expect(film.calibration.film).toEqual({ rowMm: 0.143, columnMm: 0.143, source: "pixel-spacing-unverified" });
    expect(film.calibration.correctionUnknown).toBe(true);
    expect(film.calibration.words).toBe("detector plane from Pixel Spacing; correction status unknown");
    expect(dicom.meta.transferSyntaxUid).toBe("1.2.840.10008.1.2.1");
    expect(dicom.meta.modality).toBe("DX");
    expect(JSON.stringify(dicom)).not.toContain("Quillfeather");
  });

  it("another team gets 404 for the film, its image and its calibration; no session gets 401", async () => {
    expect((await outsider.get(`/api/films/${dicomFilm.id}`)).status).toBe(404);
    expect((await outsider.get(`/api/films/${dicomFilm.id}/image?variant=thumb`)).status).toBe(404);
    expect((await outsider.send("PATCH", `/api/films/${pngFilm.id}`, { projection: "AP" })).status).toBe(404);
    expect((await outsider.send("DELETE", `/api/films/${pngFilm.id}`, { reason: "not ours" })).status).toBe(404);
    expect((await outsider.send("POST", `/api/films/${pngFilm.id}/calibration`, { segment: { a: { x: 0, y: 0 }, b: { x: 100, y: 0 } }, knownLengthMm: 10, plane: "film" })).status).toBe(404);
    expect((await anonymous().get(`/api/films/${dicomFilm.id}`)).status).toBe(401);
    expect((await anonymous().get(`/api/films/${dicomFilm.id}/image?variant=display`)).status).toBe(401);
    expect((await registrar.get(`/api/films/${randomUUID()}`)).status).toBe(404);
  });
});

describe("images", () => {
  it("serves the thumbnail, the display image and the original from the store, privately cached", async () => {
    const thumb = await nurse.get(`/api/films/${dicomFilm.id}/image?variant=thumb`);
    expect(thumb.status).toBe(200);
    expect(thumb.headers.get("content-type")).toBe("image/jpeg");
    expect(thumb.headers.get("cache-control")).toBe("private, max-age=3600");
    const thumbBytes = Buffer.from(await thumb.arrayBuffer());
    expect(thumbBytes.equals(await testStore().getBuffer(`films/${dicomFilm.id}/thumb`))).toBe(true);

    const display = await registrar.get(`/api/films/${dicomFilm.id}/image?variant=display`);
    expect(display.headers.get("content-type")).toBe("image/png");
    const meta = await sharp(Buffer.from(await display.arrayBuffer())).metadata();
    expect([meta.width, meta.height]).toEqual([256, 320]);

    const original = await registrar.get(`/api/films/${pngFilm.id}/image?variant=original`);
    expect(original.headers.get("content-disposition")).toBe("attachment; filename*=UTF-8''portable.png");
    expect(Buffer.from(await original.arrayBuffer()).equals(pngBytes)).toBe(true);
  });

  it("answers 304 to a matching ETag, and 400 to an unknown variant", async () => {
    const first = await registrar.get(`/api/films/${pngFilm.id}/image?variant=thumb`);
    const etag = first.headers.get("etag");
    expect(etag).toBeTruthy();
    const again = await registrar.fetch(`/api/films/${pngFilm.id}/image?variant=thumb`, { headers: { "if-none-match": etag ?? "" } });
    expect(again.status).toBe(304);
    const bad = await registrar.get(`/api/films/${pngFilm.id}/image?variant=full`);
    expect(bad.status).toBe(400);
    expect((await json<{ error: { fields: Record<string, string> } }>(bad)).error.fields.variant).toBeTruthy();
  });
});

describe("correcting what the file did not say", () => {
  it("a PNG film takes a date, projection and position from a person; the date is then marked as entered; audited", async () => {
    const res = await registrar.send("PATCH", `/api/films/${pngFilm.id}`, { takenAt: "2026-11-25T14:00:00Z", projection: "AP", position: "supine" });
    expect(res.status).toBe(200);
    const { film } = await json<{ film: UploadedFilm }>(res);
    expect(film.takenAt).toBe("2026-11-25T14:00:00.000Z");
    expect(film.takenAtSource).toBe("entered");
    expect([film.projection, film.position]).toEqual(["AP", "supine"]);
    const trail = await audits(pngFilm.id, "film.update");
    expect(trail).toHaveLength(1);
    expect(trail[0]?.after).toMatchObject({ projection: "AP", position: "supine", taken_at_source: "entered" });
  });

  it("a DICOM film keeps its header date and view; only what the header lacked may be set", async () => {
    const refused = await registrar.send("PATCH", `/api/films/${dicomFilm.id}`, { takenAt: "2026-11-22T10:00:00Z" });
    expect(refused.status).toBe(400);
    expect((await json<{ error: { fields: Record<string, string> } }>(refused)).error.fields.takenAt).toContain("DICOM header");
    // The fixture has no View Position (0018,5101) nor Patient Position (0018,5100).
    const ok = await registrar.send("PATCH", `/api/films/${dicomFilm.id}`, { projection: "PA", position: "erect" });
    expect(ok.status).toBe(200);
    const row: { taken_at: Date; projection: string; position: string } | undefined = await testDb()("films").where({ id: dicomFilm.id }).first("taken_at", "projection", "position");
    expect(row?.taken_at.toISOString()).toBe("2026-11-21T09:30:00.000Z");
    expect([row?.projection, row?.position]).toEqual(["PA", "erect"]);
  });

  it("refuses a date in the future, an unknown projection and an empty change, with field messages", async () => {
    const future = await registrar.send("PATCH", `/api/films/${pngFilm.id}`, { takenAt: new Date(Date.now() + 86_400_000).toISOString() });
    expect(future.status).toBe(400);
    expect((await json<{ error: { fields: Record<string, string> } }>(future)).error.fields.takenAt).toContain("future");
    const projection = await registrar.send("PATCH", `/api/films/${pngFilm.id}`, { projection: "sideways" });
    expect(projection.status).toBe(400);
    expect((await json<{ error: { fields: Record<string, string> } }>(projection)).error.fields.projection).toBeTruthy();
    expect((await registrar.send("PATCH", `/api/films/${pngFilm.id}`, {})).status).toBe(400);
  });

  it("a nurse may read but not correct: 403", async () => {
    expect((await nurse.send("PATCH", `/api/films/${pngFilm.id}`, { projection: "PA" })).status).toBe(403);
  });
});

describe("reference-line calibration", () => {
  it("a 100-pixel line of 50 mm gives 0.5 mm per pixel in the chosen plane (plane geometry); audited", async () => {
    const res = await consultant.send("POST", `/api/films/${pngFilm.id}/calibration`, {
      segment: { a: { x: 20, y: 40 }, b: { x: 120, y: 40 } },
      knownLengthMm: 50,
      plane: "patient",
    });
    expect(res.status).toBe(200);
    const { film } = await json<{ film: UploadedFilm }>(res);
    expect(film.calibration.source).toBe("reference-line");
    expect(film.calibration.words).toBe("reference line 50 mm, patient plane");
    expect(film.calibration.patient).toEqual({ rowMm: 0.5, columnMm: 0.5, source: "reference-line" }); // 50 mm / 100 px
    expect(film.calibration.film).toBeNull();
    const trail = await audits(pngFilm.id, "film.calibrate");
    expect(trail).toHaveLength(1);
    expect(trail[0]?.after).toMatchObject({ calibration_override: { knownLengthMm: 50, plane: "patient", setBy: team.users.consultant.id } });
  });

  it("refuses a line off the film or too short to be trusted, with field messages; a nurse gets 403", async () => {
    const off = await registrar.send("POST", `/api/films/${pngFilm.id}/calibration`, { segment: { a: { x: 10, y: 10 }, b: { x: 900, y: 10 } }, knownLengthMm: 50, plane: "film" });
    expect(off.status).toBe(400);
    expect((await json<{ error: { fields: Record<string, string> } }>(off)).error.fields["segment.b"]).toContain("Outside the film");
    const short = await registrar.send("POST", `/api/films/${pngFilm.id}/calibration`, { segment: { a: { x: 10, y: 10 }, b: { x: 15, y: 10 } }, knownLengthMm: 5, plane: "film" });
    expect(short.status).toBe(400);
    expect((await json<{ error: { fields: Record<string, string> } }>(short)).error.fields.segment).toContain("Too short");
    const zero = await registrar.send("POST", `/api/films/${pngFilm.id}/calibration`, { segment: { a: { x: 10, y: 10 }, b: { x: 110, y: 10 } }, knownLengthMm: 0, plane: "film" });
    expect(zero.status).toBe(400);
    expect((await json<{ error: { fields: Record<string, string> } }>(zero)).error.fields.knownLengthMm).toBeTruthy();
    expect((await nurse.send("POST", `/api/films/${pngFilm.id}/calibration`, { segment: { a: { x: 10, y: 10 }, b: { x: 110, y: 10 } }, knownLengthMm: 50, plane: "film" })).status).toBe(403);
    // The refused attempts changed nothing.
    expect(await audits(pngFilm.id, "film.calibrate")).toHaveLength(1);
  });
});

describe("withdrawing a film", () => {
  it("needs a reason; a nurse may not withdraw", async () => {
    const res = await registrar.send("DELETE", `/api/films/${dicomFilm.id}`, { reason: "" });
    expect(res.status).toBe(400);
    expect((await json<{ error: { fields: Record<string, string> } }>(res)).error.fields.reason).toBeTruthy();
    expect((await nurse.send("DELETE", `/api/films/${dicomFilm.id}`, { reason: "wrong patient" })).status).toBe(403);
  });

  it("keeps the row, the objects and the measurement that refers to it; leaves the list; audited with the reason", async () => {
    // A measurement of the film, written directly: the withdrawal must not touch it.
    const [m] = await testDb()("measurements")
      .insert({
        film_id: dicomFilm.id,
        episode_id: episodeId,
        team_id: team.id,
        chain_id: randomUUID(),
        version: 1,
        reader_id: team.users.registrar.id,
        calipers: JSON.stringify({}),
        plane: "film",
        results: JSON.stringify({}),
        created_by: team.users.registrar.id,
      })
      .returning<{ id: string }[]>("id");
    const res = await registrar.send("DELETE", `/api/films/${dicomFilm.id}`, { reason: "another patient's film" });
    expect(res.status).toBe(200);
    const { film } = await json<{ film: UploadedFilm }>(res);
    expect(film.withdrawn?.reason).toBe("another patient's film");
    expect(film.measurementCount).toBe(1);

    expect(await testDb()("measurements").where({ id: m?.id }).first("id")).toBeTruthy();
    for (const v of ["original", "display", "thumb"]) expect(await testStore().head(`films/${dicomFilm.id}/${v}`)).not.toBeNull();
    const trail = await audits(dicomFilm.id, "film.withdraw");
    expect(trail).toHaveLength(1);
    expect(trail[0]?.after).toMatchObject({ reason: "another patient's film", measurements_kept: 1 });

    const live = await json<{ films: UploadedFilm[] }>(await registrar.get(`/api/episodes/${episodeId}/films`));
    expect(live.films.map((f) => f.id)).toEqual([pngFilm.id]);
    const all = await json<{ films: UploadedFilm[] }>(await registrar.get(`/api/episodes/${episodeId}/films?include=withdrawn`));
    expect(all.films.map((f) => f.id).sort()).toEqual([dicomFilm.id, pngFilm.id].sort());
    // Still readable (the measurement refers to it), image included.
    expect((await registrar.get(`/api/films/${dicomFilm.id}`)).status).toBe(200);
    expect((await registrar.get(`/api/films/${dicomFilm.id}/image?variant=thumb`)).status).toBe(200);
  });

  it("a withdrawn film cannot be changed or withdrawn again (409), and the same file may be uploaded anew", async () => {
    expect((await registrar.send("DELETE", `/api/films/${dicomFilm.id}`, { reason: "again" })).status).toBe(409);
    expect((await registrar.send("PATCH", `/api/films/${dicomFilm.id}`, { position: "supine" })).status).toBe(409);
    expect((await registrar.send("POST", `/api/films/${dicomFilm.id}/calibration`, { segment: { a: { x: 10, y: 10 }, b: { x: 110, y: 10 } }, knownLengthMm: 50, plane: "film" })).status).toBe(409);
    const again = await uploadOk(registrar, episodeId, dicomBytes, "legacy-again.dcm", "application/dicom");
    expect(again.id).not.toBe(dicomFilm.id);
  });
});
