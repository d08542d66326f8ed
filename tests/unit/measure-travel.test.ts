import { describe, expect, it } from 'vitest';
import {
  MeasureInputError,
  cabinPressureKPa,
  feetToMetres,
  flyingClearanceDate,
  gasExpansionFactor,
  maxCabinAltitudeFeet,
  standardAtmosphere,
  waterVapourAt37CKPa,
} from '../../measure';

describe('cabin pressure', () => {
  it('is 101.325 kPa at sea level', () => {
    // P0: ICAO Doc 7488 standard atmosphere
    expect(cabinPressureKPa(0)).toBeCloseTo(101.325, 10);
  });

  it('is 75.26 kPa at 8,000 ft = 2,438.4 m', () => {
    // ICAO Doc 7488 / ISO 2533; 8,000 ft cabin limit: 14 CFR 25.841 (from memory)
    expect(feetToMetres(maxCabinAltitudeFeet)).toBeCloseTo(2438.4, 10);
    expect(Math.abs(cabinPressureKPa(2438.4) - 75.26)).toBeLessThanOrEqual(0.05);
  });

  it.each([
    [5000, 84.31],
    [6000, 81.2],
    [7000, 78.19],
  ])('at %s ft is about %s kPa', (feet, kPa) => {
    // 843.1, 812.0, 781.9 hPa: ICAO Doc 7488 / US Standard Atmosphere 1976
    expect(Math.abs(cabinPressureKPa(feetToMetres(feet)) - kPa)).toBeLessThanOrEqual(0.05);
  });

  it('refuses altitudes outside the troposphere formula', () => {
    // ICAO Doc 7488: this lapse-rate formula holds to 11 km
    expect(() => cabinPressureKPa(20000)).toThrow(MeasureInputError);
    expect(() => cabinPressureKPa(Number.NaN)).toThrow(MeasureInputError);
  });

  it('uses the published constants', () => {
    // ICAO Doc 7488: P0 101.325 kPa, T0 288.15 K, L 0.0065 K/m, exponent 5.25588
    expect(standardAtmosphere.seaLevelPressureKPa).toBe(101.325);
    expect(standardAtmosphere.seaLevelTemperatureK).toBe(288.15);
    expect(standardAtmosphere.lapseRateKPerM).toBe(0.0065);
    expect(standardAtmosphere.exponent).toBe(5.25588);
  });
});

describe('gas expansion', () => {
  const cabin = () => cabinPressureKPa(feetToMetres(8000));

  it('expands dry gas x1.346 at 8,000 ft (500 mL -> 673 mL)', () => {
    // Boyle's law, 101.325 / 75.26: ICAO Doc 7488 pressures
    const f = gasExpansionFactor(101.325, cabin());
    expect(f).toBeCloseTo(1.346, 3);
    expect(Math.round(500 * f)).toBe(673);
  });

  it('expands water-saturated gas at 37 C x1.378 at 8,000 ft', () => {
    // Boyle's law with PH2O 6.28 kPa at 37 C (physiology tables)
    expect(waterVapourAt37CKPa).toBe(6.28);
    expect(gasExpansionFactor(101.325, cabin(), { waterVapourKPa: waterVapourAt37CKPa })).toBeCloseTo(1.378, 3);
  });

  it.each([
    [5000, 1.202],
    [6000, 1.248],
    [7000, 1.296],
  ])('expands dry gas at %s ft by about %s', (feet, factor) => {
    // Boyle's law on ICAO Doc 7488 pressures (843.1, 812.0, 781.9 hPa)
    expect(gasExpansionFactor(101.325, cabinPressureKPa(feetToMetres(feet)))).toBeCloseTo(factor, 3);
  });

  it('refuses impossible pressures', () => {
    // Boyle's law needs positive pressures above the vapour pressure
    expect(() => gasExpansionFactor(0, 75)).toThrow(MeasureInputError);
    expect(() => gasExpansionFactor(101.325, 5, { waterVapourKPa: 6.28 })).toThrow(MeasureInputError);
  });
});

describe('flying clearance', () => {
  it('is 7 days after a film confirms resolution', () => {
    // BTS air travel recommendations, Thorax 2011;66 Suppl 1; Coker RK et al., Thorax 2022;77:329
    expect(flyingClearanceDate('2024-03-10')).toBe('2024-03-17');
  });

  it('is 14 days after a traumatic pneumothorax', () => {
    // BTS air travel recommendations, Thorax 2011;66 Suppl 1
    expect(flyingClearanceDate('2024-03-10', { traumatic: true })).toBe('2024-03-24');
  });

  it('crosses month, year and leap-day boundaries in UTC', () => {
    // Gregorian calendar arithmetic (common practice)
    expect(flyingClearanceDate('2024-02-25')).toBe('2024-03-03');
    expect(flyingClearanceDate('2023-02-25')).toBe('2023-03-04');
    expect(flyingClearanceDate('2024-12-28')).toBe('2025-01-04');
    expect(flyingClearanceDate('2024-12-28', { daysAfterResolution: 21 })).toBe('2025-01-18');
  });

  it('refuses malformed or impossible dates and bad settings', () => {
    // common practice: no date from a bad date
    expect(() => flyingClearanceDate('2024-02-30')).toThrow(MeasureInputError);
    expect(() => flyingClearanceDate('10/03/2024')).toThrow(MeasureInputError);
    expect(() => flyingClearanceDate('2024-03-10', { daysAfterResolution: -1 })).toThrow(MeasureInputError);
    expect(() => flyingClearanceDate('2024-03-10', { daysAfterResolution: 1.5 })).toThrow(MeasureInputError);
  });
});
