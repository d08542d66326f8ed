import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  MeasureInputError,
  calibrationFromDicom,
  collinsPercent,
  estimateFromCalipers,
  expectedPercentAt,
  lightPercent,
  predictedResolutionDays,
  rheaPercent,
  type CaliperSet,
  type OxygenPeriod,
  type Segment,
} from '../../measure';

const length = fc.double({ min: 0.01, max: 1000, noNaN: true, noDefaultInfinity: true });
const distanceCm = fc.double({ min: 0, max: 30, noNaN: true, noDefaultInfinity: true });
const coord = fc.double({ min: 0, max: 4000, noNaN: true, noDefaultInfinity: true });
const point = fc.record({ x: coord, y: coord });
const segment: fc.Arbitrary<Segment> = fc.record({ a: point, b: point });
const caliperSet: fc.Arbitrary<CaliperSet> = fc.record(
  {
    hemithorax: segment,
    lung: segment,
    apex: segment,
    upper: segment,
    lower: segment,
    hilum: segment,
  },
  { requiredKeys: [] },
);
const oxygenPeriods: fc.Arbitrary<OxygenPeriod[]> = fc.array(
  fc
    .tuple(fc.double({ min: 0, max: 60, noNaN: true }), fc.option(fc.double({ min: 0, max: 30, noNaN: true }), { nil: null }))
    .map(([startDay, len]) => ({ startDay, endDay: len === null ? null : startDay + len })),
  { maxLength: 4 },
);

const inRange = (p: number) => p >= 0 && p <= 100;

describe('Light index properties', () => {
  it('is 0 when the lung fills the hemithorax', () => {
    // Light RW, Pleural Diseases: 100 x (1 - 1) = 0
    fc.assert(fc.property(length, (h) => lightPercent(h, h) === 0));
  });

  it('grows as the lung shrinks', () => {
    // Light RW, Pleural Diseases: strictly decreasing in L for a fixed H
    fc.assert(
      fc.property(length, fc.double({ min: 0, max: 1, noNaN: true }), fc.double({ min: 0, max: 1, noNaN: true }), (h, u, v) => {
        const small = Math.min(u, v) * h;
        const big = Math.max(u, v) * h;
        const more = lightPercent(small, h);
        const less = lightPercent(big, h);
        // strictly larger wherever the difference is representable in floating point
        const representable = (big / h) ** 3 - (small / h) ** 3 > 1e-12;
        return representable ? more > less : more >= less;
      }),
    );
  });

  it('stays within 0-100 and refuses L > H', () => {
    // Light RW, Pleural Diseases: L <= H gives 0-100
    fc.assert(
      fc.property(length, length, (x, y) => {
        const [l, h] = x <= y ? [x, y] : [y, x];
        if (!inRange(lightPercent(l, h))) return false;
        if (x !== y) expect(() => lightPercent(Math.max(x, y), Math.min(x, y))).toThrow(MeasureInputError);
        return true;
      }),
    );
  });
});

describe('cm method properties', () => {
  it('Rhea and Collins stay within 0-100 for any non-negative distances', () => {
    // Rhea JT et al., Radiology 1982 (table 10-49 %); Collins CD et al., AJR 1995 (clamped at 100)
    fc.assert(
      fc.property(distanceCm, distanceCm, distanceCm, (a, b, c) => inRange(rheaPercent(a, b, c).percent) && inRange(collinsPercent(a, b, c).percent)),
    );
  });
});

describe('caliper estimate properties', () => {
  const calibrations = [
    null,
    calibrationFromDicom({ imagerPixelSpacingMm: [0.3, 0.25], estimatedRadiographicMagnificationFactor: 1.1 }),
    calibrationFromDicom({ pixelSpacingMm: [0.14, 0.14] }),
  ];
  const calibration = fc.constantFrom(...calibrations);
  const plane = fc.constantFrom<'film' | 'patient'>('film', 'patient');

  it('gives every percent within 0-100', () => {
    // Light RW; Rhea JT et al. 1982; Collins CD et al. 1995: all are percentages of the hemithorax
    fc.assert(
      fc.property(caliperSet, calibration, plane, (set, cal, pl) => {
        const e = estimateFromCalipers(set, cal, { plane: pl });
        return [e.light, e.rhea, e.collins].every((m) => m.status !== 'ok' || inRange(m.percent));
      }),
    );
  });

  it('is unchanged by swapping the two ends of any segment', () => {
    // plane geometry: a length does not depend on the order of its ends
    fc.assert(
      fc.property(caliperSet, calibration, plane, (set, cal, pl) => {
        const swapped: CaliperSet = {};
        for (const [name, s] of Object.entries(set) as [keyof CaliperSet, Segment][]) {
          swapped[name] = { a: s.b, b: s.a };
        }
        expect(estimateFromCalipers(swapped, cal, { plane: pl })).toEqual(estimateFromCalipers(set, cal, { plane: pl }));
      }),
    );
  });

  it('never returns a number for a bad caliper', () => {
    // common practice: NaN or negative coordinates make the method not measured
    const bad = fc.constantFrom(Number.NaN, -1, Number.POSITIVE_INFINITY);
    fc.assert(
      fc.property(caliperSet, bad, (set, v) => {
        const broken: CaliperSet = { ...set, lung: { a: { x: v, y: 10 }, b: { x: 100, y: 10 } } };
        const e = estimateFromCalipers(broken, calibrations[1] ?? null);
        return e.light.status === 'not-measured' && e.lengths.lung.status === 'invalid';
      }),
    );
  });
});

describe('resorption properties', () => {
  const percent = fc.double({ min: 0, max: 100, noNaN: true });
  const days = fc.double({ min: 0, max: 120, noNaN: true });
  const rate = fc.double({ min: 0.1, max: 15, noNaN: true });

  it('is monotone non-increasing and never negative', () => {
    // Kircher & Swartzel 1954; Northfield 1971: a linear decline, faster on oxygen, floored at zero
    fc.assert(
      fc.property(percent, days, days, rate, oxygenPeriods, (p, d1, d2, r, periods) => {
        const opts = { ratePerDay: r, oxygenPeriods: periods };
        const early = expectedPercentAt(p, Math.min(d1, d2), opts);
        const late = expectedPercentAt(p, Math.max(d1, d2), opts);
        return late <= early && late >= 0 && early <= p;
      }),
    );
  });

  it('reaches zero exactly at the predicted resolution', () => {
    // Kircher & Swartzel 1954; Northfield 1971: the prediction inverts the same linear model
    fc.assert(
      fc.property(fc.double({ min: 1, max: 100, noNaN: true }), rate, oxygenPeriods, (p, r, periods) => {
        const opts = { ratePerDay: r, oxygenPeriods: periods };
        const t = predictedResolutionDays(p, opts);
        expect(expectedPercentAt(p, t, opts)).toBeCloseTo(0, 6);
        expect(expectedPercentAt(p, t * 0.99, opts)).toBeGreaterThan(0);
      }),
    );
  });
});
