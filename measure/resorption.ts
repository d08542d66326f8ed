import { MeasureInputError, requireFinite, requireNonNegative, requirePositive } from './errors';

/**
 * Published resorption figures, each with the method it was measured by.
 * Sources as named per entry.
 */
export const resorptionRates = {
  air: {
    ratePerDay: 1.25,
    method: 'area',
    source: 'Kircher LT, Swartzel RL, JAMA 1954;155:24-29',
  },
  btsRange: {
    lowPerDay: 1.25,
    highPerDay: 1.8,
    method: 'not stated',
    source: 'MacDuff A et al., BTS guideline, Thorax 2010;65 Suppl 2:ii18-ii31',
  },
  measuredByCollins: {
    meanPerDay: 2.2,
    ci95PerDay: [1.4, 3.0] as const,
    individualRangePerDay: [-7.5, 13.4] as const,
    method: 'Collins',
    source: 'Kelly AM et al., Emerg Med J 2006;23:780-782',
  },
  oxygen: {
    multiplier: 4,
    method: 'area',
    source: 'Northfield TC, BMJ 1971;4:86-88',
  },
  highConcentrationOxygen: {
    ratePerDay: 4.2,
    method: 'not stated',
    source: 'Chadha TS, Cohn MA, Respiration 1983;44:147-152',
  },
} as const;

/** A period on supplemental oxygen, in days since the first film; endDay null = still on oxygen. */
export interface OxygenPeriod {
  startDay: number;
  endDay: number | null;
}

export interface ResorptionOptions {
  /** Percent of hemithorax per day on air; default 1.25 (Kircher & Swartzel 1954). */
  ratePerDay?: number;
  /** Multiplier while on oxygen; default 4 (Northfield 1971). */
  oxygenMultiplier?: number;
  /** Oxygen periods, days since the first film. */
  oxygenPeriods?: readonly OxygenPeriod[];
  /** Day (since the first film) of the film the initial percent comes from; default 0. */
  fromDay?: number;
}

interface Resolved {
  ratePerDay: number;
  oxygenMultiplier: number;
  periods: { start: number; end: number }[];
  fromDay: number;
}

function resolveOptions(options: ResorptionOptions): Resolved {
  const ratePerDay = requirePositive('ratePerDay', options.ratePerDay ?? resorptionRates.air.ratePerDay);
  const oxygenMultiplier = requireFinite('oxygenMultiplier', options.oxygenMultiplier ?? resorptionRates.oxygen.multiplier);
  if (oxygenMultiplier < 1) {
    throw new MeasureInputError('oxygenMultiplier', 'out-of-range', 'The oxygen multiplier must be at least 1.');
  }
  const fromDay = requireFinite('fromDay', options.fromDay ?? 0);
  const raw = (options.oxygenPeriods ?? []).map((p, i) => {
    const start = requireFinite(`oxygenPeriods[${i}].startDay`, p.startDay);
    const end = p.endDay === null ? Number.POSITIVE_INFINITY : requireFinite(`oxygenPeriods[${i}].endDay`, p.endDay);
    if (end < start) {
      throw new MeasureInputError(`oxygenPeriods[${i}].endDay`, 'inconsistent', 'An oxygen period ends before it starts.');
    }
    return { start, end };
  });
  raw.sort((p, q) => p.start - q.start || p.end - q.end);
  const periods: { start: number; end: number }[] = [];
  for (const p of raw) {
    const last = periods[periods.length - 1];
    if (last !== undefined && p.start <= last.end) {
      last.end = Math.max(last.end, p.end);
    } else {
      periods.push({ ...p });
    }
  }
  return { ratePerDay, oxygenMultiplier, periods, fromDay };
}

