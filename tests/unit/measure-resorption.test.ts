import { describe, expect, it } from 'vitest';
import {
  MeasureInputError,
  expectedBand,
  expectedPercentAt,
  oxygenDaysBetween,
  predictedResolutionDays,
  resorptionRates,
} from '../../measure';

describe('resorption on air', () => {
  it('takes 20 % to 16.25 % in 3 days at 1.25 %/day by default', () => {
    // 1.25 %/day: Kircher LT, Swartzel RL, JAMA 1954;155:24-29; 20 - 3 x 1.25 = 16.25
    expect(expectedPercentAt(20, 3)).toBeCloseTo(16.25, 10);
  });

  it('takes 20 % to 13.4 % in 3 days at 2.2 %/day', () => {
    // 2.2 %/day measured by Collins: Kelly AM et al., Emerg Med J 2006;23:780-782
    expect(expectedPercentAt(20, 3, { ratePerDay: 2.2 })).toBeCloseTo(13.4, 10);
  });

  it('predicts resolution of 20 % in 16 days at 1.25, 11.1 at 1.8, 9.09 at 2.2', () => {
    // Kircher & Swartzel 1954 (1.25); BTS 2010, Thorax 2010;65 Suppl 2 (1.8); Kelly AM et al. 2006 (2.2)
    expect(predictedResolutionDays(20)).toBeCloseTo(16, 10);
    expect(predictedResolutionDays(20, { ratePerDay: 1.8 })).toBeCloseTo(11.1, 1);
    expect(predictedResolutionDays(20, { ratePerDay: 2.2 })).toBeCloseTo(9.09, 2);
  });

  it('never goes below zero', () => {
    // common practice: a size cannot be negative
    expect(expectedPercentAt(20, 40)).toBe(0);
  });

  it('exports the rates and their sources as data', () => {
    // Kircher & Swartzel 1954; BTS 2010 range 1.25-1.8; Northfield 1971 x4
    expect(resorptionRates.air.ratePerDay).toBe(1.25);
    expect(resorptionRates.air.source).toMatch(/Kircher/);
    expect([resorptionRates.btsRange.lowPerDay, resorptionRates.btsRange.highPerDay]).toEqual([1.25, 1.8]);
    expect(resorptionRates.oxygen.multiplier).toBe(4);
    expect(resorptionRates.oxygen.source).toMatch(/Northfield/);
  });
});

describe('resorption on oxygen', () => {
  it('is 4 times faster while on oxygen by default', () => {
    // x4 on supplemental oxygen: Northfield TC, BMJ 1971;4:86-88; 20 - 1.25 x 4 x 3 = 5
    expect(expectedPercentAt(20, 3, { oxygenPeriods: [{ startDay: 0, endDay: null }] })).toBeCloseTo(5, 10);
    expect(predictedResolutionDays(20, { oxygenPeriods: [{ startDay: 0, endDay: null }] })).toBeCloseTo(4, 10);
  });

  it('counts only the time inside oxygen periods', () => {
    // Northfield 1971 x4; 3 days with 1 on oxygen = 6 air-equivalent days; 20 - 7.5 = 12.5
    expect(expectedPercentAt(20, 3, { oxygenPeriods: [{ startDay: 1, endDay: 2 }] })).toBeCloseTo(12.5, 10);
    // overlapping periods are counted once (arithmetic)
    expect(
      expectedPercentAt(20, 3, {
        oxygenPeriods: [
          { startDay: 1, endDay: 2 },
          { startDay: 1.5, endDay: 2 },
        ],
      }),
    ).toBeCloseTo(12.5, 10);
    expect(oxygenDaysBetween(0, 10, [{ startDay: 1, endDay: 3 }, { startDay: 2, endDay: 4 }])).toBeCloseTo(3, 10);
  });

  it('predicts resolution through a period of oxygen, consistent with the expected course', () => {
    // Kircher & Swartzel 1954 (1.25) and Northfield 1971 (x4): 2 days air (2) + 2 days oxygen (8) + 6 days air = 16
    const options = { oxygenPeriods: [{ startDay: 2, endDay: 4 }] };
    expect(predictedResolutionDays(20, options)).toBeCloseTo(10, 10);
    expect(expectedPercentAt(20, 10, options)).toBeCloseTo(0, 10);
    expect(expectedPercentAt(20, 9.9, options)).toBeGreaterThan(0);
  });

  it('starts the clock at the initial film (fromDay)', () => {
    // arithmetic: oxygen on days 0-2 lies before a film taken on day 2, so it does not count
    const options = { oxygenPeriods: [{ startDay: 0, endDay: 2 }], fromDay: 2 };
    expect(expectedPercentAt(20, 3, options)).toBeCloseTo(16.25, 10);
  });
});

describe('expected band', () => {
  it('adds and subtracts the tolerance, clamped to 0-100', () => {
    // tolerance is a setting with no published figure (suggestion about 10 points); expected from Kircher & Swartzel 1954
    const b = expectedBand(20, 3, { tolerancePoints: 10 });
    expect(b.expected).toBeCloseTo(16.25, 10);
    expect(b.lower).toBeCloseTo(6.25, 10);
    expect(b.upper).toBeCloseTo(26.25, 10);
    const low = expectedBand(20, 14, { tolerancePoints: 10 });
    expect(low.lower).toBe(0);
    const high = expectedBand(95, 0, { tolerancePoints: 10 });
    expect(high.upper).toBe(100);
  });
});

describe('resorption on bad input', () => {
  it('throws a typed error', () => {
    // common practice: no number from impossible input
    expect(() => expectedPercentAt(-1, 3)).toThrow(MeasureInputError);
    expect(() => expectedPercentAt(120, 3)).toThrow(MeasureInputError);
    expect(() => expectedPercentAt(20, -1)).toThrow(MeasureInputError);
    expect(() => expectedPercentAt(20, Number.NaN)).toThrow(MeasureInputError);
    expect(() => expectedPercentAt(20, 3, { ratePerDay: 0 })).toThrow(MeasureInputError);
    expect(() => expectedPercentAt(20, 3, { oxygenMultiplier: 0.5 })).toThrow(MeasureInputError);
    expect(() => expectedPercentAt(20, 3, { oxygenPeriods: [{ startDay: 3, endDay: 1 }] })).toThrow(MeasureInputError);
    expect(() => predictedResolutionDays(Number.NaN)).toThrow(MeasureInputError);
    expect(() => expectedBand(20, 3, { tolerancePoints: -1 })).toThrow(MeasureInputError);
  });
});
