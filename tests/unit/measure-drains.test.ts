import { describe, expect, it } from 'vitest';
import { MeasureInputError, drainCheckPrompt, drainSizeCheck, persistentAirLeak } from '../../measure';

describe('drainSizeCheck', () => {
  it('accepts 8-14 Fr for air', () => {
    // small-bore 8-14 Fr for pneumothorax: BTS 2010, Thorax 2010;65 Suppl 2; Mahmood K, Wahidi MM, Clin Chest Med 2013
    expect(drainSizeCheck({ frenchGauge: 8, indication: 'air' }).verdict).toBe('within-guidance');
    expect(drainSizeCheck({ frenchGauge: 14, indication: 'air' }).verdict).toBe('within-guidance');
    expect(drainSizeCheck({ frenchGauge: 6, indication: 'air' }).verdict).toBe('smaller-than-guidance');
    expect(drainSizeCheck({ frenchGauge: 28, indication: 'air' }).verdict).toBe('larger-than-guidance');
  });

  it('expects large bore for acute haemothorax and notes the pigtail trial', () => {
    // 28-32 Fr: ATLS 10th ed.; 14 Fr pigtail did as well: Bauman ZM et al., World J Surg 2021;45:880
    expect(drainSizeCheck({ frenchGauge: 28, indication: 'blood' }).verdict).toBe('within-guidance');
    const pigtail = drainSizeCheck({ frenchGauge: 14, indication: 'blood' });
    expect(pigtail.verdict).toBe('smaller-than-guidance');
    expect(pigtail.notes.join(' ')).toMatch(/Bauman/);
  });

  it('holds no guidance for fluid and says so', () => {
    // no figure in the clinical reference: defer to local protocol (common practice)
    expect(drainSizeCheck({ frenchGauge: 12, indication: 'fluid' }).verdict).toBe('no-guidance');
  });

  it('refuses a non-positive gauge', () => {
    // common practice: no verdict from impossible input
    expect(() => drainSizeCheck({ frenchGauge: 0, indication: 'air' })).toThrow(MeasureInputError);
    expect(() => drainSizeCheck({ frenchGauge: Number.NaN, indication: 'air' })).toThrow(MeasureInputError);
  });
});

describe('persistentAirLeak', () => {
  it('refers to a respiratory specialist after 48 h of bubbling', () => {
    // 48 h: BTS 2010, Thorax 2010;65 Suppl 2 (from memory)
    const r = persistentAirLeak([
      { atHours: 6, bubbling: true },
      { atHours: 24, bubbling: true },
      { atHours: 50, bubbling: true },
    ]);
    expect(r.persistent).toBe(true);
    expect(r.advice).toBe('respiratory-specialist');
    expect(r.bubblingForHours).toBe(50);
  });

  it('asks for a thoracic surgical opinion at 3-5 days', () => {
    // 3-5 days: BTS 2010 (from memory); default at the start of the window, 72 h
    const r = persistentAirLeak([
      { atHours: 12, bubbling: true },
      { atHours: 80, bubbling: true },
    ]);
    expect(r.advice).toBe('thoracic-surgical-opinion');
  });

  it('does not fire when bubbling stopped or within 48 h', () => {
    // BTS 2010 (from memory): a leak that stops is not persistent
    expect(persistentAirLeak([{ atHours: 24, bubbling: true }, { atHours: 60, bubbling: false }]).persistent).toBe(false);
    expect(persistentAirLeak([{ atHours: 40, bubbling: true }]).persistent).toBe(false);
    // a new leak counts from its first observation, not from insertion (common practice)
    const restarted = persistentAirLeak([
      { atHours: 10, bubbling: true },
      { atHours: 30, bubbling: false },
      { atHours: 40, bubbling: true },
      { atHours: 70, bubbling: true },
    ]);
    expect(restarted.bubblingForHours).toBe(30);
    expect(restarted.persistent).toBe(false);
  });

  it('refuses negative times', () => {
    // common practice: no verdict from impossible input
    expect(() => persistentAirLeak([{ atHours: -1, bubbling: true }])).toThrow(MeasureInputError);
  });
});

describe('drainCheckPrompt', () => {
  it('prompts a check when there is no swing and the lung is not re-expanded', () => {
    // common practice: no swing may mean a blocked, kinked or displaced drain
    expect(drainCheckPrompt({ swinging: false, lungReExpanded: false }).prompt).toBe(true);
  });

  it('does not prompt when the drain swings or the lung has re-expanded', () => {
    // common practice: swing stops as the lung re-expands
    expect(drainCheckPrompt({ swinging: true, lungReExpanded: false }).prompt).toBe(false);
    expect(drainCheckPrompt({ swinging: false, lungReExpanded: true }).prompt).toBe(false);
    expect(drainCheckPrompt({ swinging: null, lungReExpanded: false }).prompt).toBe(false);
  });
});
