import { describe, expect, it } from 'vitest';
import {
  MeasureInputError,
  averageInterpleuralDistanceCm,
  collinsPercent,
  guidelineSize,
  lightPercent,
  rheaNomogram,
  rheaPercent,
  rheaPercentFromAidCm,
} from '../../measure';

describe('Light index', () => {
  it('gives 48.8 % for a lung 8 wide in a hemithorax 10 wide', () => {
    // 100 x (1 - 8^3/10^3) = 48.8: Light RW, Pleural Diseases (textbook formula)
    expect(lightPercent(8, 10)).toBeCloseTo(48.8, 10);
  });

  it('is a ratio: the unit and the magnification cancel', () => {
    // Light RW, Pleural Diseases: ratio only, so any unit works (same 8/10 ratio in mm and in pixels)
    expect(lightPercent(80, 100)).toBeCloseTo(48.8, 10);
    expect(lightPercent(8 * 1.08, 10 * 1.08)).toBeCloseTo(48.8, 10);
  });

  it('makes 2 cm at the hilum of a ~10 cm hemithorax about 50 %', () => {
    // MacDuff A et al., BTS guideline, Thorax 2010;65 Suppl 2: "2 cm is about 50 %" (lung 8 of hemithorax 10)
    expect(Math.abs(lightPercent(10 - 2, 10) - 50)).toBeLessThan(2);
  });

  it('is 0 with no pneumothorax and 100 with a fully collapsed lung', () => {
    // Light RW, Pleural Diseases: 100 x (1 - 1) = 0 and 100 x (1 - 0) = 100
    expect(lightPercent(10, 10)).toBe(0);
    expect(lightPercent(0, 10)).toBe(100);
  });

  it('refuses bad input with a typed error', () => {
    // common practice: no number from impossible input
    expect(() => lightPercent(11, 10)).toThrow(MeasureInputError);
    expect(() => lightPercent(-1, 10)).toThrow(MeasureInputError);
    expect(() => lightPercent(5, 0)).toThrow(MeasureInputError);
    expect(() => lightPercent(Number.NaN, 10)).toThrow(MeasureInputError);
    expect(() => lightPercent(5, Number.POSITIVE_INFINITY)).toThrow(MeasureInputError);
  });
});

describe('Collins', () => {
  it('gives 32.4 % for 2 + 2 + 2 cm', () => {
    // 4.2 + 4.7 x 6: Collins CD et al., AJR 1995;165:1127-1130
    const r = collinsPercent(2, 2, 2);
    expect(r.percent).toBeCloseTo(32.4, 10);
    expect(r.sumCm).toBeCloseTo(6, 10);
    expect(r.clampedAt100).toBe(false);
  });

  it('never goes below the 4.2 % intercept', () => {
    // intercept 4.2: Collins CD et al., AJR 1995
    expect(collinsPercent(0, 0, 0).percent).toBeCloseTo(4.2, 10);
  });

  it('clamps at 100 % with a flag once A + B + C passes about 20.38 cm', () => {
    // (100 - 4.2) / 4.7 = 20.38 cm: Collins CD et al., AJR 1995 formula
    const below = collinsPercent(6.79, 6.79, 6.79); // sum 20.37
    expect(below.clampedAt100).toBe(false);
    expect(below.percent).toBeLessThan(100);
    const above = collinsPercent(7, 7, 7); // sum 21 -> 4.2 + 98.7 = 102.9
    expect(above.clampedAt100).toBe(true);
    expect(above.percent).toBe(100);
    expect(above.rawPercent).toBeCloseTo(102.9, 10);
  });

  it('refuses negative or non-finite distances', () => {
    // common practice: no number from impossible input
    expect(() => collinsPercent(-1, 2, 2)).toThrow(MeasureInputError);
    expect(() => collinsPercent(2, Number.NaN, 2)).toThrow(MeasureInputError);
  });
});

describe('Average interpleural distance', () => {
  it('is the mean of the three distances', () => {
    // AID = (apex + upper + lower) / 3: Rhea JT et al., Radiology 1982;144:733-736
    expect(averageInterpleuralDistanceCm(1, 2, 3)).toBeCloseTo(2, 10);
    expect(averageInterpleuralDistanceCm(4, 1, 1)).toBeCloseTo(2, 10);
  });

  it('refuses a negative distance', () => {
    // common practice: a distance cannot be negative
    expect(() => averageInterpleuralDistanceCm(1, -2, 3)).toThrow(MeasureInputError);
  });
});

