import { MeasureInputError, requireNonNegative, requirePositive } from './errors';

export type DrainIndication = 'air' | 'blood' | 'fluid';

/** Drain size guidance held by Rimwatch, with sources. */
export const drainGuidance = {
  air: {
    minFr: 8,
    maxFr: 14,
    text: 'small-bore drain, 8-14 Fr, for pneumothorax',
    source: 'MacDuff A et al., BTS guideline, Thorax 2010;65 Suppl 2; Mahmood K, Wahidi MM, Clin Chest Med 2013;34:63',
  },
  blood: {
    minFr: 28,
    maxFr: 32,
    text: 'large-bore drain, 28-32 Fr, for acute haemothorax',
    source: 'ATLS, 10th edition (American College of Surgeons)',
    note: 'A 14 Fr pigtail did as well as a large-bore tube in one trial (Bauman ZM et al., World J Surg 2021;45:880).',
  },
} as const;

export interface DrainSizeCheck {
  verdict: 'within-guidance' | 'smaller-than-guidance' | 'larger-than-guidance' | 'no-guidance';
  frenchGauge: number;
  indication: DrainIndication;
  guidance: string | null;
  reason: string;
  notes: string[];
  source: string | null;
}

/**
 * Compares a drain's French gauge with the size guidance for its indication. Sources: BTS 2010
 * (8-14 Fr for air); ATLS 10th ed. (28-32 Fr for acute haemothorax); Bauman ZM et al. 2021 (14 Fr pigtail).
 */
export function drainSizeCheck(input: { frenchGauge: number; indication: DrainIndication }): DrainSizeCheck {
  const fr = requirePositive('frenchGauge', input.frenchGauge);
  const { indication } = input;
  if (indication !== 'air' && indication !== 'blood' && indication !== 'fluid') {
    throw new MeasureInputError('indication', 'bad-format', "The indication must be 'air', 'blood' or 'fluid'.");
  }
  if (indication === 'fluid') {
    return {
      verdict: 'no-guidance',
      frenchGauge: fr,
      indication,
      guidance: null,
      reason: 'Rimwatch holds no size guidance for draining fluid; follow the local protocol.',
      notes: [],
      source: null,
    };
  }
  const g = drainGuidance[indication];
  const notes: string[] = indication === 'blood' ? [drainGuidance.blood.note] : [];
  const verdict = fr < g.minFr ? 'smaller-than-guidance' : fr > g.maxFr ? 'larger-than-guidance' : 'within-guidance';
  const reason =
    verdict === 'within-guidance'
      ? `${fr} Fr is within the guidance: ${g.text}.`
      : `${fr} Fr is ${verdict === 'smaller-than-guidance' ? 'smaller' : 'larger'} than the guidance (${g.text}); check that the choice was intended.`;
  return { verdict, frenchGauge: fr, indication, guidance: g.text, reason, notes, source: g.source };
}

/** One observation of the drain's underwater seal. */
export interface AirLeakObservation {
  /** Hours since the drain was inserted. */
  atHours: number;
  bubbling: boolean;
}

export interface AirLeakSettings {
  /** Bubbling for this many hours or more is a persistent air leak: respiratory specialist. Default 48 (BTS 2010, from memory). */
  specialistAfterHours?: number;
  /** Bubbling for this many hours or more: thoracic surgical opinion. Default 72, the start of 3-5 days (BTS 2010, from memory). */
  surgicalOpinionAfterHours?: number;
}

/** Air leak defaults. Source: BTS 2010 (MacDuff A et al.), figures from memory. */
export const airLeakDefaults = {
  specialistAfterHours: 48,
  surgicalOpinionAfterHours: 72,
  source: 'MacDuff A et al., BTS guideline, Thorax 2010;65 Suppl 2 (from memory): persistent leak at 48 h, respiratory specialist; thoracic surgical opinion at 3-5 days',
} as const;

export interface AirLeakAssessment {
  persistent: boolean;
  /** Hours of uninterrupted bubbling up to the last observation; null when not bubbling at the last observation. */
  bubblingForHours: number | null;
  advice: 'none' | 'respiratory-specialist' | 'thoracic-surgical-opinion';
  reason: string;
  source: string;
}

/**
 * Persistent air leak: bubbling without interruption up to the last observation for at least the
 * thresholds. A run that includes the first observation is counted from insertion. Source: BTS 2010
 * (from memory): 48 h -> respiratory specialist, 3-5 days -> thoracic surgical opinion.
 */
export function persistentAirLeak(
  observations: readonly AirLeakObservation[],
  settings: AirLeakSettings = {},
): AirLeakAssessment {
  const specialist = requirePositive('specialistAfterHours', settings.specialistAfterHours ?? airLeakDefaults.specialistAfterHours);
  const surgical = requirePositive(
    'surgicalOpinionAfterHours',
    settings.surgicalOpinionAfterHours ?? airLeakDefaults.surgicalOpinionAfterHours,
  );
  if (surgical < specialist) {
    throw new MeasureInputError('surgicalOpinionAfterHours', 'inconsistent', 'The surgical threshold must not come before the specialist one.');
  }
  const obs = observations
    .map((o, i) => {
      requireNonNegative(`observations[${i}].atHours`, o.atHours);
      return { o, i };
    })
    .sort((p, q) => p.o.atHours - q.o.atHours || p.i - q.i)
    .map((x) => x.o);
  const last = obs[obs.length - 1];
  const source = airLeakDefaults.source;
  if (last === undefined || !last.bubbling) {
    return {
      persistent: false,
      bubblingForHours: null,
      advice: 'none',
      reason: last === undefined ? 'No observations of the drain.' : 'Not bubbling at the last observation.',
      source,
    };
  }
  let runStart = obs.length - 1;
  while (runStart > 0 && obs[runStart - 1]?.bubbling === true) runStart -= 1;
  const from = runStart === 0 ? 0 : (obs[runStart]?.atHours ?? 0);
  const hours = last.atHours - from;
  const advice = hours >= surgical ? 'thoracic-surgical-opinion' : hours >= specialist ? 'respiratory-specialist' : 'none';
  const persistent = advice !== 'none';
  const reason =
    advice === 'thoracic-surgical-opinion'
      ? `Bubbling for ${hours} h (${surgical} h or more): seek a thoracic surgical opinion.`
      : advice === 'respiratory-specialist'
        ? `Bubbling for ${hours} h (${specialist} h or more): persistent air leak, refer to a respiratory specialist.`
        : `Bubbling for ${hours} h, under ${specialist} h.`;
  return { persistent, bubblingForHours: hours, advice, reason, source };
}

export interface DrainCheckPrompt {
  prompt: boolean;
  reason: string;
  source: string;
}

/**
 * Prompts a drain check when the fluid column does not swing while the lung is not yet re-expanded
 * (the drain may be blocked, kinked or displaced). Source: common practice.
 */
export function drainCheckPrompt(input: { swinging: boolean | null; lungReExpanded: boolean | null }): DrainCheckPrompt {
  const source = 'common practice';
  if (input.swinging === false && input.lungReExpanded === false) {
    return {
      prompt: true,
      reason: 'No swing while the lung is not re-expanded: check the drain for blockage, kinking or displacement.',
      source,
    };
  }
  if (input.swinging === null || input.lungReExpanded === null) {
    return { prompt: false, reason: 'Swing or re-expansion not recorded.', source };
  }
  return { prompt: false, reason: 'No prompt: the drain swings, or the lung has re-expanded.', source };
}
