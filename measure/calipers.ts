import type { FilmCalibration, Plane, Spacing, SpacingSource } from './calibration';
import { segmentLengthMm } from './calibration';
import { MeasureInputError, requireNonNegative } from './errors';
import { segmentLengthPx, segmentTiltFromHorizontalDegrees, type Segment } from './geometry';
import { rheaNomogramRangeCm, rheaPercentFromAidCm } from './rhea-nomogram';
import { defaultDeviationSettings } from './settings';
import { averageInterpleuralDistanceCm, collinsPercent, guidelineSize, lightPercent, type GuidelineClass } from './size';

/** The calipers Rimwatch draws on a film. */
export type CaliperName = 'hemithorax' | 'lung' | 'apex' | 'upper' | 'lower' | 'hilum';

/** A caliper set: any subset of the calipers, each a segment or null when cleared. */
export type CaliperSet = Partial<Record<CaliperName, Segment | null>>;

/** All caliper names, in display order. */
export const caliperNames: readonly CaliperName[] = ['hemithorax', 'lung', 'apex', 'upper', 'lower', 'hilum'];

/** What each caliper measures, in words. Sources: Light RW; Rhea JT et al. 1982; BTS 2010; ACCP 2001. */
export const caliperDescriptions: Readonly<Record<CaliperName, string>> = {
  hemithorax: 'hemithorax width: horizontal, at the level of the hilum, inner chest wall to the mediastinum (Light)',
  lung: 'lung width on the same horizontal line as the hemithorax caliper (Light)',
  apex: 'maximum apical interpleural distance, lung apex to the thoracic cupola (Rhea, Collins; ACCP 2001)',
  upper: 'interpleural distance at the midpoint of the upper half of the lung (Rhea, Collins)',
  lower: 'interpleural distance at the midpoint of the lower half of the lung (Rhea, Collins)',
  hilum: 'interpleural distance at the level of the hilum (BTS 2010)',
};

export interface CaliperLength {
  status: 'ok' | 'missing' | 'invalid';
  px: number | null;
  /** Length in mm in the plane used; null when missing, invalid or uncalibrated. */
  mm: number | null;
  reason: string | null;
}

export interface NotMeasured {
  status: 'not-measured';
  reason: string;
}

export type LightEstimate =
  | { status: 'ok'; percent: number; lungLength: number; hemithoraxLength: number; unit: 'mm' | 'px'; source: string }
  | NotMeasured;

export type RheaEstimate =
  | {
      status: 'ok';
      percent: number;
      aidCm: number;
      outsideNomogram: boolean;
      outsideSide: 'below' | 'above' | null;
      source: string;
    }
  | NotMeasured;

export type CollinsEstimate =
  | { status: 'ok'; percent: number; rawPercent: number; sumCm: number; clampedAt100: boolean; source: string }
  | NotMeasured;

export interface MethodSpread {
  /** max - min of the available method percents, percentage points; null with fewer than two methods. */
  points: number | null;
  methodsCompared: number;
  thresholdPoints: number;
  disagreement: boolean;
  warning: string | null;
}

export interface CaliperEstimate {
  plane: Plane;
  /** Spacing source used for mm lengths; null when the film has no spacing in that plane. */
  calibrationSource: SpacingSource | null;
  correctionUnknown: boolean;
  calibrationNotes: string[];
  lengths: Record<CaliperName, CaliperLength>;
  light: LightEstimate;
  rhea: RheaEstimate;
  collins: CollinsEstimate;
  /** Average interpleural distance, cm, in the plane used; null when not measurable. */
  aidCm: number | null;
  guideline: { bts: GuidelineClass; accp: GuidelineClass };
  spread: MethodSpread;
  caveats: { general: string[]; light: string[]; rhea: string[]; collins: string[]; guideline: string[] };
}

export interface EstimateOptions {
  /** Plane for the cm-based methods; default 'film' (the methods were derived on films). */
  plane?: Plane;
  /** Spread above which the methods are said to disagree, percentage points. */
  disagreementPoints?: number;
  /** e.g. 'PA', 'AP', 'lateral'; drives the projection caveat. */
  projection?: string | null;
  /** e.g. 'erect', 'supine', 'semi-erect'; drives the position caveat. */
  position?: string | null;
  largeBtsHilumCm?: number;
  largeAccpApexCm?: number;
}

