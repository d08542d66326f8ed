// The travel note's figures: cabin pressure and gas expansion at cabin altitude, flying dates and
// what the expansion means for the latest measured size.
import { describe, expect, it } from "vitest";
import { travelFigures, type TravelInput } from "@/lib/travel/figures";

const settings = { daysAfterResolution: 7, daysAfterTraumatic: 14, cabinAltitudeFeet: 8000 }; // BTS 2011; 14 CFR 25.841 (from memory)
const base: TravelInput = { aetiology: "primary-spontaneous", resolvedOn: null, latest: null, predictedResolutionOn: null, today: "2026-12-02", settings };

describe("cabin altitude expansion", () => {
  it("uses 75.26 kPa at 8,000 ft = 2,438.4 m and expands dry gas x1.346", () => {
    const f = travelFigures(base).cabin;
    // 8,000 ft x 0.3048 m/ft = 2,438.4 m: international yard and pound agreement, 1959
    expect(f.altitudeMetres).toBe(2438.4);
    // 75.26 kPa at 2,438.4 m: ICAO Doc 7488 / US Standard Atmosphere 1976
    expect(Math.abs(f.pressureKPa - 75.26)).toBeLessThanOrEqual(0.01);
    // 101.325 kPa at sea level: ICAO Doc 7488
    expect(f.seaLevelKPa).toBe(101.325);
    // Boyle's law: 101.325 / 75.26 = 1.346 (dry gas)
    expect(f.expansionFactor).toBeCloseTo(1.346, 3);
  });

  it("expands body gas (saturated at 37 C) a little more, x1.378", () => {
    // Boyle's law with PH2O 6.28 kPa (47 mmHg) at 37 C, physiology tables: (101.325-6.28)/(75.26-6.28) = 1.378
    expect(travelFigures(base).cabin.expansionFactorBodyGas).toBeCloseTo(1.378, 3);
  });

  it("follows the cabin altitude setting: 6,000 ft gives 81.20 kPa and x1.248", () => {
    const f = travelFigures({ ...base, settings: { ...settings, cabinAltitudeFeet: 6000 } }).cabin;
    // 812.0 hPa at 6,000 ft: ICAO Doc 7488 / US Standard Atmosphere 1976; 101.325 / 81.20 = 1.248
    expect(Math.abs(f.pressureKPa - 81.2)).toBeLessThanOrEqual(0.02);
    expect(f.expansionFactor).toBeCloseTo(1.248, 3);
  });

  it("says what the factor means for the latest measured size: 20 % becomes about 26.9 %", () => {
    const f = travelFigures({ ...base, latest: { percent: 20, method: "collins", filmOn: "2026-11-28" } });
    // 20 % x 1.346 (Boyle's law at 75.26 kPa, ICAO Doc 7488) = 26.9 % of the hemithorax
    expect(f.remainingGas).toEqual({ method: "collins", percent: 20, filmOn: "2026-11-28", expandedPercent: 26.9 });
  });

  it("never shows more than the whole hemithorax", () => {
    // 80 % x 1.346 = 107.7 %, which cannot be: capped at 100 % (common practice: a percentage of the hemithorax)
    const f = travelFigures({ ...base, latest: { percent: 80, method: "light", filmOn: "2026-11-28" } });
    expect(f.remainingGas?.expandedPercent).toBe(100);
  });
});

describe("flying date", () => {
  it("is 7 days after the film that confirmed resolution", () => {
    // BTS air travel recommendations, Ahmedzai S et al., Thorax 2011;66 Suppl 1: 7 days after resolution on a film
    const f = travelFigures({ ...base, resolvedOn: "2026-11-20" }).flying;
    expect(f).toMatchObject({ state: "reasonable", earliestOn: "2026-11-27", waitDays: 7, estimated: false, traumatic: false });
  });

  it("is 14 days after a traumatic pneumothorax", () => {
    // BTS air travel recommendations 2011: 14 days after a traumatic pneumothorax
    const f = travelFigures({ ...base, aetiology: "traumatic", resolvedOn: "2026-11-30" }).flying;
    expect(f).toMatchObject({ state: "from-date", earliestOn: "2026-12-14", waitDays: 14, traumatic: true });
  });

  it("crosses a month and a year boundary on the calendar", () => {
    // BTS 2011: 7 days; 2026-12-28 + 7 days = 2027-01-04 (calendar arithmetic)
    expect(travelFigures({ ...base, resolvedOn: "2026-12-28" }).flying.earliestOn).toBe("2027-01-04");
  });

  it("is not yet while no film confirms resolution, with an estimate from the predicted date", () => {
    // BTS 2011: a current pneumothorax is a contraindication to flying; 7 days after the predicted 2026-12-10 = 2026-12-17
    const f = travelFigures({ ...base, predictedResolutionOn: "2026-12-10" }).flying;
    expect(f).toMatchObject({ state: "not-yet", earliestOn: "2026-12-17", estimated: true });
  });

  it("offers no estimate when the predicted date has already passed", () => {
    // common practice: a prediction that has passed without resolution says nothing about the future
    const f = travelFigures({ ...base, predictedResolutionOn: "2026-11-01" }).flying;
    expect(f).toMatchObject({ state: "not-yet", earliestOn: null, estimated: false });
  });

  it("follows the settings (a team that waits 14 days after any pneumothorax)", () => {
    // BTS 2011 allows local policy; 2026-11-20 + 14 days = 2026-12-04
    const f = travelFigures({ ...base, resolvedOn: "2026-11-20", settings: { ...settings, daysAfterResolution: 14 } }).flying;
    expect(f).toMatchObject({ state: "from-date", earliestOn: "2026-12-04" });
  });

  it("shows no remaining gas once resolution is confirmed", () => {
    // resolution confirmed on a film: no pleural gas is expected (BTS 2011)
    expect(travelFigures({ ...base, resolvedOn: "2026-11-20", latest: { percent: 12, method: "collins", filmOn: "2026-11-10" } }).remainingGas).toBeNull();
  });
});

describe("diving", () => {
  it("advises against diving unless both sides had surgical pleurectomy, citing BTS 2003", () => {
    const d = travelFigures(base).diving;
    // BTS Fitness to Dive Group, Thorax 2003;58:3-13
    expect(d.source).toMatch(/Thorax 2003;58:3-13/);
    expect(d.advice).toMatch(/bilateral surgical pleurectomy/);
  });
});