describe('Rhea nomogram', () => {
  // Table: Rhea JT et al., Radiology 1982;144:733-736, as tabulated in Wyatt JP et al., Oxford Handbook
  // of Accident and Emergency Medicine, 1999, p. 114.
  const published: [number, number][] = [
    [0.5, 10],
    [1.0, 14],
    [1.5, 18],
    [2.0, 23],
    [2.5, 27],
    [3.0, 32],
    [3.5, 36],
    [4.0, 40],
    [5.0, 49],
  ];

  it.each(published)('reads %s cm as %s %%', (aid, pct) => {
    // Rhea 1982 via Wyatt 1999 p. 114
    const r = rheaPercentFromAidCm(aid);
    expect(r.percent).toBeCloseTo(pct, 10);
    expect(r.outsideNomogram).toBe(false);
    // the same AID as three equal distances
    expect(rheaPercent(aid, aid, aid).percent).toBeCloseTo(pct, 10);
  });

  it('holds the table as data with its source', () => {
    // Rhea 1982 via Wyatt 1999 p. 114
    expect(rheaNomogram.points.map((p) => [p.aidCm, p.percent])).toEqual(published);
    expect(rheaNomogram.source).toMatch(/Rhea/);
    expect(rheaNomogram.source).toMatch(/1982/);
  });

  it('interpolates linearly between two points', () => {
    // halfway between 2.0 cm (23 %) and 2.5 cm (27 %) = 25 %: Rhea 1982 via Wyatt 1999, linear interpolation
    expect(rheaPercentFromAidCm(2.25).percent).toBeCloseTo(25, 10);
    // halfway between 4.0 (40 %) and 5.0 (49 %) = 44.5 %: same table
    expect(rheaPercentFromAidCm(4.5).percent).toBeCloseTo(44.5, 10);
    // AID of (1, 2, 3.75) = 2.25 cm -> 25 %
    const r = rheaPercent(1, 2, 3.75);
    expect(r.aidCm).toBeCloseTo(2.25, 10);
    expect(r.percent).toBeCloseTo(25, 10);
  });

  it('returns the end value with a flag outside 0.5-5.0 cm, never an extrapolation', () => {
    // range 0.5-5.0 cm: Rhea 1982 via Wyatt 1999
    const low = rheaPercentFromAidCm(0.2);
    expect(low.percent).toBe(10);
    expect(low.outsideNomogram).toBe(true);
    expect(low.outsideSide).toBe('below');
    const high = rheaPercentFromAidCm(7);
    expect(high.percent).toBe(49);
    expect(high.outsideNomogram).toBe(true);
    expect(high.outsideSide).toBe('above');
  });

  it('refuses negative or non-finite distances', () => {
    // common practice: no number from impossible input
    expect(() => rheaPercent(1, -1, 1)).toThrow(MeasureInputError);
    expect(() => rheaPercentFromAidCm(Number.NaN)).toThrow(MeasureInputError);
  });
});

describe('guideline classes', () => {
  it('classes BTS 2010 at and around 2 cm at the hilum', () => {
    // < 2 cm small, >= 2 cm large: MacDuff A et al., BTS guideline, Thorax 2010;65 Suppl 2
    expect(guidelineSize({ hilumCm: 1.99 }).bts.size).toBe('small');
    expect(guidelineSize({ hilumCm: 2 }).bts.size).toBe('large');
    expect(guidelineSize({ hilumCm: 2.01 }).bts.size).toBe('large');
  });

  it('classes ACCP 2001 at and around 3 cm apex to cupola', () => {
    // < 3 cm small, >= 3 cm large: Baumann MH et al., Chest 2001;119:590-602
    expect(guidelineSize({ apexCm: 2.99 }).accp.size).toBe('small');
    expect(guidelineSize({ apexCm: 3 }).accp.size).toBe('large');
    expect(guidelineSize({ apexCm: 3.01 }).accp.size).toBe('large');
  });

  it('keeps the two classes separate, each with its source, and never merges them', () => {
    // guidelines disagree by design: Kelly AM, Druda D, Respir Med 2008;102:1830
    const g = guidelineSize({ hilumCm: 2.5, apexCm: 1 });
    expect(g.bts.size).toBe('large');
    expect(g.accp.size).toBe('small');
    expect(g.bts.source).toMatch(/Thorax 2010/);
    expect(g.accp.source).toMatch(/Chest 2001/);
    expect(Object.keys(g).sort()).toEqual(['accp', 'bts']);
  });

  it('says not measured when a distance is missing', () => {
    // common practice: no class without a measurement
    const g = guidelineSize({ hilumCm: null });
    expect(g.bts.size).toBe('not-measured');
    expect(g.accp.size).toBe('not-measured');
    expect(g.bts.reason).toMatch(/hilum/);
  });

  it('refuses a negative distance', () => {
    // common practice: a distance cannot be negative
    expect(() => guidelineSize({ hilumCm: -1 })).toThrow(MeasureInputError);
  });
});
