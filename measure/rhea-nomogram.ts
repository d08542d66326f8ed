import { MeasureInputError } from './errors';
import { averageInterpleuralDistanceCm } from './size';

/** One point of the Rhea nomogram: average interpleural distance (cm) against pneumothorax size (%). */
export interface RheaPoint {
  readonly aidCm: number;
  readonly percent: number;
}

/**
 * The Rhea nomogram as data, with its source.
 * Source: Rhea JT, DeLuca SA, Greene RE, Radiology 1982;144:733-736, as tabulated in
 * Wyatt JP et al., Oxford Handbook of Accident and Emergency Medicine, 1999, p. 114.
 */
export const rheaNomogram = {
  source:
    'Rhea JT, DeLuca SA, Greene RE, Radiology 1982;144:733-736; points as tabulated in Wyatt JP et al., Oxford Handbook of Accident and Emergency Medicine, 1999, p. 114',
  points: [
    { aidCm: 0.5, percent: 10 },
    { aidCm: 1.0, percent: 14 },
    { aidCm: 1.5, percent: 18 },
    { aidCm: 2.0, percent: 23 },
    { aidCm: 2.5, percent: 27 },
    { aidCm: 3.0, percent: 32 },
    { aidCm: 3.5, percent: 36 },
    { aidCm: 4.0, percent: 40 },
    { aidCm: 5.0, percent: 49 },
  ] as const satisfies readonly RheaPoint[],
} as const;

/** Lowest and highest AID the nomogram covers (cm). Source: the table above. */
export const rheaNomogramRangeCm = { min: 0.5, max: 5.0 } as const;

export interface RheaResult {
  /** Percent read from the nomogram (linear interpolation), or the end value when outside it. */
  percent: number;
  /** Average interpleural distance, cm. */
  aidCm: number;
  /** True when the AID lies outside 0.5-5.0 cm: `percent` is then the nomogram's end value, not an extrapolation. */
  outsideNomogram: boolean;
  /** Which end was used when outside the nomogram. */
  outsideSide: 'below' | 'above' | null;
  /** The two table points used for interpolation (equal when exactly on a point or outside). */
  between: readonly [RheaPoint, RheaPoint];
  source: string;
}

/**
 * Reads a percent from the Rhea nomogram for a given average interpleural distance (cm); linear
 * interpolation, never extrapolation. Source: Rhea JT et al., Radiology 1982;144:733-736.
 */
export function rheaPercentFromAidCm(aidCm: number): RheaResult {
  if (typeof aidCm !== 'number' || !Number.isFinite(aidCm)) {
    throw new MeasureInputError('aidCm', 'not-finite', 'The average interpleural distance must be a finite number.');
  }
  if (aidCm < 0) {
    throw new MeasureInputError('aidCm', 'negative', 'The average interpleural distance must not be negative.');
  }
  const points: readonly RheaPoint[] = rheaNomogram.points;
  const first = points[0];
  const last = points[points.length - 1];
  if (first === undefined || last === undefined) {
    throw new Error('Rhea nomogram table is empty.');
  }
  const base = { aidCm, source: rheaNomogram.source };
  if (aidCm < first.aidCm) {
    return { ...base, percent: first.percent, outsideNomogram: true, outsideSide: 'below', between: [first, first] };
  }
  if (aidCm > last.aidCm) {
    return { ...base, percent: last.percent, outsideNomogram: true, outsideSide: 'above', between: [last, last] };
  }
  for (let i = 0; i < points.length - 1; i += 1) {
    const lo = points[i];
    const hi = points[i + 1];
    if (lo === undefined || hi === undefined) continue;
    if (aidCm >= lo.aidCm && aidCm <= hi.aidCm) {
      if (aidCm === lo.aidCm) {
        return { ...base, percent: lo.percent, outsideNomogram: false, outsideSide: null, between: [lo, lo] };
      }
      if (aidCm === hi.aidCm) {
        return { ...base, percent: hi.percent, outsideNomogram: false, outsideSide: null, between: [hi, hi] };
      }
      const t = (aidCm - lo.aidCm) / (hi.aidCm - lo.aidCm);
      const percent = lo.percent + t * (hi.percent - lo.percent);
      return { ...base, percent, outsideNomogram: false, outsideSide: null, between: [lo, hi] };
    }
  }
  // Unreachable for a sorted table covering [first, last].
  throw new Error('Rhea nomogram lookup fell through.');
}

/**
 * Rhea estimate from the three interpleural distances (cm): AID = their mean, % read from the
 * nomogram. Source: Rhea JT, DeLuca SA, Greene RE, Radiology 1982;144:733-736.
 */
export function rheaPercent(apexCm: number, upperCm: number, lowerCm: number): RheaResult {
  const aidCm = averageInterpleuralDistanceCm(apexCm, upperCm, lowerCm);
  return rheaPercentFromAidCm(aidCm);
}
