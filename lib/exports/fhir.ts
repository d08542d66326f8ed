// The episode's current measurements as a FHIR R4 Bundle (type collection): one Observation per figure,
// the Patient they are about, and the local CodeSystem that names the figures.
//
// Codes: Rimwatch knows no LOINC or SNOMED CT code for "pneumothorax size by the Light index / Rhea /
// Collins" or for the guideline distances, so the figures are coded in a local CodeSystem. Standard
// codes are used only where the concept surely has one: the observation category 'imaging'
// (FHIR R4 observation-category), UCUM units, FHIR administrative gender, and SNOMED CT right and left
// lung structure for the body site (3341006, 44029006: from memory).
import { createHash } from "node:crypto";
import type { Bundle, BundleEntry, CodeSystem, Observation, Patient } from "fhir/r4";
import type { EpisodeExport, ExportMeasurement } from "./episode-data";
import { calibrationWords, METHOD_WORDS } from "./words";

export const MEASURE_SYSTEM = "https://rimwatch.example/fhir/CodeSystem/measure";
export const HOSPITAL_NUMBER_SYSTEM = "https://rimwatch.example/fhir/sid/hospital-number";
export const MEASUREMENT_ID_SYSTEM = "https://rimwatch.example/fhir/sid/measurement";
export const EPISODE_ID_SYSTEM = "https://rimwatch.example/fhir/sid/episode";
const UCUM = "http://unitsofmeasure.org";
const SNOMED = "http://snomed.info/sct";

export const MEASURE_CODES = {
  "light-index": { display: "Pneumothorax size, Light index", unit: "%", digits: 1, pick: (m: ExportMeasurement) => m.light, method: METHOD_WORDS.light },
  "rhea-percent": { display: "Pneumothorax size, Rhea nomogram", unit: "%", digits: 1, pick: (m: ExportMeasurement) => m.rhea, method: METHOD_WORDS.rhea },
  "collins-percent": { display: "Pneumothorax size, Collins method", unit: "%", digits: 1, pick: (m: ExportMeasurement) => m.collins, method: METHOD_WORDS.collins },
  "interpleural-distance-hilum": { display: "Interpleural distance at the level of the hilum", unit: "cm", digits: 2, pick: (m: ExportMeasurement) => m.hilumCm, method: METHOD_WORDS.hilum },
  "apex-cupola-distance": { display: "Lung apex to thoracic cupola distance", unit: "cm", digits: 2, pick: (m: ExportMeasurement) => m.apexCm, method: METHOD_WORDS.apex },
} as const;
export type MeasureCode = keyof typeof MEASURE_CODES;

/** SNOMED CT body structures (from memory): right lung structure 3341006, left lung structure 44029006. */
const LUNG_SITE = {
  right: { code: "3341006", display: "Right lung structure" },
  left: { code: "44029006", display: "Left lung structure" },
} as const;

/** A stable name-based UUID (RFC 4122 version 5 layout over SHA-1), so the same figure keeps its id. */
export function nameUuid(name: string): string {
  const h = createHash("sha1").update(`rimwatch:${name}`).digest();
  h[6] = ((h[6] ?? 0) & 0x0f) | 0x50;
  h[8] = ((h[8] ?? 0) & 0x3f) | 0x80;
  const x = h.subarray(0, 16).toString("hex");
  return `${x.slice(0, 8)}-${x.slice(8, 12)}-${x.slice(12, 16)}-${x.slice(16, 20)}-${x.slice(20, 32)}`;
}

const GENDERS = new Set(["male", "female", "other", "unknown"]);
const roundTo = (v: number, digits: number) => Math.round(v * 10 ** digits) / 10 ** digits;

export function buildEpisodeBundle(data: EpisodeExport, now: Date): Bundle {
  const { patient, episode } = data;
  const patientUuid = nameUuid(`patient:${patient.id}`);
  const patientResource: Patient = {
    resourceType: "Patient",
    id: patientUuid,
    identifier: [{ use: "usual", system: HOSPITAL_NUMBER_SYSTEM, value: patient.hospital_number, ...(data.hospital ? { assigner: { display: data.hospital } } : {}) }],
    name: [{ family: patient.family_name, given: [patient.given_name] }],
    gender: (GENDERS.has(patient.sex) ? patient.sex : "unknown") as Patient["gender"],
    birthDate: patient.date_of_birth,
  };

  const codeSystemUuid = nameUuid("codesystem:measure");
  const codeSystem: CodeSystem = {
    resourceType: "CodeSystem",
    id: codeSystemUuid,
    url: MEASURE_SYSTEM,
    name: "RimwatchMeasure",
    title: "Rimwatch pneumothorax size figures",
    status: "active",
    content: "complete",
    caseSensitive: true,
    concept: (Object.keys(MEASURE_CODES) as MeasureCode[]).map((code) => ({ code, display: MEASURE_CODES[code].display, definition: MEASURE_CODES[code].method })),
  };

  const site = LUNG_SITE[episode.side];
  const observations: Observation[] = [];
  for (const m of data.measurements) {
    for (const code of Object.keys(MEASURE_CODES) as MeasureCode[]) {
      const spec = MEASURE_CODES[code];
      const value = spec.pick(m);
      if (value === null) continue;
      const calibration = code === "light-index" ? "ratio of widths on one line, needs no calibration" : calibrationWords(m.plane, m.calibrationSource);
      const view = [m.film.position, m.film.projection].filter(Boolean).join(" ");
      observations.push({
        resourceType: "Observation",
        id: nameUuid(`observation:${m.id}:${code}`),
        identifier: [{ system: MEASUREMENT_ID_SYSTEM, value: `${m.id}/${code}` }],
        status: m.signedOffAt ? "final" : "preliminary",
        category: [{ coding: [{ system: "http://terminology.hl7.org/CodeSystem/observation-category", code: "imaging", display: "Imaging" }] }],
        code: { coding: [{ system: MEASURE_SYSTEM, code, display: spec.display }], text: spec.display },
        subject: { reference: `urn:uuid:${patientUuid}`, display: `${patient.given_name} ${patient.family_name}` },
        ...(m.film.takenAt ? { effectiveDateTime: new Date(m.film.takenAt).toISOString() } : {}),
        issued: new Date(m.signedOffAt ?? m.createdAt).toISOString(),
        performer: [{ display: m.readerName }],
        valueQuantity: { value: roundTo(value, spec.digits), unit: spec.unit, system: UCUM, code: spec.unit },
        bodySite: { coding: [{ system: SNOMED, code: site.code, display: site.display }], text: `${episode.side} lung` },
        method: {
          text: `${spec.method}. Calibration: ${calibration}. ${view ? `Film: ${view}. ` : ""}Reading by ${m.readerName}, version ${m.version}${
            m.signedOffAt ? `, signed off${m.signedOffByName ? ` by ${m.signedOffByName}` : ""}` : ", not signed off"
          }.`,
        },
      });
    }
  }

  const entries: BundleEntry[] = [
    { fullUrl: `urn:uuid:${patientUuid}`, resource: patientResource },
    { fullUrl: `urn:uuid:${codeSystemUuid}`, resource: codeSystem },
    ...observations.map((o) => ({ fullUrl: `urn:uuid:${o.id ?? ""}`, resource: o })),
  ];
  return {
    resourceType: "Bundle",
    id: nameUuid(`bundle:${episode.id}:${now.toISOString()}`),
    meta: { lastUpdated: now.toISOString() },
    identifier: { system: EPISODE_ID_SYSTEM, value: episode.id },
    type: "collection",
    timestamp: now.toISOString(),
    entry: entries,
  };
}
