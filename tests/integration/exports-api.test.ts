// The episode's outputs over HTTP against the running app: the letter read back with pdf.js, the FHIR
// bundle checked against the FHIR R4 JSON schema, and both CSV files read back with csv-parse. Figures
// come from a caliper set measured through the measurements API at a known pixel spacing, so each
// check value is a published formula applied to known lengths. Then the role matrix of these routes.
import { randomUUID } from "node:crypto";
import { createRequire } from "node:module";
import { dirname, join } from "node:path";
import JSONSchemaValidator from "@asymmetrik/fhir-json-schema-validator";
import { parse } from "csv-parse/sync";
import type { Bundle, Observation, Patient } from "fhir/r4";
import { getDocument } from "pdfjs-dist/legacy/build/pdf.mjs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { calibrationFromDicom } from "../../measure";
import { anonymous, signIn, type Client } from "../support/http";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { closeTestDb, testDb } from "../support/db";

const standardFontDataUrl = `${join(dirname(createRequire(import.meta.url).resolve("pdfjs-dist/package.json")), "standard_fonts")}/`;
const tag = randomUUID().slice(0, 6);

/** At 0.2 mm a pixel: hemithorax 100 mm, lung 77 mm, apex 4.0 cm, upper 2.5 cm, lower 1.0 cm, hilum 2.2 cm. */
const CALIPERS = {
  hemithorax: { a: { x: 100, y: 800 }, b: { x: 600, y: 800 } },
  lung: { a: { x: 215, y: 800 }, b: { x: 600, y: 800 } },
  apex: { a: { x: 400, y: 500 }, b: { x: 400, y: 300 } },
  upper: { a: { x: 230, y: 675 }, b: { x: 105, y: 675 } },
  lower: { a: { x: 160, y: 1025 }, b: { x: 110, y: 1025 } },
  hilum: { a: { x: 210, y: 805 }, b: { x: 100, y: 805 } },
};
/** A smaller pneumothorax on the second film: apex 2.0 cm, upper 1.0 cm, lower 0.6 cm (no Light, no hilum). */
const SMALLER = {
  apex: { a: { x: 400, y: 400 }, b: { x: 400, y: 300 } },
  upper: { a: { x: 155, y: 675 }, b: { x: 105, y: 675 } },
  lower: { a: { x: 140, y: 1025 }, b: { x: 110, y: 1025 } },
};

let team: TestTeam;
let other: TestTeam;
const as: Record<string, Client> = {};
let episodeId: string;
let hospitalNumber: string;
let signedId: string;
let draftId: string;

async function makeFilm(takenAt: string): Promise<string> {
  const id = randomUUID();
  await testDb()("films").insert({
    id, episode_id: episodeId, team_id: team.id, kind: "dicom", original_key: `films/${id}/original`, display_key: `films/${id}/display`, thumb_key: `films/${id}/thumb`,
    content_type: "application/dicom", filename: `export-${tag}.dcm`, size_bytes: 1000, sha256: id.replace(/-/g, "").padEnd(64, "0"), taken_at: takenAt,
    projection: "PA", position: "erect", rows: 1500, columns: 1300, display_width: 1300, display_height: 1500, display_scale: 1,
    // Imager Pixel Spacing (0018,1164) 0.2\0.2 mm: detector plane (DICOM PS3.3 10.7.1.3)
    calibration: JSON.stringify(calibrationFromDicom({ imagerPixelSpacingMm: [0.2, 0.2] })),
  });
  return id;
}

async function measure(filmId: string, calipers: object): Promise<string> {
  const res = await as.registrar!.send("POST", `/api/films/${filmId}/measurements`, { calipers, plane: "film" });
  expect(res.status, await res.clone().text()).toBe(201);
  return ((await res.json()) as { measurement: { id: string } }).measurement.id;
}

async function pdfTextOf(res: Response): Promise<string> {
  const pdf = await getDocument({ data: new Uint8Array(await res.arrayBuffer()), isEvalSupported: false, standardFontDataUrl }).promise;
  const out: string[] = [];
  for (let i = 1; i <= pdf.numPages; i += 1) {
    const content = await (await pdf.getPage(i)).getTextContent();
    out.push(content.items.map((it) => ("str" in it ? it.str : "")).join(" "));
  }
  await pdf.destroy();
  return out.join("\n").replace(/\s+/g, " ");
}

