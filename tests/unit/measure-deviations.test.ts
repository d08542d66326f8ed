import { describe, expect, it } from 'vitest';
import {
  MeasureInputError,
  defaultDeviationSettings,
  deviationSettingNotes,
  deviations,
  type FollowUpPlan,
  type SeriesFilm,
} from '../../measure';

// Invented example films. Defaults: 1.25 %/day (Kircher & Swartzel, JAMA 1954), x4 on oxygen (Northfield, BMJ 1971).
function film(id: string, day: number, percent: number | null, extra: Partial<SeriesFilm> = {}): SeriesFilm {
  return {
    filmId: id,
    dayIndex: day,
    percent,
    methodPercents: { light: percent, rhea: percent, collins: percent },
    projection: 'PA',
    position: 'erect',
    ...extra,
  };
}

const plan = (over: Partial<FollowUpPlan> = {}): FollowUpPlan => ({ now: 8, nextFilmDueDay: 14, oxygenPeriods: [], ...over });

// Resolving on time: 20 % -> 16 % on day 3 (expected 16.25) -> 11 % on day 7 (expected 11.25): Kircher & Swartzel 1954.
const compliant: SeriesFilm[] = [
  film('f1', 0, 20, { hilumCm: 1.5, apexCm: 2, methodPercents: { light: 20, rhea: 18, collins: 24 } }),
  film('f2', 3, 16, { hilumCm: 1.2, apexCm: 1.6 }),
  film('f3', 7, 11, { hilumCm: 0.9, apexCm: 1.1 }),
];

const rules = (list: { rule: string }[]) => list.map((d) => d.rule);

describe('deviations on a compliant course', () => {
  it('fires nothing', () => {
    // every default below its threshold (defaults and their sources in deviationSettingNotes)
    expect(deviations(compliant, plan(), defaultDeviationSettings)).toEqual([]);
  });
});

describe('enlarging', () => {
  it('fires when a film exceeds the previous comparable film by more than the tolerance', () => {
    // tolerance 5 points: suggestion (common practice), deviationSettingNotes.enlargingTolerancePoints
    const out = deviations([film('a', 0, 20), film('b', 2, 27)], plan({ now: 2 }));
    expect(rules(out)).toEqual(['enlarging']);
    expect(out[0]?.filmId).toBe('b');
    expect(out[0]?.figures.increasePoints).toBeCloseTo(7, 10);
    expect(out[0]?.reason).toMatch(/Larger than the previous/);
  });

  it('does not fire within the tolerance', () => {
    // common practice: +4 points is within a 5-point tolerance
    expect(rules(deviations([film('a', 0, 20), film('b', 2, 24)], plan({ now: 2 })))).not.toContain('enlarging');
  });

  it('compares only films of the same projection and position', () => {
    // supine AP distances differ systematically from erect PA: Choi BG et al., Radiology 1998;209:567
    const out = deviations(
      [film('a', 0, 20), film('b', 1, 30, { projection: 'AP', position: 'supine' })],
      plan({ now: 1 }),
    );
    expect(rules(out)).not.toContain('enlarging');
  });
});

