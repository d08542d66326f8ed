import { MeasureInputError, requireFinite } from './errors';
import { expectedPercentAt, predictedResolutionDays, type OxygenPeriod } from './resorption';
import { resolveDeviationSettings, type DeviationSettings } from './settings';
import { guidelineThresholds } from './size';

/** One film of an episode's series, as the deviation rules need it. */
export interface SeriesFilm {
  filmId: string;
  /** Days since the first film (may be fractional). */
  dayIndex: number;
  /** The percent the team follows for this film (one chosen method), or null when not measured. */
  percent: number | null;
  methodPercents: { light: number | null; rhea: number | null; collins: number | null };
  /** e.g. 'PA', 'AP'. */
  projection: string | null;
  /** e.g. 'erect', 'supine'. */
  position: string | null;
  /** Interpleural distance at the hilum, cm (BTS 2010), when measured. */
  hilumCm?: number | null;
  /** Apex to cupola, cm (ACCP 2001), when measured. */
  apexCm?: number | null;
}

export interface FollowUpPlan {
  /** Now, in days since the first film (passed in; the core never reads the clock). */
  now: number;
  nextFilmDueDay?: number | null;
  oxygenPeriods: readonly OxygenPeriod[];
  resolved?: boolean;
}

export type DeviationRule =
  | 'enlarging'
  | 'slower-than-expected'
  | 'large-by-guideline'
  | 'methods-disagree'
  | 'overdue'
  | 'unresolved-by-prediction';

/** All rule ids, in the order results are returned. */
export const deviationRules: readonly DeviationRule[] = [
  'enlarging',
  'slower-than-expected',
  'large-by-guideline',
  'methods-disagree',
  'overdue',
  'unresolved-by-prediction',
];

export interface Deviation {
  rule: DeviationRule;
  filmId: string | null;
  figures: Record<string, number | string | null>;
  /** Plain-language explanation. */
  reason: string;
}

function fmt(n: number): string {
  return (Math.round(n * 10) / 10).toString();
}

function norm(s: string | null): string | null {
  if (s === null) return null;
  const t = s.trim();
  return t === '' ? null : t.toLowerCase();
}

function viewWords(f: SeriesFilm): string {
  const p = norm(f.projection);
  const q = norm(f.position);
  if (p === null || q === null) return 'film with projection or position not recorded';
  return `${q} ${p.toUpperCase()} film`;
}

function groupKey(f: SeriesFilm): string {
  return `${norm(f.projection) ?? '?'}|${norm(f.position) ?? '?'}`;
}

function unconfirmed(f: SeriesFilm): boolean {
  return norm(f.projection) === null || norm(f.position) === null;
}

function checkPercent(field: string, v: number | null): void {
  if (v === null) return;
  requireFinite(field, v);
  if (v < 0 || v > 100) throw new MeasureInputError(field, 'out-of-range', `${field} must be between 0 and 100.`);
}

function validateFilm(f: SeriesFilm, i: number): void {
  requireFinite(`series[${i}].dayIndex`, f.dayIndex);
  checkPercent(`series[${i}].percent`, f.percent);
  checkPercent(`series[${i}].methodPercents.light`, f.methodPercents.light);
  checkPercent(`series[${i}].methodPercents.rhea`, f.methodPercents.rhea);
  checkPercent(`series[${i}].methodPercents.collins`, f.methodPercents.collins);
  for (const [k, v] of [
    ['hilumCm', f.hilumCm],
    ['apexCm', f.apexCm],
  ] as const) {
    if (v !== null && v !== undefined) {
      requireFinite(`series[${i}].${k}`, v);
      if (v < 0) throw new MeasureInputError(`series[${i}].${k}`, 'negative', `${k} must not be negative.`);
    }
  }
}

type Measured = SeriesFilm & { percent: number };

/**
 * Evaluates the deviation rules on an episode's series at `plan.now`. Pure and deterministic.
 * Sources: resorption model (Kircher & Swartzel 1954; BTS 2010; Northfield 1971); comparable films only
 * (Choi BG et al., Radiology 1998;209:567); size classes (BTS 2010; ACCP 2001); tolerances are settings.
 */
