import { describe, expect, it } from 'vitest';
import {
  MeasureInputError,
  calibrationFromDicom,
  calibrationFromReferenceLine,
  segmentLengthMm,
  type Segment,
} from '../../measure';

const seg = (x1: number, y1: number, x2: number, y2: number): Segment => ({ a: { x: x1, y: y1 }, b: { x: x2, y: y2 } });

describe('segmentLengthMm', () => {
  it('applies row spacing to rows and column spacing to columns (5.831 mm)', () => {
    // sqrt((10 x 0.30)^2 + (20 x 0.25)^2) = 5.831: DICOM PS3.3 10.7.1.3 (first value = row spacing)
    const s = seg(0, 0, 20, 10); // 20 columns (x), 10 rows (y)
    expect(segmentLengthMm(s, { rowMm: 0.3, columnMm: 0.25 })).toBeCloseTo(5.831, 3);
    // the swapped order would give 6.5 mm: DICOM PS3.3 10.7.1.3
    expect(segmentLengthMm(s, { rowMm: 0.25, columnMm: 0.3 })).toBeCloseTo(6.5, 3);
  });

  it('gives 144 px x 0.139 mm = 20.02 mm', () => {
    // 144 x 0.139 = 20.016 mm at the detector: DICOM PS3.3 10.7 (Imager Pixel Spacing), arithmetic
    expect(segmentLengthMm(seg(10, 50, 154, 50), { rowMm: 0.139, columnMm: 0.139 })).toBeCloseTo(20.02, 2);
  });

  it('refuses bad spacing or coordinates', () => {
    // DICOM PS3.3 10.7.1.3: spacings are positive
    expect(() => segmentLengthMm(seg(0, 0, 1, 1), { rowMm: 0, columnMm: 0.1 })).toThrow(MeasureInputError);
    expect(() => segmentLengthMm(seg(0, 0, Number.NaN, 1), { rowMm: 0.1, columnMm: 0.1 })).toThrow(MeasureInputError);
  });
});