describe('slower-than-expected', () => {
  it('fires when a film is more than the band above the expected course', () => {
    // 30 % on day 0 at 1.25 %/day -> 17.5 % expected on day 10 (Kircher & Swartzel 1954); 30 is 12.5 over a 10-point band (suggestion)
    const out = deviations([film('a', 0, 30), film('b', 10, 30)], plan({ now: 10 }));
    expect(rules(out)).toEqual(['slower-than-expected']);
    expect(out[0]?.figures.expectedPercent).toBeCloseTo(17.5, 10);
    expect(out[0]?.figures.trigger).toBe('single-film');
  });

  it('fires on two consecutive comparable films above the expected course', () => {
    // expected 17.5 then 15 (Kircher & Swartzel 1954); observed 18 then 16: above on two consecutive films (suggestion)
    const out = deviations([film('a', 0, 20), film('b', 2, 18), film('c', 4, 16)], plan({ now: 4 }));
    expect(rules(out)).toEqual(['slower-than-expected']);
    expect(out[0]?.figures.trigger).toBe('two-consecutive-films');
    expect(out[0]?.filmId).toBe('c');
  });

  it('allows for oxygen', () => {
    // x4 on oxygen (Northfield, BMJ 1971): 20 % expected at 0 by day 4, so 8 % on day 4 is 8 over, within a 10-point band;
    // on air the same 8 % would be 3 points below 15 % expected
    const onO2 = deviations([film('a', 0, 20), film('b', 4, 8)], plan({ now: 4, oxygenPeriods: [{ startDay: 0, endDay: null }] }));
    expect(rules(onO2)).not.toContain('slower-than-expected');
    const fast = deviations([film('a', 0, 20), film('b', 4, 12)], plan({ now: 4, oxygenPeriods: [{ startDay: 0, endDay: null }] }));
    expect(rules(fast)).toContain('slower-than-expected');
  });

  it('does not mix projections when choosing the baseline', () => {
    // Choi BG et al., Radiology 1998;209:567: a supine AP film is not a baseline for erect PA films
    const out = deviations(
      [film('ap', 0, 10, { projection: 'AP', position: 'supine' }), film('pa1', 1, 30), film('pa2', 3, 28)],
      plan({ now: 3 }),
    );
    expect(rules(out)).not.toContain('slower-than-expected');
  });
});

describe('large-by-guideline', () => {
  it('fires for each guideline separately', () => {
    // BTS 2010 large from 2 cm at the hilum (Thorax 2010;65 Suppl 2); ACCP 2001 large from 3 cm apex (Chest 2001;119:590)
    const out = deviations([film('a', 0, 20, { hilumCm: 2.5, apexCm: 3.5 })], plan({ now: 0 }));
    const large = out.filter((d) => d.rule === 'large-by-guideline');
    expect(large.map((d) => d.figures.guideline)).toEqual(['BTS 2010', 'ACCP 2001']);
  });

  it('fires for one guideline and not the other', () => {
    // BTS 2010: 2 cm at the hilum is large; ACCP 2001: 2.9 cm apex is small
    const out = deviations([film('a', 0, 20, { hilumCm: 2, apexCm: 2.9 })], plan({ now: 0 }));
    const large = out.filter((d) => d.rule === 'large-by-guideline');
    expect(large.map((d) => d.figures.guideline)).toEqual(['BTS 2010']);
  });

  it('uses the latest film that has the distance', () => {
    // common practice: the current size decides; 2.4 cm on day 0, 1.2 cm on day 3 (BTS 2010 threshold 2 cm)
    const out = deviations([film('a', 0, 20, { hilumCm: 2.4 }), film('b', 3, 16, { hilumCm: 1.2 })], plan({ now: 3 }));
    expect(rules(out)).not.toContain('large-by-guideline');
  });
});

describe('methods-disagree', () => {
  it('fires when one film\'s methods spread more than the setting', () => {
    // Light 49 / Collins 32 / Rhea 23 on the same 2 cm pneumothorax (Light RW; Collins CD et al. 1995; Rhea JT et al. 1982);
    // spread 26 > 20-point suggestion
    const out = deviations([film('a', 0, 32, { methodPercents: { light: 49, rhea: 23, collins: 32 } })], plan({ now: 0 }));
    expect(rules(out)).toEqual(['methods-disagree']);
    expect(out[0]?.figures.spreadPoints).toBeCloseTo(26, 10);
  });

  it('needs two methods to compare', () => {
    // common practice: one method cannot disagree with itself
    const out = deviations([film('a', 0, 32, { methodPercents: { light: 90, rhea: null, collins: null } })], plan({ now: 0 }));
    expect(rules(out)).toEqual([]);
  });
});

