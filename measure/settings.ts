import { MeasureInputError, requireFinite, requireNonNegative, requirePositive } from './errors';

/** Where a default comes from. 'suggestion' = no published figure, a starting point to adjust locally. */
export type SettingBasis = 'published' | 'suggestion' | 'common practice' | 'from memory';

export interface SettingNote {
  basis: SettingBasis;
  source: string;
}

/** Settings for the deviation rules and the caliper disagreement warning. */
export interface DeviationSettings {
  /** 'enlarging' fires when a film's percent exceeds the previous comparable film's by more than this (percentage points). */
  enlargingTolerancePoints: number;
  /** 'slower-than-expected' fires when observed exceeds the expected resorption by more than this (percentage points). */
  aboveBandPoints: number;
  /** ... or when observed exceeds expected by more than this on two consecutive comparable films. */
  consecutiveAbovePoints: number;
  /** BTS 2010: large from this interpleural distance at the hilum, cm. */
  largeBtsHilumCm: number;
  /** ACCP 2001: large from this apex-to-cupola distance, cm. */
  largeAccpApexCm: number;
  /** 'methods-disagree' fires when the spread of one film's method percents exceeds this (percentage points). */
  disagreementPoints: number;
  /** 'overdue' fires when the next film is this many days late. */
  overdueGraceDays: number;
  /** 'unresolved-by-prediction' fires this many days after the predicted resolution. */
  unresolvedMarginDays: number;
  /** Resorption rate on air, percent of hemithorax per day. */
  ratePerDay: number;
  /** Resorption multiplier while on supplemental oxygen. */
  oxygenMultiplier: number;
}

/**
 * Default deviation settings. Sources per value in `deviationSettingNotes`; values marked
 * 'suggestion' have no published figure and should be set locally.
 */
export const defaultDeviationSettings: Readonly<DeviationSettings> = Object.freeze({
  enlargingTolerancePoints: 5,
  aboveBandPoints: 10,
  consecutiveAbovePoints: 0,
  largeBtsHilumCm: 2,
  largeAccpApexCm: 3,
  disagreementPoints: 20,
  overdueGraceDays: 1,
  unresolvedMarginDays: 7,
  ratePerDay: 1.25,
  oxygenMultiplier: 4,
});

/** Source or basis of each default in `defaultDeviationSettings`. Source: the clinical reference of this project. */
export const deviationSettingNotes: Readonly<Record<keyof DeviationSettings, SettingNote>> = Object.freeze({
  enlargingTolerancePoints: {
    basis: 'suggestion',
    source: 'common practice: no published figure; allows for measurement variation between films',
  },
  aboveBandPoints: {
    basis: 'suggestion',
    source: 'no published figure; about 10 percentage points is a suggested starting point',
  },
  consecutiveAbovePoints: {
    basis: 'suggestion',
    source: 'no published figure; any excess over the expected course on two consecutive comparable films',
  },
  largeBtsHilumCm: {
    basis: 'published',
    source: 'MacDuff A et al., BTS guideline, Thorax 2010;65 Suppl 2:ii18-ii31',
  },
  largeAccpApexCm: {
    basis: 'published',
    source: 'Baumann MH et al., ACCP Delphi consensus, Chest 2001;119:590-602',
  },
  disagreementPoints: {
    basis: 'suggestion',
    source:
      'no published figure; the methods differ systematically (a 2 cm pneumothorax is 32 % by Collins, 49 % by Light), so the tolerance must be wide',
  },
  overdueGraceDays: {
    basis: 'common practice',
    source: 'common practice: one day of grace for a planned film',
  },
  unresolvedMarginDays: {
    basis: 'suggestion',
    source: 'common practice: individual resorption varies widely (Kelly AM et al., Emerg Med J 2006;23:780-782)',
  },
  ratePerDay: {
    basis: 'published',
    source: 'Kircher LT, Swartzel RL, JAMA 1954;155:24-29 (1.25 %/day, area method); BTS 2010 range 1.25-1.8 %/day',
  },
  oxygenMultiplier: {
    basis: 'published',
    source: 'Northfield TC, BMJ 1971;4:86-88 (about 4x faster on supplemental oxygen)',
  },
});

/**
 * Returns defaults overlaid with `partial`, after checking each value. Throws MeasureInputError on a
 * negative, non-finite or non-positive (rates, thresholds) value. Source: house rule, no wrong numbers.
 */
export function resolveDeviationSettings(partial: Partial<DeviationSettings> = {}): DeviationSettings {
  const s: DeviationSettings = { ...defaultDeviationSettings, ...partial };
  requireNonNegative('enlargingTolerancePoints', s.enlargingTolerancePoints);
  requireNonNegative('aboveBandPoints', s.aboveBandPoints);
  requireNonNegative('consecutiveAbovePoints', s.consecutiveAbovePoints);
  requirePositive('largeBtsHilumCm', s.largeBtsHilumCm);
  requirePositive('largeAccpApexCm', s.largeAccpApexCm);
  requireNonNegative('disagreementPoints', s.disagreementPoints);
  requireNonNegative('overdueGraceDays', s.overdueGraceDays);
  requireNonNegative('unresolvedMarginDays', s.unresolvedMarginDays);
  requirePositive('ratePerDay', s.ratePerDay);
  requireFinite('oxygenMultiplier', s.oxygenMultiplier);
  if (s.oxygenMultiplier < 1) {
    throw new MeasureInputError('oxygenMultiplier', 'out-of-range', 'The oxygen multiplier must be at least 1.');
  }
  return s;
}