describe('calibrationFromDicom', () => {
  it('uses Imager Pixel Spacing for the film plane, and / ERMF for the patient plane (18.53 mm)', () => {
    // ERMF = SID/SOD, patient = imager / ERMF: DICOM PS3.3 DX modules; 20.016 / 1.08 = 18.53 mm
    const c = calibrationFromDicom({ imagerPixelSpacingMm: [0.139, 0.139], estimatedRadiographicMagnificationFactor: 1.08 });
    expect(c.film?.source).toBe('imager-pixel-spacing');
    expect(c.film?.rowMm).toBeCloseTo(0.139, 10);
    expect(c.patient?.source).toBe('imager-spacing/ermf');
    expect(c.correctionUnknown).toBe(false);
    const s = seg(0, 0, 144, 0);
    expect(segmentLengthMm(s, c.film ?? { rowMm: Number.NaN, columnMm: Number.NaN })).toBeCloseTo(20.02, 2);
    expect(segmentLengthMm(s, c.patient ?? { rowMm: Number.NaN, columnMm: Number.NaN })).toBeCloseTo(18.53, 2);
  });

  it('uses Imager Pixel Spacing x SOD / SID when there is no ERMF', () => {
    // geometry: patient-plane spacing = detector spacing x SOD / SID (DICOM PS3.3 DX, 0018,1110 and 0018,1111)
    const c = calibrationFromDicom({
      imagerPixelSpacingMm: [0.2, 0.1],
      distanceSourceToDetectorMm: 1800,
      distanceSourceToPatientMm: 1600,
    });
    expect(c.patient?.source).toBe('imager-spacing*sod/sid');
    expect(c.patient?.rowMm).toBeCloseTo((0.2 * 1600) / 1800, 10);
    expect(c.patient?.columnMm).toBeCloseTo((0.1 * 1600) / 1800, 10);
  });

  it('prefers ERMF over the distances when both are present', () => {
    // DICOM PS3.3 DX: ERMF is the recorded estimate of SID/SOD
    const c = calibrationFromDicom({
      imagerPixelSpacingMm: [0.15, 0.15],
      estimatedRadiographicMagnificationFactor: 1.1,
      distanceSourceToDetectorMm: 1800,
      distanceSourceToPatientMm: 1500,
    });
    expect(c.patient?.source).toBe('imager-spacing/ermf');
    expect(c.patient?.rowMm).toBeCloseTo(0.15 / 1.1, 10);
  });

  it('gives no patient plane with Imager Pixel Spacing alone', () => {
    // DICOM PS3.3 10.7: Imager Pixel Spacing is never corrected for magnification
    const c = calibrationFromDicom({ imagerPixelSpacingMm: [0.15, 0.15] });
    expect(c.film?.source).toBe('imager-pixel-spacing');
    expect(c.patient).toBeNull();
    expect(c.notes.join(' ')).toMatch(/patient-plane spacing unknown/);
  });

  it('treats Pixel Spacing equal to Imager Pixel Spacing as uncorrected', () => {
    // DICOM PS3.3 10.7: equal values mean no correction was made
    const c = calibrationFromDicom({ pixelSpacingMm: [0.15, 0.15], imagerPixelSpacingMm: [0.15, 0.15] });
    expect(c.film?.source).toBe('imager-pixel-spacing');
    expect(c.patient).toBeNull();
    const withErmf = calibrationFromDicom({
      pixelSpacingMm: [0.15, 0.15],
      imagerPixelSpacingMm: [0.15, 0.15],
      estimatedRadiographicMagnificationFactor: 1.2,
    });
    expect(withErmf.patient?.source).toBe('imager-spacing/ermf');
    expect(withErmf.patient?.rowMm).toBeCloseTo(0.15 / 1.2, 10);
  });

  it('treats Pixel Spacing differing from Imager Pixel Spacing as calibrated to the patient', () => {
    // DICOM PS3.3 10.7: differing values mean Pixel Spacing was corrected or calibrated
    const c = calibrationFromDicom({ pixelSpacingMm: [0.13, 0.12], imagerPixelSpacingMm: [0.143, 0.132] });
    expect(c.film?.source).toBe('imager-pixel-spacing');
    expect(c.film?.rowMm).toBeCloseTo(0.143, 10);
    expect(c.patient?.source).toBe('pixel-spacing-calibrated');
    expect(c.patient?.rowMm).toBeCloseTo(0.13, 10);
    expect(c.patient?.columnMm).toBeCloseTo(0.12, 10);
  });

  it.each(['GEOMETRY', 'FIDUCIAL'])('treats Pixel Spacing with calibration type %s as patient plane', (type) => {
    // Pixel Spacing Calibration Type (0028,0A02): DICOM PS3.3 10.7
    const c = calibrationFromDicom({ pixelSpacingMm: [0.13, 0.13], pixelSpacingCalibrationType: type });
    expect(c.patient?.source).toBe('pixel-spacing-calibrated');
    expect(c.correctionUnknown).toBe(false);
    // no detector-plane spacing is known: never guessed
    expect(c.film).toBeNull();
    const both = calibrationFromDicom({
      pixelSpacingMm: [0.13, 0.13],
      imagerPixelSpacingMm: [0.143, 0.143],
      pixelSpacingCalibrationType: type,
    });
    expect(both.film?.source).toBe('imager-pixel-spacing');
    expect(both.patient?.source).toBe('pixel-spacing-calibrated');
  });

  it('flags unknown correction when type, Imager and Nominal Scanned Pixel Spacing are all absent', () => {
    // DICOM PS3.3 10.7: correction status cannot be determined
    const c = calibrationFromDicom({ pixelSpacingMm: [0.16, 0.16] });
    expect(c.correctionUnknown).toBe(true);
    expect(c.film?.source).toBe('pixel-spacing-unverified');
    expect(c.patient).toBeNull();
  });

  it('uses Pixel Spacing equal to Nominal Scanned Pixel Spacing as the film plane of a digitised film', () => {
    // DICOM PS3.3 10.7: Nominal Scanned Pixel Spacing present, so correction status is known
    const c = calibrationFromDicom({ pixelSpacingMm: [0.1, 0.1], nominalScannedPixelSpacingMm: [0.1, 0.1] });
    expect(c.correctionUnknown).toBe(false);
    expect(c.film?.source).toBe('pixel-spacing-uncorrected');
    expect(c.patient).toBeNull();
    const only = calibrationFromDicom({ nominalScannedPixelSpacingMm: [0.1, 0.1] });
    expect(only.film?.source).toBe('nominal-scanned-pixel-spacing');
  });

  it('gives nothing and says so when no spacing is present', () => {
    // DICOM PS3.3 10.7: no spacing attribute, nothing to measure with
    const c = calibrationFromDicom({});
    expect(c.film).toBeNull();
    expect(c.patient).toBeNull();
    expect(c.correctionUnknown).toBe(true);
    expect(c.notes.length).toBeGreaterThan(0);
  });

  it('rejects non-positive or non-finite spacings with a note', () => {
    // DICOM PS3.3 10.7.1.3: spacing values are positive
    for (const bad of [
      [0, 0.1],
      [-0.1, 0.1],
      [Number.NaN, 0.1],
      [0.1, Number.POSITIVE_INFINITY],
    ] as [number, number][]) {
      const c = calibrationFromDicom({ imagerPixelSpacingMm: bad });
      expect(c.film).toBeNull();
      expect(c.notes.join(' ')).toMatch(/Imager Pixel Spacing .* ignored/);
    }
  });

  it('ignores impossible magnification data', () => {
    // geometry: SID >= SOD so ERMF >= 1 (DICOM PS3.3 DX, ERMF = SID/SOD)
    const c = calibrationFromDicom({ imagerPixelSpacingMm: [0.15, 0.15], estimatedRadiographicMagnificationFactor: 0.9 });
    expect(c.patient).toBeNull();
    const d = calibrationFromDicom({
      imagerPixelSpacingMm: [0.15, 0.15],
      distanceSourceToDetectorMm: 1000,
      distanceSourceToPatientMm: 1800,
    });
    expect(d.patient).toBeNull();
    const e = calibrationFromDicom({ imagerPixelSpacingMm: [0.15, 0.15], estimatedRadiographicMagnificationFactor: Number.NaN });
    expect(e.patient).toBeNull();
  });
});

