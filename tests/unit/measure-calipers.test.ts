import { describe, expect, it } from 'vitest';
import {
  calibrationFromDicom,
  estimateFromCalipers,
  type CaliperSet,
  type FilmCalibration,
  type Segment,
} from '../../measure';

const seg = (x1: number, y1: number, x2: number, y2: number): Segment => ({ a: { x: x1, y: y1 }, b: { x: x2, y: y2 } });

// Invented example: 0.1 mm pixels, hemithorax 100 mm (1000 px), lung 80 mm, every distance 20 mm.
const tenthMm: FilmCalibration = calibrationFromDicom({ imagerPixelSpacingMm: [0.1, 0.1] });
const twoCmEverywhere: CaliperSet = {
  hemithorax: seg(100, 1200, 1100, 1200),
  lung: seg(300, 1200, 1100, 1200),
  apex: seg(600, 200, 600, 400),
  upper: seg(150, 700, 350, 700),
  lower: seg(120, 1500, 320, 1500),
  hilum: seg(100, 1210, 300, 1210),
};

describe('estimateFromCalipers on a calibrated film', () => {
  const e = estimateFromCalipers(twoCmEverywhere, tenthMm, { projection: 'PA', position: 'erect' });

  it('measures each caliper in px and mm', () => {
    // arithmetic: 1000 px x 0.1 mm = 100 mm (DICOM PS3.3 10.7, Imager Pixel Spacing)
    expect(e.lengths.hemithorax.px).toBeCloseTo(1000, 10);
    expect(e.lengths.hemithorax.mm).toBeCloseTo(100, 10);
    expect(e.lengths.apex.mm).toBeCloseTo(20, 10);
    expect(e.plane).toBe('film');
    expect(e.calibrationSource).toBe('imager-pixel-spacing');
  });

  it('gives the same "2 cm" pneumothorax as 49 % by Light, 32 % by Collins, 23 % by Rhea', () => {
    // Light 8/10 -> 48.8 % (Light RW, Pleural Diseases); Collins 2+2+2 -> 32.4 % (Collins CD et al., AJR 1995);
    // AID 2.0 cm -> 23 % (Rhea JT et al., Radiology 1982, via Wyatt 1999 p. 114)
    expect(e.light.status === 'ok' && e.light.percent).toBeCloseTo(48.8, 6);
    expect(e.collins.status === 'ok' && e.collins.percent).toBeCloseTo(32.4, 6);
    expect(e.rhea.status === 'ok' && e.rhea.percent).toBeCloseTo(23, 6);
    expect(e.aidCm).toBeCloseTo(2, 10);
  });

  it('classes BTS and ACCP separately', () => {
    // 2 cm at the hilum is large (BTS 2010, Thorax 2010;65 Suppl 2); 2 cm apex is small (< 3 cm, ACCP 2001)
    expect(e.guideline.bts.size).toBe('large');
    expect(e.guideline.bts.valueCm).toBeCloseTo(2, 10);
    expect(e.guideline.accp.size).toBe('small');
  });

  it('reports the spread and warns when it passes the setting', () => {
    // spread 48.8 - 23 = 25.8 points; methods differ by design (clinical reference: Light vs Collins on 2 cm)
    expect(e.spread.points).toBeCloseTo(25.8, 6);
    expect(e.spread.methodsCompared).toBe(3);
    expect(e.spread.disagreement).toBe(true);
    expect(e.spread.warning).not.toBeNull();
    const wide = estimateFromCalipers(twoCmEverywhere, tenthMm, { disagreementPoints: 30 });
    expect(wide.spread.disagreement).toBe(false);
    expect(wide.spread.warning).toBeNull();
  });

  it('carries caveats for each method', () => {
    // Light: uniform rim, horizontal widths (Light RW); Collins: CT n = 20 (Collins CD et al., AJR 1995)
    expect(e.caveats.light.join(' ')).toMatch(/uniform rim/);
    expect(e.caveats.collins.join(' ')).toMatch(/20 patients/);
    expect(e.caveats.rhea.join(' ')).toMatch(/0.5-5 cm/);
    expect(e.caveats.general.join(' ')).toMatch(/never replace/);
  });

  it('is a plain serialisable object', () => {
    // common practice: results travel as JSON
    expect(JSON.parse(JSON.stringify(e))).toEqual(e);
  });
});

