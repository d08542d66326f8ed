import { MeasureInputError, requirePositive } from './errors';
import { requireValidSegment, segmentLengthPx, type Segment } from './geometry';

/** Where a spacing came from (machine-readable tag). */
export type SpacingSource =
  | 'imager-pixel-spacing'
  | 'pixel-spacing-uncorrected'
  | 'pixel-spacing-unverified'
  | 'nominal-scanned-pixel-spacing'
  | 'pixel-spacing-calibrated'
  | 'imager-spacing/ermf'
  | 'imager-spacing*sod/sid'
  | 'reference-line';

/** Physical distance between pixel centres, mm: row spacing (vertical, between rows) and column spacing (horizontal). */
export interface Spacing {
  rowMm: number;
  columnMm: number;
  source: SpacingSource;
}

/** Spacing in the detector (film) plane and in the patient plane, either possibly unknown. */
export interface FilmCalibration {
  film: Spacing | null;
  patient: Spacing | null;
  /** True when Pixel Spacing Calibration Type, Imager Pixel Spacing and Nominal Scanned Pixel Spacing are all absent (DICOM PS3.3 10.7). */
  correctionUnknown: boolean;
  /** Plain-language notes on how the spacings were chosen or why one is missing. */
  notes: string[];
}

export type Plane = 'film' | 'patient';

/** The DICOM attributes that bear on spacing, already parsed to numbers; [row, column] order as encoded. */
export interface DicomSpacingAttributes {
  /** Pixel Spacing (0028,0030). */
  pixelSpacingMm?: readonly [number, number] | null;
  /** Imager Pixel Spacing (0018,1164). */
  imagerPixelSpacingMm?: readonly [number, number] | null;
  /** Nominal Scanned Pixel Spacing (0018,2010). */
  nominalScannedPixelSpacingMm?: readonly [number, number] | null;
  /** Estimated Radiographic Magnification Factor (0018,1114) = SID / SOD. */
  estimatedRadiographicMagnificationFactor?: number | null;
  /** Distance Source to Detector (0018,1110), mm. */
  distanceSourceToDetectorMm?: number | null;
  /** Distance Source to Patient (0018,1111), mm. */
  distanceSourceToPatientMm?: number | null;
  /** Pixel Spacing Calibration Type (0028,0A02): GEOMETRY or FIDUCIAL. */
  pixelSpacingCalibrationType?: string | null;
}

type Pair = readonly [number, number];

function validPair(name: string, value: readonly number[] | null | undefined, notes: string[]): Pair | null {
  if (value === null || value === undefined) return null;
  const row = value[0];
  const col = value[1];
  if (
    value.length !== 2 ||
    row === undefined ||
    col === undefined ||
    !Number.isFinite(row) ||
    !Number.isFinite(col) ||
    row <= 0 ||
    col <= 0
  ) {
    notes.push(`${name} ignored: it must be two positive finite numbers (row, column).`);
    return null;
  }
  return [row, col];
}

function validScalar(name: string, value: number | null | undefined, notes: string[]): number | null {
  if (value === null || value === undefined) return null;
  if (!Number.isFinite(value) || value <= 0) {
    notes.push(`${name} ignored: it must be a positive finite number.`);
    return null;
  }
  return value;
}

function samePair(p: Pair, q: Pair): boolean {
  const close = (u: number, v: number) => Math.abs(u - v) <= 1e-6 * Math.max(Math.abs(u), Math.abs(v));
  return close(p[0], q[0]) && close(p[1], q[1]);
}

function spacing(pair: Pair, source: SpacingSource): Spacing {
  return { rowMm: pair[0], columnMm: pair[1], source };
}

/**
 * Chooses detector-plane (film) and patient-plane spacing from DICOM attributes.
 * Source: DICOM PS3.3 section 10.7 (Basic Pixel Spacing Calibration Macro) and the DX / CR modules.
 * Film: Imager Pixel Spacing; else Pixel Spacing when it is not known to be corrected; else Nominal
 * Scanned Pixel Spacing. Patient: Pixel Spacing when corrected (GEOMETRY / FIDUCIAL, or differing from
 * Imager / Nominal Scanned Pixel Spacing); else Imager Pixel Spacing / ERMF; else x SOD / SID.
 * Non-positive or non-finite values are ignored with a note.
 */