/**
 * GET with one retry when the server closed an idle kept-alive connection just as it was reused (Node's
 * keepAliveTimeout is 5 s; reading a PDF or compiling the FHIR schema here can take longer than that).
 */
async function get(c: Client, path: string): Promise<Response> {
  try {
    return await c.get(path);
  } catch (err) {
    if (err instanceof TypeError && /fetch failed/.test(err.message)) return c.get(path);
    throw err;
  }
}

const near = (actual: unknown, expected: number, tolerance: number) => expect(Math.abs(Number(actual) - expected), `${String(actual)} vs ${expected}`).toBeLessThanOrEqual(tolerance);

beforeAll(async () => {
  team = await makeTeam("exports");
  other = await makeTeam("exports-other");
  for (const r of ["registrar", "consultant", "nurse", "admin"] as const) as[r] = await signIn(team.users[r].email, TEST_PASSWORD);
  as.outsider = await signIn(other.users.registrar.email, TEST_PASSWORD);
  const patient = await makePatient(team, { family_name: `Brannagh-Okafor${tag}`, given_name: "Niamh", sex: "female", date_of_birth: "1998-02-03" });
  hospitalNumber = patient.hospitalNumber;
  episodeId = (await makeEpisode(team, patient.id, { presented_on: "2026-11-01", management: "chest-drain", notes: `Free text note ${tag}, not for export`, follow_up_protocol: "drain" })).id;

  const film1 = await makeFilm("2026-11-01T10:00:00Z");
  signedId = await measure(film1, CALIPERS);
  const signed = await as.consultant!.send("POST", `/api/measurements/${signedId}/sign-off`);
  expect(signed.status, await signed.clone().text()).toBe(200);

  const film2 = await makeFilm("2026-11-04T10:00:00Z");
  const first = await measure(film2, { ...SMALLER, apex: { a: { x: 400, y: 420 }, b: { x: 400, y: 300 } } });
  // a second version of the same reading: the first is superseded (kept in the CSV, left out of FHIR)
  const v2 = await as.registrar!.send("PUT", `/api/measurements/${first}`, { calipers: SMALLER, plane: "film", basedOnVersion: 1, reason: `Redrawn apex ${tag}` });
  expect(v2.status, await v2.clone().text()).toBe(200);
  draftId = ((await v2.json()) as { measurement: { id: string } }).measurement.id;

  const drain = await as.registrar!.send("POST", `/api/episodes/${episodeId}/drains`, {
    insertedAt: "2026-11-01T11:00:00Z", insertedBy: "Dr Imani Castellanos", sizeFr: 12, site: `Drain site ${tag}`, technique: "seldinger", indication: "air", drainage: "underwater-seal", suctionOn: false,
  });
  expect(drain.status, await drain.clone().text()).toBe(201);
  await testDb()("bookings").insert({ episode_id: episodeId, team_id: team.id, scheduled_at: "2026-11-20T09:30:00Z", location: `Larkmoor radiology ${tag}`, created_by: team.users.nurse.id });
});
afterAll(closeTestDb);