describe('overdue', () => {
  it('fires when the planned film is late beyond the grace', () => {
    // grace 1 day: common practice
    const out = deviations(compliant, plan({ now: 16, nextFilmDueDay: 14 }));
    expect(rules(out)).toContain('overdue');
    const d = out.find((x) => x.rule === 'overdue');
    expect(d?.filmId).toBeNull();
    expect(d?.figures.daysLate).toBeCloseTo(2, 10);
  });

  it('does not fire within the grace or once a film is taken', () => {
    // grace 1 day: common practice
    expect(rules(deviations(compliant, plan({ now: 14.5, nextFilmDueDay: 14 })))).not.toContain('overdue');
    expect(rules(deviations(compliant, plan({ now: 9, nextFilmDueDay: 7 })))).not.toContain('overdue');
  });
});

describe('unresolved-by-prediction', () => {
  it('fires when the episode is open beyond the predicted resolution plus the margin', () => {
    // 20 % resolves in 16 days at 1.25 %/day (Kircher & Swartzel 1954); margin 7 days (suggestion) -> day 23
    const out = deviations([film('a', 0, 20)], plan({ now: 24, nextFilmDueDay: null }));
    expect(rules(out)).toEqual(['unresolved-by-prediction']);
    expect(out[0]?.figures.predictedResolutionDay).toBeCloseTo(16, 10);
  });

  it('does not fire before the margin has passed or once resolved', () => {
    // Kircher & Swartzel 1954: predicted day 16, + 7 days margin (suggestion)
    expect(deviations([film('a', 0, 20)], plan({ now: 22, nextFilmDueDay: null }))).toEqual([]);
    expect(deviations([film('a', 0, 20)], plan({ now: 40, nextFilmDueDay: null, resolved: true }))).toEqual([]);
  });
});

describe('deviations on bad input', () => {
  it('throws a typed error rather than judging nonsense', () => {
    // common practice: no verdict from impossible figures
    expect(() => deviations([film('a', 0, 120)], plan())).toThrow(MeasureInputError);
    expect(() => deviations([film('a', Number.NaN, 20)], plan())).toThrow(MeasureInputError);
    expect(() => deviations(compliant, plan({ now: Number.NaN }))).toThrow(MeasureInputError);
    expect(() => deviations(compliant, plan(), { ratePerDay: 0 })).toThrow(MeasureInputError);
  });

  it('is deterministic and does not depend on input order', () => {
    // common practice: the same series gives the same board
    const series = [film('a', 0, 20), film('b', 2, 27, { methodPercents: { light: 50, rhea: 20, collins: 27 } })];
    const once = deviations(series, plan({ now: 30 }));
    expect(deviations([...series].reverse(), plan({ now: 30 }))).toEqual(once);
    expect(rules(once)).toEqual(['enlarging', 'methods-disagree', 'overdue', 'unresolved-by-prediction']);
  });
});

describe('default settings', () => {
  it('carry a source or a suggestion marking for every value', () => {
    // BTS 2010 (2 cm), ACCP 2001 (3 cm), Kircher & Swartzel 1954 (1.25), Northfield 1971 (x4), about 10 points (suggestion)
    expect(defaultDeviationSettings.largeBtsHilumCm).toBe(2);
    expect(defaultDeviationSettings.largeAccpApexCm).toBe(3);
    expect(defaultDeviationSettings.ratePerDay).toBe(1.25);
    expect(defaultDeviationSettings.oxygenMultiplier).toBe(4);
    expect(defaultDeviationSettings.aboveBandPoints).toBe(10);
    expect(deviationSettingNotes.aboveBandPoints.basis).toBe('suggestion');
    for (const key of Object.keys(defaultDeviationSettings) as (keyof typeof defaultDeviationSettings)[]) {
      expect(deviationSettingNotes[key].source.length).toBeGreaterThan(0);
    }
  });
});