export function deviations(
  series: readonly SeriesFilm[],
  plan: FollowUpPlan,
  settings: Partial<DeviationSettings> = {},
): Deviation[] {
  const s = resolveDeviationSettings(settings);
  const now = requireFinite('plan.now', plan.now);
  series.forEach(validateFilm);
  if (plan.nextFilmDueDay !== null && plan.nextFilmDueDay !== undefined) {
    requireFinite('plan.nextFilmDueDay', plan.nextFilmDueDay);
  }
  const resolved = plan.resolved === true;
  const films = series
    .map((f, i) => ({ f, i }))
    .sort((p, q) => p.f.dayIndex - q.f.dayIndex || p.i - q.i)
    .map((x) => x.f);
  const measured = films.filter((f): f is Measured => f.percent !== null);

  const groups = new Map<string, Measured[]>();
  for (const f of measured) {
    const key = groupKey(f);
    const list = groups.get(key);
    if (list) list.push(f);
    else groups.set(key, [f]);
  }

  const out: Deviation[] = [];
  const rateOptions = (fromDay: number) => ({
    ratePerDay: s.ratePerDay,
    oxygenMultiplier: s.oxygenMultiplier,
    oxygenPeriods: plan.oxygenPeriods,
    fromDay,
  });
  const comparabilityNote = (f: SeriesFilm) =>
    unconfirmed(f) ? ' Projection or position not recorded, so comparability is unconfirmed.' : '';

  if (!resolved) {
    // enlarging: latest film of each comparable group against the previous one.
    for (const group of groups.values()) {
      const latest = group[group.length - 1];
      const prev = group[group.length - 2];
      if (latest === undefined || prev === undefined) continue;
      const increase = latest.percent - prev.percent;
      if (increase > s.enlargingTolerancePoints) {
        out.push({
          rule: 'enlarging',
          filmId: latest.filmId,
          figures: {
            percent: latest.percent,
            dayIndex: latest.dayIndex,
            previousFilmId: prev.filmId,
            previousPercent: prev.percent,
            previousDayIndex: prev.dayIndex,
            increasePoints: increase,
            tolerancePoints: s.enlargingTolerancePoints,
            projection: latest.projection,
            position: latest.position,
          },
          reason:
            `Larger than the previous ${viewWords(latest)} (day ${fmt(prev.dayIndex)}): ${fmt(latest.percent)} % against ${fmt(prev.percent)} %, ` +
            `up ${fmt(increase)} points, more than the ${fmt(s.enlargingTolerancePoints)}-point tolerance.` +
            comparabilityNote(latest),
        });
      }
    }

    // slower-than-expected: latest film of each group against the resorption expected from the group's first film.
    for (const group of groups.values()) {
      const baseline = group[0];
      if (baseline === undefined || baseline.percent <= 0) continue;
      const later = group.filter((f) => f.dayIndex > baseline.dayIndex);
      const latest = later[later.length - 1];
      if (latest === undefined) continue;
      const excessAt = (f: Measured) => {
        const expected = expectedPercentAt(baseline.percent, f.dayIndex - baseline.dayIndex, rateOptions(baseline.dayIndex));
        return { expected, excess: f.percent - expected };
      };
      const last = excessAt(latest);
      const prevFilm = later[later.length - 2];
      const prev = prevFilm === undefined ? null : excessAt(prevFilm);
      let trigger: 'single-film' | 'two-consecutive-films' | null = null;
      if (last.excess > s.aboveBandPoints) trigger = 'single-film';
      else if (prev !== null && prev.excess > s.consecutiveAbovePoints && last.excess > s.consecutiveAbovePoints) {
        trigger = 'two-consecutive-films';
      }
      if (trigger === null) continue;
      out.push({
        rule: 'slower-than-expected',
        filmId: latest.filmId,
        figures: {
          percent: latest.percent,
          dayIndex: latest.dayIndex,
          expectedPercent: last.expected,
          excessPoints: last.excess,
          baselineFilmId: baseline.filmId,
          baselinePercent: baseline.percent,
          baselineDayIndex: baseline.dayIndex,
          previousFilmId: prevFilm?.filmId ?? null,
          previousExcessPoints: prev?.excess ?? null,
          trigger,
          aboveBandPoints: s.aboveBandPoints,
          consecutiveAbovePoints: s.consecutiveAbovePoints,
          ratePerDay: s.ratePerDay,
          oxygenMultiplier: s.oxygenMultiplier,
        },
        reason:
          (trigger === 'single-film'
            ? `On day ${fmt(latest.dayIndex)} the size is ${fmt(latest.percent)} %, ${fmt(last.excess)} points above the ${fmt(last.expected)} % expected, more than the ${fmt(s.aboveBandPoints)}-point band.`
            : `Above the expected course on two consecutive ${viewWords(latest)}s: ${fmt(prev?.excess ?? 0)} then ${fmt(last.excess)} points over expected (now ${fmt(latest.percent)} % against ${fmt(last.expected)} %).`) +
          ` Expected from ${fmt(baseline.percent)} % on day ${fmt(baseline.dayIndex)} at ${fmt(s.ratePerDay)} %/day (x${fmt(s.oxygenMultiplier)} on oxygen).` +
          comparabilityNote(latest),
      });
    }

    // large-by-guideline: each guideline separately, on the latest film that has its distance.
    const btsFilm = [...films].reverse().find((f) => f.hilumCm !== null && f.hilumCm !== undefined);
    if (btsFilm && btsFilm.hilumCm != null && btsFilm.hilumCm >= s.largeBtsHilumCm) {
      out.push({
        rule: 'large-by-guideline',
        filmId: btsFilm.filmId,
        figures: {
          guideline: guidelineThresholds.bts.guideline,
          valueCm: btsFilm.hilumCm,
          thresholdCm: s.largeBtsHilumCm,
          dayIndex: btsFilm.dayIndex,
          source: guidelineThresholds.bts.source,
        },
        reason: `Large by BTS 2010: interpleural distance at the hilum ${fmt(btsFilm.hilumCm)} cm on day ${fmt(btsFilm.dayIndex)} (large from ${fmt(s.largeBtsHilumCm)} cm).`,
      });
    }
    const accpFilm = [...films].reverse().find((f) => f.apexCm !== null && f.apexCm !== undefined);
    if (accpFilm && accpFilm.apexCm != null && accpFilm.apexCm >= s.largeAccpApexCm) {
      out.push({
        rule: 'large-by-guideline',
        filmId: accpFilm.filmId,
        figures: {
          guideline: guidelineThresholds.accp.guideline,
          valueCm: accpFilm.apexCm,
          thresholdCm: s.largeAccpApexCm,
          dayIndex: accpFilm.dayIndex,
          source: guidelineThresholds.accp.source,
        },
        reason: `Large by ACCP 2001: apex to cupola ${fmt(accpFilm.apexCm)} cm on day ${fmt(accpFilm.dayIndex)} (large from ${fmt(s.largeAccpApexCm)} cm).`,
      });
    }
  }

  // methods-disagree: every film whose method percents spread more than the setting.
  for (const f of films) {
    const m = f.methodPercents;
    const values = [m.light, m.rhea, m.collins].filter((v): v is number => v !== null);
    if (values.length < 2) continue;
    const spread = Math.max(...values) - Math.min(...values);
    if (spread > s.disagreementPoints) {
      out.push({
        rule: 'methods-disagree',
        filmId: f.filmId,
        figures: {
          light: m.light,
          rhea: m.rhea,
          collins: m.collins,
          spreadPoints: spread,
          thresholdPoints: s.disagreementPoints,
          dayIndex: f.dayIndex,
        },
        reason: `On the film of day ${fmt(f.dayIndex)} the methods differ by ${fmt(spread)} points (more than ${fmt(s.disagreementPoints)}); check the calipers. The methods measure differently, so some difference is expected.`,
      });
    }
  }

  if (!resolved) {
    // overdue: planned film not taken by its due day plus grace.
    const due = plan.nextFilmDueDay;
    if (due !== null && due !== undefined) {
      const taken = films.some((f) => f.dayIndex >= due);
      const late = now - due;
      if (!taken && late > s.overdueGraceDays) {
        out.push({
          rule: 'overdue',
          filmId: null,
          figures: { dueDay: due, now, daysLate: late, graceDays: s.overdueGraceDays },
          reason: `The next film was due on day ${fmt(due)} and is ${fmt(late)} days late (grace ${fmt(s.overdueGraceDays)} days).`,
        });
      }
    }

    // unresolved-by-prediction: episode still open well after the predicted resolution from the first measured film.
    const baseline = measured[0];
    if (baseline !== undefined && baseline.percent > 0) {
      const days = predictedResolutionDays(baseline.percent, rateOptions(baseline.dayIndex));
      const predictedDay = baseline.dayIndex + days;
      const latest = measured[measured.length - 1];
      if (now > predictedDay + s.unresolvedMarginDays) {
        out.push({
          rule: 'unresolved-by-prediction',
          filmId: null,
          figures: {
            baselineFilmId: baseline.filmId,
            baselinePercent: baseline.percent,
            baselineDayIndex: baseline.dayIndex,
            predictedResolutionDay: predictedDay,
            marginDays: s.unresolvedMarginDays,
            now,
            latestFilmId: latest?.filmId ?? null,
            latestPercent: latest?.percent ?? null,
            ratePerDay: s.ratePerDay,
          },
          reason:
            `Not marked resolved, although ${fmt(baseline.percent)} % on day ${fmt(baseline.dayIndex)} was expected to resolve by day ${fmt(predictedDay)} ` +
            `(${fmt(s.ratePerDay)} %/day, x${fmt(s.oxygenMultiplier)} on oxygen); now day ${fmt(now)}, more than ${fmt(s.unresolvedMarginDays)} days later.` +
            (latest ? ` Latest measured film: ${fmt(latest.percent)} % on day ${fmt(latest.dayIndex)}.` : ''),
        });
      }
    }
  }

  const order = new Map(deviationRules.map((r, i) => [r, i]));
  return out
    .map((d, i) => ({ d, i }))
    .sort((p, q) => (order.get(p.d.rule) ?? 0) - (order.get(q.d.rule) ?? 0) || p.i - q.i)
    .map((x) => x.d);
}