/** Tilt beyond which a Light caliper is called "not horizontal" in a caveat, degrees (common practice). */
const lightTiltCaveatDegrees = 10;

const lightSource = 'Light RW, Pleural Diseases (textbook)';

function planeWords(plane: Plane): string {
  return plane === 'film' ? 'detector (film) plane' : 'patient plane';
}

function measureOne(segment: Segment | null | undefined, spacing: Spacing | null): CaliperLength {
  if (segment === null || segment === undefined) {
    return { status: 'missing', px: null, mm: null, reason: 'not drawn' };
  }
  let px: number;
  try {
    px = segmentLengthPx(segment);
  } catch (e) {
    if (e instanceof MeasureInputError) {
      return { status: 'invalid', px: null, mm: null, reason: e.message.replace(/^segment /, 'the caliper ') };
    }
    throw e;
  }
  if (!(px > 0)) {
    return { status: 'invalid', px, mm: null, reason: 'the caliper has no length (both ends on the same point)' };
  }
  const mm = spacing === null ? null : segmentLengthMm(segment, spacing);
  return { status: 'ok', px, mm, reason: null };
}

function problem(name: CaliperName, len: CaliperLength): string | null {
  if (len.status === 'missing') return `the ${name} caliper is not drawn`;
  if (len.status === 'invalid') return `the ${name} caliper is not usable: ${len.reason ?? 'invalid'}`;
  return null;
}

function isAp(projection: string | null | undefined): boolean {
  return typeof projection === 'string' && projection.trim().toUpperCase() === 'AP';
}

function isSupine(position: string | null | undefined): boolean {
  return typeof position === 'string' && position.trim().toLowerCase() === 'supine';
}

/**
 * Estimates pneumothorax size from a caliper set: Light (ratio, works uncalibrated), Rhea and Collins
 * (cm, need a calibration; detector plane by default), BTS 2010 and ACCP 2001 classes, the spread
 * between methods, and caveats. Sources: Light RW; Rhea JT et al., Radiology 1982; Collins CD et al.,
 * AJR 1995; BTS 2010; ACCP 2001. Never throws for bad calipers: the method is 'not-measured' instead.
 */