export function calibrationFromDicom(attrs: DicomSpacingAttributes): FilmCalibration {
  const notes: string[] = [];
  const ps = validPair('Pixel Spacing (0028,0030)', attrs.pixelSpacingMm, notes);
  const ips = validPair('Imager Pixel Spacing (0018,1164)', attrs.imagerPixelSpacingMm, notes);
  const nsps = validPair('Nominal Scanned Pixel Spacing (0018,2010)', attrs.nominalScannedPixelSpacingMm, notes);
  let ermf = validScalar('Estimated Radiographic Magnification Factor (0018,1114)', attrs.estimatedRadiographicMagnificationFactor, notes);
  let sid = validScalar('Distance Source to Detector (0018,1110)', attrs.distanceSourceToDetectorMm, notes);
  let sod = validScalar('Distance Source to Patient (0018,1111)', attrs.distanceSourceToPatientMm, notes);

  if (ermf !== null && ermf < 1) {
    notes.push('Estimated Radiographic Magnification Factor ignored: a value below 1 is geometrically impossible for a projection film.');
    ermf = null;
  }
  if (sid !== null && sod !== null && sod > sid) {
    notes.push('Source distances ignored: the patient cannot be further from the source than the detector.');
    sid = null;
    sod = null;
  }

  const rawType = attrs.pixelSpacingCalibrationType;
  const type = typeof rawType === 'string' && rawType.trim() !== '' ? rawType.trim().toUpperCase() : null;
  const typeCorrected = type === 'GEOMETRY' || type === 'FIDUCIAL';
  if (type !== null && !typeCorrected) {
    notes.push(`Pixel Spacing Calibration Type "${type}" is not one DICOM defines (GEOMETRY, FIDUCIAL); treated as absent.`);
  }

  const correctionUnknown = !typeCorrected && ips === null && nsps === null;
  if (correctionUnknown) {
    notes.push(
      'Correction status unknown: Pixel Spacing Calibration Type, Imager Pixel Spacing and Nominal Scanned Pixel Spacing are all absent.',
    );
  }

  const psDiffersFromIps = ps !== null && ips !== null && !samePair(ps, ips);
  // By analogy with Imager Pixel Spacing for digitised films (from memory of PS3.3 10.7.1.3).
  const psDiffersFromNsps = ps !== null && ips === null && nsps !== null && !samePair(ps, nsps);
  const psCorrected = ps !== null && (typeCorrected || psDiffersFromIps || psDiffersFromNsps);
  if (ps !== null && ips !== null && typeCorrected && !psDiffersFromIps) {
    notes.push(`Pixel Spacing equals Imager Pixel Spacing although the calibration type is ${type}; using it as given.`);
  }

  // Film (detector) plane.
  let film: Spacing | null = null;
  if (ips !== null) {
    film = spacing(ips, 'imager-pixel-spacing');
  } else if (ps !== null && !psCorrected) {
    if (correctionUnknown) {
      film = spacing(ps, 'pixel-spacing-unverified');
      notes.push('Film-plane spacing taken from Pixel Spacing, assuming no magnification correction (none is recorded).');
    } else {
      film = spacing(ps, 'pixel-spacing-uncorrected');
    }
  } else if (nsps !== null) {
    film = spacing(nsps, 'nominal-scanned-pixel-spacing');
    notes.push('Film-plane spacing taken from Nominal Scanned Pixel Spacing: right only if the digitised film was printed life-size.');
  } else if (ps !== null) {
    notes.push('No detector-plane spacing: Pixel Spacing is calibrated to the patient and Imager Pixel Spacing is absent.');
  } else {
    notes.push('No spacing attributes: draw a reference line of known length to measure in centimetres.');
  }

  // Patient plane.
  let patient: Spacing | null = null;
  if (ps !== null && psCorrected) {
    patient = spacing(ps, 'pixel-spacing-calibrated');
  } else if (ips !== null && ermf !== null) {
    patient = spacing([ips[0] / ermf, ips[1] / ermf], 'imager-spacing/ermf');
  } else if (ips !== null && sid !== null && sod !== null) {
    patient = spacing([(ips[0] * sod) / sid, (ips[1] * sod) / sid], 'imager-spacing*sod/sid');
  } else if (film !== null) {
    notes.push('No magnification information: patient-plane spacing unknown.');
  }

  return { film, patient, correctionUnknown, notes };
}

/**
 * Isotropic calibration from a line of known length drawn on the image (e.g. a marker or ruler).
 * Source: plane geometry; the plane is the one the known object lies in. Throws MeasureInputError on
 * a zero-length line or a non-positive length.
 */
export function calibrationFromReferenceLine(segment: Segment, knownLengthMm: number, plane: Plane): FilmCalibration {
  requireValidSegment('referenceLine', segment);
  requirePositive('knownLengthMm', knownLengthMm);
  const px = segmentLengthPx(segment);
  if (px <= 0) {
    throw new MeasureInputError('referenceLine', 'not-positive', 'The reference line has no length.');
  }
  const mmPerPx = knownLengthMm / px;
  const s: Spacing = { rowMm: mmPerPx, columnMm: mmPerPx, source: 'reference-line' };
  const note =
    `Reference line of ${knownLengthMm} mm over ${px.toFixed(1)} px (square pixels assumed), taken as ${plane === 'film' ? 'the detector (film) plane' : 'the patient plane'}.`;
  return {
    film: plane === 'film' ? s : null,
    patient: plane === 'patient' ? s : null,
    correctionUnknown: false,
    notes: [note],
  };
}

/**
 * Length of a segment in mm: row spacing scales the vertical (y) displacement, column spacing the
 * horizontal (x). Source: DICOM PS3.3 10.7.1.3 (first value = row spacing).
 */
export function segmentLengthMm(segment: Segment, s: Pick<Spacing, 'rowMm' | 'columnMm'>): number {
  requireValidSegment('segment', segment);
  requirePositive('rowMm', s.rowMm);
  requirePositive('columnMm', s.columnMm);
  const dyMm = (segment.b.y - segment.a.y) * s.rowMm;
  const dxMm = (segment.b.x - segment.a.x) * s.columnMm;
  return Math.hypot(dxMm, dyMm);
}