describe('calibrationFromReferenceLine', () => {
  it('gives isotropic spacing in the chosen plane', () => {
    // arithmetic: 50 mm over a 3-4-5 line of 500 px = 0.1 mm/px
    const c = calibrationFromReferenceLine(seg(100, 100, 400, 500), 50, 'film');
    expect(c.film?.rowMm).toBeCloseTo(0.1, 10);
    expect(c.film?.columnMm).toBeCloseTo(0.1, 10);
    expect(c.film?.source).toBe('reference-line');
    expect(c.patient).toBeNull();
    const p = calibrationFromReferenceLine(seg(0, 0, 200, 0), 30, 'patient');
    expect(p.patient?.rowMm).toBeCloseTo(0.15, 10);
    expect(p.film).toBeNull();
  });

  it('refuses a zero-length line or a non-positive length', () => {
    // common practice: no calibration from nothing
    expect(() => calibrationFromReferenceLine(seg(5, 5, 5, 5), 10, 'film')).toThrow(MeasureInputError);
    expect(() => calibrationFromReferenceLine(seg(0, 0, 10, 0), 0, 'film')).toThrow(MeasureInputError);
    expect(() => calibrationFromReferenceLine(seg(0, 0, 10, 0), Number.NaN, 'film')).toThrow(MeasureInputError);
  });
});