describe('estimateFromCalipers planes', () => {
  const calib = calibrationFromDicom({ imagerPixelSpacingMm: [0.139, 0.139], estimatedRadiographicMagnificationFactor: 1.08 });
  const calipers: CaliperSet = { apex: seg(500, 100, 500, 244), upper: seg(10, 10, 154, 10), lower: seg(10, 20, 154, 20) };

  it('uses the detector plane by default and the patient plane on request', () => {
    // 144 px x 0.139 = 20.02 mm; / 1.08 = 18.53 mm: DICOM PS3.3 DX (Imager Pixel Spacing, ERMF)
    const film = estimateFromCalipers(calipers, calib);
    expect(film.lengths.apex.mm).toBeCloseTo(20.02, 2);
    expect(film.calibrationSource).toBe('imager-pixel-spacing');
    const patient = estimateFromCalipers(calipers, calib, { plane: 'patient' });
    expect(patient.lengths.apex.mm).toBeCloseTo(18.53, 2);
    expect(patient.calibrationSource).toBe('imager-spacing/ermf');
    expect(patient.plane).toBe('patient');
    // Collins 4.2 + 4.7 x (3 x 2.0016) (Collins CD et al., AJR 1995)
    expect(film.collins.status === 'ok' && film.collins.percent).toBeCloseTo(4.2 + 4.7 * 3 * 2.0016, 6);
  });

  it('says not measured when the chosen plane has no spacing', () => {
    // DICOM PS3.3 10.7: Imager Pixel Spacing alone gives no patient plane
    const only = calibrationFromDicom({ imagerPixelSpacingMm: [0.139, 0.139] });
    const e = estimateFromCalipers(calipers, only, { plane: 'patient' });
    expect(e.rhea.status).toBe('not-measured');
    expect(e.collins.status).toBe('not-measured');
    expect(e.rhea.status === 'not-measured' && e.rhea.reason).toMatch(/patient plane/);
    expect(e.aidCm).toBeNull();
  });
});

describe('estimateFromCalipers on an uncalibrated film', () => {
  it('still gives Light (a ratio) and says the cm methods are not measured', () => {
    // Light RW, Pleural Diseases: ratio only, 8/10 -> 48.8 %
    const e = estimateFromCalipers(
      { ...twoCmEverywhere, hemithorax: seg(0, 500, 500, 500), lung: seg(100, 500, 500, 500) },
      null,
    );
    expect(e.light.status).toBe('ok');
    expect(e.light.status === 'ok' && e.light.unit).toBe('px');
    expect(e.light.status === 'ok' && e.light.percent).toBeCloseTo(48.8, 6);
    expect(e.rhea.status).toBe('not-measured');
    expect(e.collins.status).toBe('not-measured');
    expect(e.collins.status === 'not-measured' && e.collins.reason).toMatch(/centimetres/);
    expect(e.guideline.bts.size).toBe('not-measured');
    expect(e.guideline.bts.reason).not.toBeNull();
    expect(e.lengths.apex.mm).toBeNull();
    expect(e.spread.points).toBeNull();
  });
});

describe('estimateFromCalipers on bad input', () => {
  it('refuses a lung wider than the hemithorax', () => {
    // Light RW: the lung lies inside the hemithorax on the same line
    const e = estimateFromCalipers({ hemithorax: seg(0, 10, 100, 10), lung: seg(0, 10, 120, 10) }, tenthMm);
    expect(e.light.status).toBe('not-measured');
    expect(e.light.status === 'not-measured' && e.light.reason).toMatch(/longer than the hemithorax/);
  });

  it('refuses zero-length, NaN and negative calipers', () => {
    // common practice: no number from a caliper that was not drawn properly
    const e = estimateFromCalipers(
      {
        hemithorax: seg(10, 10, 10, 10),
        lung: seg(0, 0, 5, 5),
        apex: seg(0, 0, Number.NaN, 5),
        upper: seg(-3, 0, 5, 5),
        lower: seg(1, 1, 4, 4),
      },
      tenthMm,
    );
    expect(e.lengths.hemithorax.status).toBe('invalid');
    expect(e.lengths.apex.status).toBe('invalid');
    expect(e.lengths.upper.status).toBe('invalid');
    expect(e.light.status).toBe('not-measured');
    expect(e.rhea.status).toBe('not-measured');
    expect(e.collins.status).toBe('not-measured');
    expect(e.aidCm).toBeNull();
  });

  it('says which calipers are missing', () => {
    // common practice: explain what is missing in plain words
    const e = estimateFromCalipers({ apex: seg(0, 0, 0, 100) }, tenthMm);
    expect(e.lengths.lung.status).toBe('missing');
    expect(e.light.status === 'not-measured' && e.light.reason).toMatch(/lung caliper is not drawn/);
    expect(e.collins.status === 'not-measured' && e.collins.reason).toMatch(/upper caliper is not drawn/);
    expect(e.guideline.accp.size).toBe('small');
    expect(e.guideline.bts.size).toBe('not-measured');
    expect(e.guideline.bts.reason).toMatch(/hilum caliper is not drawn/);
  });

  it('warns on supine or AP films', () => {
    // supine AP distances differ systematically from erect PA: Choi BG et al., Radiology 1998;209:567
    const e = estimateFromCalipers(twoCmEverywhere, tenthMm, { projection: 'AP', position: 'supine' });
    expect(e.caveats.general.join(' ')).toMatch(/supine or AP/);
    const pa = estimateFromCalipers(twoCmEverywhere, tenthMm, { projection: 'PA', position: 'erect' });
    expect(pa.caveats.general.join(' ')).not.toMatch(/supine or AP/);
  });
});