/** Days spent on oxygen between two days since the first film (overlapping periods counted once). Source: arithmetic. */
export function oxygenDaysBetween(fromDay: number, toDay: number, oxygenPeriods: readonly OxygenPeriod[]): number {
  requireFinite('fromDay', fromDay);
  requireFinite('toDay', toDay);
  if (toDay < fromDay) {
    throw new MeasureInputError('toDay', 'inconsistent', 'toDay is before fromDay.');
  }
  const { periods } = resolveOptions({ oxygenPeriods });
  return overlap(fromDay, toDay, periods);
}

function overlap(from: number, to: number, periods: readonly { start: number; end: number }[]): number {
  let days = 0;
  for (const p of periods) {
    const lo = Math.max(from, p.start);
    const hi = Math.min(to, p.end);
    if (hi > lo) days += hi - lo;
  }
  return days;
}

function requirePercent(field: string, value: number): number {
  requireNonNegative(field, value);
  if (value > 100) {
    throw new MeasureInputError(field, 'out-of-range', `${field} must be at most 100.`);
  }
  return value;
}

/**
 * Expected size after `elapsedDays` under linear resorption (percent of hemithorax per day), faster
 * by the oxygen multiplier inside oxygen periods; never below zero. Sources: Kircher & Swartzel,
 * JAMA 1954 (1.25 %/day); BTS 2010 (1.25-1.8); Northfield, BMJ 1971 (x4 on oxygen).
 */
export function expectedPercentAt(initialPercent: number, elapsedDays: number, options: ResorptionOptions = {}): number {
  requirePercent('initialPercent', initialPercent);
  requireNonNegative('elapsedDays', elapsedDays);
  const o = resolveOptions(options);
  const oxygenDays = overlap(o.fromDay, o.fromDay + elapsedDays, o.periods);
  const effectiveDays = elapsedDays + (o.oxygenMultiplier - 1) * oxygenDays;
  return Math.max(0, initialPercent - o.ratePerDay * effectiveDays);
}

/**
 * Days from the initial film until the expected size reaches zero under the same linear model.
 * Sources: Kircher & Swartzel, JAMA 1954; BTS 2010; Northfield, BMJ 1971.
 */
export function predictedResolutionDays(initialPercent: number, options: ResorptionOptions = {}): number {
  requirePercent('initialPercent', initialPercent);
  const o = resolveOptions(options);
  const target = initialPercent / o.ratePerDay; // air-equivalent days needed
  let t = o.fromDay;
  let done = 0;
  for (const p of o.periods) {
    if (p.end <= t) continue;
    const start = Math.max(p.start, t);
    const needBefore = target - done;
    if (start - t >= needBefore) return t + needBefore - o.fromDay;
    done += start - t;
    t = start;
    const need = target - done;
    const capacity = (p.end - t) * o.oxygenMultiplier;
    if (capacity >= need) return t + need / o.oxygenMultiplier - o.fromDay;
    done += capacity;
    t = p.end;
  }
  return t + (target - done) - o.fromDay;
}

export interface ExpectedBand {
  expected: number;
  lower: number;
  upper: number;
  tolerancePoints: number;
  ratePerDay: number;
  oxygenMultiplier: number;
  oxygenDays: number;
}

/**
 * Expected size with a band of +/- tolerancePoints percentage points, clamped to 0-100.
 * Sources: as expectedPercentAt; the tolerance has no published figure (a setting).
 */
export function expectedBand(
  initialPercent: number,
  elapsedDays: number,
  options: ResorptionOptions & { tolerancePoints: number },
): ExpectedBand {
  const tolerancePoints = requireNonNegative('tolerancePoints', options.tolerancePoints);
  const expected = expectedPercentAt(initialPercent, elapsedDays, options);
  const o = resolveOptions(options);
  return {
    expected,
    lower: Math.max(0, expected - tolerancePoints),
    upper: Math.min(100, expected + tolerancePoints),
    tolerancePoints,
    ratePerDay: o.ratePerDay,
    oxygenMultiplier: o.oxygenMultiplier,
    oxygenDays: overlap(o.fromDay, o.fromDay + elapsedDays, o.periods),
  };
}
