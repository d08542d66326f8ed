import { MeasureInputError, requireNonNegative, requirePositive } from './errors';

/**
 * Light index: 100 x (1 - L^3 / H^3), lung and hemithorax diameters on the same line in the same
 * unit (ratio only, so any unit and an uncalibrated film work). Source: Light RW, Pleural Diseases.
 * Throws MeasureInputError on non-finite or negative input, a zero hemithorax, or L > H.
 */
export function lightPercent(lungDiameter: number, hemithoraxDiameter: number): number {
  requireNonNegative('lungDiameter', lungDiameter);
  requirePositive('hemithoraxDiameter', hemithoraxDiameter);
  if (lungDiameter > hemithoraxDiameter) {
    throw new MeasureInputError(
      'lungDiameter',
      'inconsistent',
      'The lung diameter is larger than the hemithorax diameter; the two must be measured on the same line.',
    );
  }
  const ratio = lungDiameter / hemithoraxDiameter;
  return 100 * (1 - ratio * ratio * ratio);
}

/**
 * Average interpleural distance (AID, cm): mean of the maximum apical distance and the distances at
 * the midpoints of the upper and lower halves. Source: Rhea JT et al., Radiology 1982;144:733-736.
 */
export function averageInterpleuralDistanceCm(apexCm: number, upperCm: number, lowerCm: number): number {
  requireNonNegative('apexCm', apexCm);
  requireNonNegative('upperCm', upperCm);
  requireNonNegative('lowerCm', lowerCm);
  return (apexCm + upperCm + lowerCm) / 3;
}

/** Collins regression constants. Source: Collins CD et al., AJR 1995;165:1127-1130. */
export const collinsFormula = {
  interceptPercent: 4.2,
  slopePercentPerCm: 4.7,
  source: 'Collins CD et al., AJR 1995;165:1127-1130 (helical CT regression, n = 20, r = 0.98)',
} as const;

export interface CollinsResult {
  /** Percent, clamped to 100. */
  percent: number;
  /** The formula's value before clamping. */
  rawPercent: number;
  /** A + B + C, cm. */
  sumCm: number;
  /** True when the formula passed 100 % (A + B + C > about 20.38 cm) and was clamped. */
  clampedAt100: boolean;
  source: string;
}

/**
 * Collins: % = 4.2 + 4.7 x (A + B + C), distances in cm; clamped at 100 with a flag.
 * Source: Collins CD et al., AJR 1995;165:1127-1130.
 */
export function collinsPercent(apexCm: number, upperCm: number, lowerCm: number): CollinsResult {
  requireNonNegative('apexCm', apexCm);
  requireNonNegative('upperCm', upperCm);
  requireNonNegative('lowerCm', lowerCm);
  const sumCm = apexCm + upperCm + lowerCm;
  const rawPercent = collinsFormula.interceptPercent + collinsFormula.slopePercentPerCm * sumCm;
  const clampedAt100 = rawPercent > 100;
  return {
    percent: clampedAt100 ? 100 : rawPercent,
    rawPercent,
    sumCm,
    clampedAt100,
    source: collinsFormula.source,
  };
}

/** Published size thresholds. Sources: BTS 2010 (MacDuff et al.) and ACCP 2001 (Baumann et al.). */
export const guidelineThresholds = {
  bts: {
    guideline: 'BTS 2010',
    measure: 'interpleural distance at the level of the hilum',
    largeFromCm: 2,
    source: 'MacDuff A et al., BTS pleural disease guideline, Thorax 2010;65 Suppl 2:ii18-ii31',
  },
  accp: {
    guideline: 'ACCP 2001',
    measure: 'distance from the lung apex to the thoracic cupola',
    largeFromCm: 3,
    source: 'Baumann MH et al., ACCP Delphi consensus statement, Chest 2001;119:590-602',
  },
} as const;

export type GuidelineSize = 'small' | 'large' | 'not-measured';

export interface GuidelineClass {
  guideline: 'BTS 2010' | 'ACCP 2001';
  /** What is measured, in words. */
  measure: string;
  size: GuidelineSize;
  valueCm: number | null;
  /** Large from this distance (inclusive), cm. */
  largeFromCm: number;
  /** The rule in words, e.g. "< 2 cm small, >= 2 cm large". */
  rule: string;
  /** True when the threshold differs from the published one (a local setting). */
  thresholdChanged: boolean;
  /** Why the class is 'not-measured' (plain language), else null. */
  reason: string | null;
  source: string;
}

export interface GuidelineSizeResult {
  bts: GuidelineClass;
  accp: GuidelineClass;
}

function classify(
  spec: (typeof guidelineThresholds)['bts'] | (typeof guidelineThresholds)['accp'],
  field: string,
  valueCm: number | null | undefined,
  largeFromCm: number,
): GuidelineClass {
  requirePositive(`${field} threshold`, largeFromCm);
  const thresholdChanged = largeFromCm !== spec.largeFromCm;
  const rule =
    `< ${largeFromCm} cm small, >= ${largeFromCm} cm large` +
    (thresholdChanged ? ` (local setting; published threshold ${spec.largeFromCm} cm)` : '');
  const common = {
    guideline: spec.guideline,
    measure: spec.measure,
    largeFromCm,
    rule,
    thresholdChanged,
    source: spec.source,
  };
  if (valueCm === null || valueCm === undefined) {
    return { ...common, size: 'not-measured', valueCm: null, reason: `No ${spec.measure} was given.` };
  }
  requireNonNegative(field, valueCm);
  return { ...common, size: valueCm >= largeFromCm ? 'large' : 'small', valueCm, reason: null };
}

/**
 * Size class by each guideline separately, never merged: BTS 2010 (interpleural distance at the
 * hilum, < 2 cm small) and ACCP 2001 (apex to cupola, < 3 cm small). Sources: Thorax 2010;65 Suppl 2;
 * Chest 2001;119:590-602. A missing distance gives 'not-measured'; a bad one throws MeasureInputError.
 */
export function guidelineSize(
  input: { hilumCm?: number | null; apexCm?: number | null },
  thresholds: { largeBtsHilumCm?: number; largeAccpApexCm?: number } = {},
): GuidelineSizeResult {
  return {
    bts: classify(
      guidelineThresholds.bts,
      'hilumCm',
      input.hilumCm,
      thresholds.largeBtsHilumCm ?? guidelineThresholds.bts.largeFromCm,
    ),
    accp: classify(
      guidelineThresholds.accp,
      'apexCm',
      input.apexCm,
      thresholds.largeAccpApexCm ?? guidelineThresholds.accp.largeFromCm,
    ),
  };
}