export function estimateFromCalipers(
  calipers: CaliperSet,
  calibration: FilmCalibration | null,
  options: EstimateOptions = {},
): CaliperEstimate {
  const plane: Plane = options.plane ?? 'film';
  if (plane !== 'film' && plane !== 'patient') {
    throw new MeasureInputError('plane', 'bad-format', "The plane must be 'film' or 'patient'.");
  }
  const thresholdPoints = requireNonNegative(
    'disagreementPoints',
    options.disagreementPoints ?? defaultDeviationSettings.disagreementPoints,
  );
  const spacing: Spacing | null = calibration === null ? null : plane === 'film' ? calibration.film : calibration.patient;

  const lengths = {} as Record<CaliperName, CaliperLength>;
  for (const name of caliperNames) {
    lengths[name] = measureOne(calipers[name], spacing);
  }

  const caveats: CaliperEstimate['caveats'] = { general: [], light: [], rhea: [], collins: [], guideline: [] };
  caveats.general.push(
    'These figures support, and never replace, clinical judgement, local protocols and licensed practice; management follows symptoms.',
    'Plain films correlate with CT volume only moderately (r = 0.71, Engdahl O et al., Chest 1993;103:26) and the PA film underestimates size (BTS 2010).',
    'Loculated or adherent pneumothoraces and bullous lungs make every method unreliable.',
  );
  if (isAp(options.projection) || isSupine(options.position)) {
    caveats.general.push(
      'This is a supine or AP film: the methods were described on erect PA films and are unreliable here; compare only with films of the same projection and position (Choi BG et al., Radiology 1998;209:567).',
    );
  } else if (!options.projection || !options.position) {
    caveats.general.push('Projection or position not recorded: the methods assume an erect PA film.');
  }

  // Light: ratio of widths; mm when any spacing is known (handles non-square pixels), else px.
  let light: LightEstimate;
  caveats.light.push(
    'Assumes a lung that collapses evenly with a uniform rim of air, measured as horizontal widths at the level of the hilum; reads lower than CT volume (Light RW, Pleural Diseases).',
  );
  {
    const lungProblem = problem('lung', lengths.lung);
    const hemiProblem = problem('hemithorax', lengths.hemithorax);
    const lungSeg = calipers.lung;
    const hemiSeg = calipers.hemithorax;
    if (lungProblem !== null || hemiProblem !== null || !lungSeg || !hemiSeg) {
      light = {
        status: 'not-measured',
        reason: `Light index needs the hemithorax and lung widths on the same line: ${[hemiProblem, lungProblem]
          .filter((p): p is string => p !== null)
          .join('; ')}.`,
      };
    } else {
      const ratioSpacing = spacing ?? calibration?.film ?? calibration?.patient ?? null;
      const unit: 'mm' | 'px' = ratioSpacing === null ? 'px' : 'mm';
      const lungLength = ratioSpacing === null ? segmentLengthPx(lungSeg) : segmentLengthMm(lungSeg, ratioSpacing);
      const hemiLength = ratioSpacing === null ? segmentLengthPx(hemiSeg) : segmentLengthMm(hemiSeg, ratioSpacing);
      if (lungLength > hemiLength) {
        light = {
          status: 'not-measured',
          reason: 'The lung caliper is longer than the hemithorax caliper; redraw both on the same horizontal line.',
        };
      } else {
        light = {
          status: 'ok',
          percent: lightPercent(lungLength, hemiLength),
          lungLength,
          hemithoraxLength: hemiLength,
          unit,
          source: lightSource,
        };
        if (unit === 'px') {
          caveats.light.push('Uncalibrated film: widths compared in pixels, assuming square pixels (the ratio needs no calibration).');
        }
      }
      const tilts = [
        ['hemithorax', segmentTiltFromHorizontalDegrees(hemiSeg)],
        ['lung', segmentTiltFromHorizontalDegrees(lungSeg)],
      ] as const;
      for (const [name, tilt] of tilts) {
        if (tilt > lightTiltCaveatDegrees) {
          caveats.light.push(`The ${name} caliper is ${tilt.toFixed(0)} degrees from horizontal; the method uses horizontal widths.`);
        }
      }
    }
  }

  // cm-based: Rhea and Collins need apex, upper and lower in cm.
  const cmNames = ['apex', 'upper', 'lower'] as const;
  const cmProblems = cmNames.map((n) => problem(n, lengths[n])).filter((p): p is string => p !== null);
  const noSpacingReason = `The film has no spacing in the ${planeWords(plane)}, so centimetres cannot be measured; record a reference line of known length${
    plane === 'film' && calibration?.patient ? ' or choose the patient plane' : ''
  }.`;
  let aidCm: number | null = null;
  let rhea: RheaEstimate;
  let collins: CollinsEstimate;
  const apexMm = lengths.apex.mm;
  const upperMm = lengths.upper.mm;
  const lowerMm = lengths.lower.mm;
  if (cmProblems.length > 0) {
    const reason = `Needs the apical, upper and lower interpleural distances: ${cmProblems.join('; ')}.`;
    rhea = { status: 'not-measured', reason };
    collins = { status: 'not-measured', reason };
  } else if (spacing === null || apexMm === null || upperMm === null || lowerMm === null) {
    rhea = { status: 'not-measured', reason: noSpacingReason };
    collins = { status: 'not-measured', reason: noSpacingReason };
  } else {
    const a = apexMm / 10;
    const u = upperMm / 10;
    const l = lowerMm / 10;
    aidCm = averageInterpleuralDistanceCm(a, u, l);
    const r = rheaPercentFromAidCm(aidCm);
    rhea = {
      status: 'ok',
      percent: r.percent,
      aidCm: r.aidCm,
      outsideNomogram: r.outsideNomogram,
      outsideSide: r.outsideSide,
      source: r.source,
    };
    if (r.outsideNomogram) {
      caveats.rhea.push(
        r.outsideSide === 'below'
          ? `AID ${aidCm.toFixed(2)} cm is below the nomogram (${rheaNomogramRangeCm.min} cm): the figure is the nomogram's lowest value and the true size is smaller.`
          : `AID ${aidCm.toFixed(2)} cm is above the nomogram (${rheaNomogramRangeCm.max} cm): the figure is the nomogram's highest value and the true size is larger.`,
      );
    }
    const c = collinsPercent(a, u, l);
    collins = {
      status: 'ok',
      percent: c.percent,
      rawPercent: c.rawPercent,
      sumCm: c.sumCm,
      clampedAt100: c.clampedAt100,
      source: c.source,
    };
    if (c.clampedAt100) {
      caveats.collins.push(`The formula gives ${c.rawPercent.toFixed(1)} %, beyond 100 %; shown as 100 %. Check the calipers.`);
    }
  }
  caveats.rhea.push(
    `Nomogram covers an AID of ${rheaNomogramRangeCm.min}-${rheaNomogramRangeCm.max} cm; outside it the end value is shown, never an extrapolation (Rhea JT et al., Radiology 1982;144:733-736).`,
  );
  caveats.collins.push(
    'Regression fitted to helical CT volume in 20 patients (Collins CD et al., AJR 1995;165:1127-1130); never below 4.2 %, so a tiny pneumothorax reads high.',
  );
  const planeCaveat =
    plane === 'film'
      ? 'Distances in the detector (film) plane, as the cm methods were derived on films.'
      : 'Distances in the patient plane; the cm methods and thresholds were derived on films (detector plane, magnified about 1.05-1.10 on a PA chest), so these read smaller than the methods intend.';
  caveats.rhea.push(planeCaveat);
  caveats.collins.push(planeCaveat);
  caveats.guideline.push(planeCaveat);

  // Guidelines, each separately.
  const hilumCm = lengths.hilum.mm === null ? null : lengths.hilum.mm / 10;
  const apexCm = lengths.apex.mm === null ? null : lengths.apex.mm / 10;
  const g = guidelineSize(
    { hilumCm, apexCm },
    { largeBtsHilumCm: options.largeBtsHilumCm, largeAccpApexCm: options.largeAccpApexCm },
  );
  const guidelineReason = (name: CaliperName): string | null => {
    const p = problem(name, lengths[name]);
    if (p !== null) return `Not measured: ${p}.`;
    if (lengths[name].mm === null) return noSpacingReason;
    return null;
  };
  const bts: GuidelineClass = g.bts.size === 'not-measured' ? { ...g.bts, reason: guidelineReason('hilum') } : g.bts;
  const accp: GuidelineClass = g.accp.size === 'not-measured' ? { ...g.accp, reason: guidelineReason('apex') } : g.accp;
  caveats.guideline.push(
    'BTS and ACCP classes are shown separately and often disagree by design (Kelly AM, Druda D, Respir Med 2008;102:1830); size decides whether an intervention is safe, symptoms drive management (BTS 2023).',
    'The apex caliper serves both as the maximum apical distance (Rhea, Collins) and the apex-to-cupola distance (ACCP).',
  );

  // Spread between the available methods.
  const percents = [light, rhea, collins]
    .filter((m): m is Extract<typeof m, { status: 'ok' }> => m.status === 'ok')
    .map((m) => m.percent);
  const points = percents.length >= 2 ? Math.max(...percents) - Math.min(...percents) : null;
  const disagreement = points !== null && points > thresholdPoints;
  const spread: MethodSpread = {
    points,
    methodsCompared: percents.length,
    thresholdPoints,
    disagreement,
    warning: disagreement
      ? `The methods differ by ${(points ?? 0).toFixed(1)} percentage points (more than ${thresholdPoints}); check the calipers. Some difference is expected: the methods measure differently.`
      : null,
  };

  return {
    plane,
    calibrationSource: spacing?.source ?? null,
    correctionUnknown: calibration?.correctionUnknown ?? true,
    calibrationNotes: calibration === null ? ['No calibration supplied.'] : [...calibration.notes],
    lengths,
    light,
    rhea,
    collins,
    aidCm,
    guideline: { bts, accp },
    spread,
    caveats,
  };
}