describe("letter (PDF)", () => {
  it("is a PDF for the team with the patient, the figures, their calibration, the chart, the booking and the cautions", async () => {
    const res = await get(as.nurse!, `/api/episodes/${episodeId}/letter`);
    expect(res.status).toBe(200);
    expect(res.headers.get("content-type")).toBe("application/pdf");
    expect(res.headers.get("content-disposition")).toMatch(/attachment; filename="rimwatch-letter-/);
    const text = await pdfTextOf(res);
    expect(text).toContain(`Niamh Brannagh-Okafor${tag}`);
    expect(text).toContain(hospitalNumber);
    // Light 100 x (1 - 0.77^3) = 54.3 % (Light RW, Pleural Diseases)
    expect(text).toContain("54.3");
    // Collins 4.2 + 4.7 x (4.0 + 2.5 + 1.0) = 39.45 %, printed to one decimal (Collins CD et al., AJR 1995)
    expect(text).toMatch(/39\.[45]\b/);
    // Rhea nomogram at AID 2.5 cm = 27 % (Rhea JT et al., Radiology 1982, as tabulated by Wyatt JP et al. 1999)
    expect(text).toContain("27.0");
    // Collins 4.2 + 4.7 x (2.0 + 1.0 + 0.6) = 21.12 % on the second film (Collins 1995)
    expect(text).toContain("21.1");
    expect(text).toContain("detector (film) plane, from Imager Pixel Spacing (0018,1164)");
    expect(text).toContain("Days since the first film");
    expect(text).toContain(`Larkmoor radiology ${tag}`);
    expect(text).toContain("12 Fr");
    expect(text).toContain("Estimates support, and never replace, clinical judgement");
    expect(text).not.toContain(`Free text note ${tag}`);
    const audit = await testDb()("audit_log").where({ entity_id: episodeId, action: "export.letter", actor_id: team.users.nurse.id }).count<{ c: string }[]>({ c: "*" });
    expect(Number(audit[0]?.c)).toBe(1);
  });
});

describe("FHIR bundle", () => {
  it("validates against the FHIR R4 JSON schema and carries the current figures only", async () => {
    const res = await get(as.registrar!, `/api/episodes/${episodeId}/fhir`);
    expect(res.status).toBe(200);
    expect(res.headers.get("content-type")).toMatch(/^application\/fhir\+json/);
    const bundle = (await res.json()) as Bundle;
    // HL7 FHIR R4 (4.0) JSON schema
    expect(new JSONSchemaValidator().validate(bundle, true)).toEqual([]);
    expect(bundle.type).toBe("collection");
    const resources = (bundle.entry ?? []).map((e) => e.resource);
    const patient = resources.find((r): r is Patient => r?.resourceType === "Patient");
    expect(patient?.identifier?.[0]?.value).toBe(hospitalNumber);
    const obs = resources.filter((r): r is Observation => r?.resourceType === "Observation");
    const ids = new Set(obs.map((o) => o.identifier?.[0]?.value?.split("/")[0]));
    expect([...ids].sort()).toEqual([signedId, draftId].sort());
    // film 1: Light, Rhea, Collins, hilum, apex = 5; film 2 (v2): Rhea, Collins, apex = 3
    expect(obs).toHaveLength(8);
    const pick = (m: string, code: string) => obs.find((o) => o.identifier?.[0]?.value === `${m}/${code}`);
    // Collins 39.45 % (Collins 1995), rounded to 0.1 in the bundle
    near(pick(signedId, "collins-percent")?.valueQuantity?.value, 39.45, 0.051);
    expect(pick(signedId, "collins-percent")?.status).toBe("final");
    expect(pick(signedId, "collins-percent")?.effectiveDateTime).toBe("2026-11-01T10:00:00.000Z");
    // 110 px x 0.2 mm = 2.2 cm at the hilum (DICOM Imager Pixel Spacing, detector plane)
    expect(pick(signedId, "interpleural-distance-hilum")?.valueQuantity).toMatchObject({ value: 2.2, unit: "cm", system: "http://unitsofmeasure.org", code: "cm" });
    // Collins 21.12 % on film 2, not signed off -> preliminary (FHIR R4 observation-status)
    near(pick(draftId, "collins-percent")?.valueQuantity?.value, 21.12, 0.051);
    expect(pick(draftId, "collins-percent")?.status).toBe("preliminary");
    expect(pick(draftId, "light-index")).toBeUndefined();
  });
});

describe("audit CSV", () => {
  it("lists the team's episodes with coded fields and figures, without free text", async () => {
    const res = await get(as.consultant!, "/api/exports/episodes.csv");
    expect(res.status).toBe(200);
    expect(res.headers.get("content-type")).toBe("text/csv; charset=utf-8");
    const text = await res.text();
    expect(text).not.toContain(`Free text note ${tag}`);
    expect(text).not.toContain(`Drain site ${tag}`);
    const rows = parse<Record<string, string>>(text, { columns: true, bom: true });
    const row = rows.find((r) => r.episode_id === episodeId);
    expect(row).toBeDefined();
    expect(row?.hospital_number).toBe(hospitalNumber);
    expect(row?.films).toBe("2");
    expect(row?.measured_films).toBe("2");
    expect(row?.primary_method).toBe("collins");
    // Collins 39.45 % then 21.12 % (Collins 1995)
    near(row?.first_percent, 39.45, 0.051);
    near(row?.latest_percent, 21.12, 0.051);
    expect(row?.drains).toBe("1");
    // 1998-02-03 to 2026-11-01: 28 years (arithmetic)
    expect(row?.age_at_presentation).toBe("28");
  });

  it("lists every version of the measurements with current and sign-off, without reasons", async () => {
    const res = await get(as.registrar!, `/api/exports/measurements.csv?episodeId=${episodeId}`);
    expect(res.status).toBe(200);
    const text = await res.text();
    expect(text).not.toContain(`Redrawn apex ${tag}`);
    const rows = parse<Record<string, string>>(text, { columns: true, bom: true });
    expect(rows).toHaveLength(3);
    const signed = rows.find((r) => r.measurement_id === signedId);
    expect(signed?.current).toBe("yes");
    expect(signed?.signed_off_by).toBeTruthy();
    expect(signed?.calibration_source).toBe("imager-pixel-spacing");
    // Light 54.35 % (Light RW); Rhea 27 % (Rhea 1982 nomogram); apex 4.0 cm, hilum 2.2 cm at 0.2 mm a pixel
    near(signed?.light_percent, 54.35, 0.051);
    near(signed?.rhea_percent, 27, 0.001);
    near(signed?.apex_cm, 4.0, 0.001);
    near(signed?.hilum_cm, 2.2, 0.001);
    // BTS 2010: >= 2 cm at the hilum is large; ACCP 2001: >= 3 cm apex to cupola is large
    expect(signed?.bts_2010_class).toBe("large");
    expect(signed?.accp_2001_class).toBe("large");
    const film2 = rows.filter((r) => r.measurement_id !== signedId).sort((a, b) => Number(a.version) - Number(b.version));
    expect(film2.map((r) => [r.version, r.current])).toEqual([["1", "no"], ["2", "yes"]]);
  });

  it("answers 400 with a field message for a bad filter", async () => {
    const res = await get(as.registrar!, "/api/exports/episodes.csv?from=2026-12-01&to=2026-11-01");
    expect(res.status).toBe(400);
    expect(((await res.json()) as { error: { fields: Record<string, string> } }).error.fields.to).toBeTruthy();
    expect((await get(as.registrar!, "/api/exports/measurements.csv?from=yesterday")).status).toBe(400);
  });
});

describe("role matrix of the export routes", () => {
  const routes = () => [`/api/episodes/${episodeId}/letter`, `/api/episodes/${episodeId}/fhir`, "/api/exports/episodes.csv", "/api/exports/measurements.csv"];

  it("401 without a session; registrar, consultant and nurse read (export.read); admin 403", async () => {
    for (const path of routes()) {
      expect((await get(anonymous(), path)).status, path).toBe(401);
      for (const r of ["registrar", "consultant", "nurse"]) expect((await get(as[r]!, path)).status, `${r} ${path}`).toBe(200);
      expect((await get(as.admin!, path)).status, `admin ${path}`).toBe(403);
    }
  });

  it("another team gets 404 for the episode and none of its rows in their CSV", async () => {
    expect((await get(as.outsider!, `/api/episodes/${episodeId}/letter`)).status).toBe(404);
    expect((await get(as.outsider!, `/api/episodes/${episodeId}/fhir`)).status).toBe(404);
    for (const path of ["/api/exports/episodes.csv", `/api/exports/measurements.csv?episodeId=${episodeId}`]) {
      const res = await get(as.outsider!, path);
      expect(res.status).toBe(200);
      const text = await res.text();
      expect(text).not.toContain(hospitalNumber);
      expect(text).not.toContain(episodeId);
    }
  });
});
