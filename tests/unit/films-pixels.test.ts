/**
 * The 8-bit rendering: the VOI functions of DICOM PS3.3 C.11.2, recomputed here independently of
 * lib/films/pixels.ts, checked on every pixel and on a few hand-worked values; the same films rendered
 * by dcmtk (dcmj2pnm +Wi / +Wl) as an outside cross-check; MONOCHROME1 inversion (C.7.6.3.1.2),
 * rescale (C.11.1), VOI LUT Sequence (C.11.2.1.1) and the percentile fallback.
 */
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { readDicom, type DicomFilm } from '../../lib/films';
import { buildDisplayLut, storedValues, toGrey8, windowLinear } from '../../lib/films/pixels';
import type { DecodedPixels } from '../../lib/films/dicom';
import {
  dcmtkRender8,
  fixtureDir,
  patternPixels,
  voiLutSequenceDump,
  writeDicom,
  type DicomFixtureSpec,
} from '../support/dicom-fixtures';

vi.setConfig({ testTimeout: 30_000 });

let dir = '';
let cleanup: () => void = () => {};
beforeAll(() => ({ dir, cleanup } = fixtureDir()));
afterAll(() => cleanup());

// --- PS3.3 C.11.2.1.2.1 (LINEAR), C.11.2.1.3.2 (LINEAR_EXACT), C.11.2.1.3.1 (SIGMOID), output 0..255.
function refLinear(x: number, c: number, w: number): number {
  if (x <= c - 0.5 - (w - 1) / 2) return 0;
  if (x > c - 0.5 + (w - 1) / 2) return 255;
  return ((x - (c - 0.5)) / (w - 1) + 0.5) * 255;
}
function refLinearExact(x: number, c: number, w: number): number {
  if (x <= c - w / 2) return 0;
  if (x > c + w / 2) return 255;
  return ((x - c) / w + 0.5) * 255;
}
function refSigmoid(x: number, c: number, w: number): number {
  return 255 / (1 + Math.exp((-4 * (x - c)) / w));
}

async function film(name: string, spec: DicomFixtureSpec): Promise<{ file: string; film: DicomFilm }> {
  const file = writeDicom(dir, name, spec);
  return { file, film: await readDicom(readFileSync(file)) };
}

function grey(f: DicomFilm): Uint8Array {
  return toGrey8(f.pixels, f.meta, f.voiLut).grey.data;
}

/** Largest difference from dcmtk's own 8-bit rendering of the same file. */
function maxDiffFromDcmtk(file: string, ours: Uint8Array, args: string[]): number {
  const theirs = dcmtkRender8(file, args).values;
  expect(theirs.length).toBe(ours.length);
  return ours.reduce((m, v, i) => Math.max(m, Math.abs(v - (theirs[i] ?? -999))), 0);
}

describe('stored window, LINEAR (PS3.3 C.11.2.1.2.1)', () => {
  // Window Center 1500, Width 1000 on 12-bit data: bottom edge c - 0.5 - (w-1)/2 = 1000, top edge
  // c - 0.5 + (w-1)/2 = 1999.
  const edgePixels = [0, 999, 1000, 1001, 1499, 1500, 1501, 1998, 1999, 2000, 4095, 1250];
  // Hand-worked with the formula (rounded half up): 1001 -> 0.26 -> 0; 1499 -> 127.37 -> 127;
  // 1500 -> 127.63 -> 128; 1501 -> 127.88 -> 128; 1998 -> 254.74 -> 255; 1250 -> 63.81 -> 64.
  const handWorked = [0, 0, 0, 0, 127, 128, 128, 255, 255, 255, 255, 64];

  it('matches hand-worked values at the window edges', async () => {
    const { film: f } = await film('lin-edges', {
      rows: 3,
      columns: 4,
      pixels: edgePixels,
      attributes: { '(0028,1050)': 'DS [1500]', '(0028,1051)': 'DS [1000]' },
    });
    expect(Array.from(grey(f))).toEqual(handWorked);
    expect(toGrey8(f.pixels, f.meta, f.voiLut).rendering).toMatchObject({ method: 'window', voiLutFunction: 'LINEAR', center: 1500, width: 1000 });
  });

  it('equals the formula on every pixel, uses only the first of several windows, and is within one grey level of dcmtk', async () => {
    const { file, film: f } = await film('lin-all', {
      rows: 40,
      columns: 50,
      pixels: patternPixels(40, 50, 12),
      attributes: { '(0028,1050)': 'DS [1500\\3000]', '(0028,1051)': 'DS [1000\\200]' },
    });
    const stored = storedValues(f.pixels);
    const ours = grey(f);
    stored.forEach((x, i) => expect(ours[i], `pixel ${i} (x=${x})`).toBe(Math.round(refLinear(x, 1500, 1000))));
    expect(maxDiffFromDcmtk(file, ours, ['+Wi', '1'])).toBeLessThanOrEqual(1);
  });

  it('MONOCHROME1 is the inverse of the same window (PS3.3 C.7.6.3.1.2)', async () => {
    const spec = { rows: 3, columns: 4, pixels: edgePixels, attributes: { '(0028,1050)': 'DS [1500]', '(0028,1051)': 'DS [1000]' } };
    const { file, film: f } = await film('lin-m1', { ...spec, photometric: 'MONOCHROME1' });
    const ours = grey(f);
    expect(Array.from(ours)).toEqual(handWorked.map((y) => 255 - y));
    expect(toGrey8(f.pixels, f.meta, f.voiLut).rendering.inverted).toBe(true);
    expect(maxDiffFromDcmtk(file, ours, ['+Wi', '1'])).toBeLessThanOrEqual(1);
  });

  it('applies Rescale Slope / Intercept before the window (PS3.3 C.11.1.1.2)', async () => {
    // modality = 0.5 x stored + 3.25; the window is in modality units.
    const { file, film: f } = await film('rescale', {
      rows: 40,
      columns: 50,
      pixels: patternPixels(40, 50, 12),
      attributes: { '(0028,1050)': 'DS [1000.5]', '(0028,1051)': 'DS [700]', '(0028,1052)': 'DS [3.25]', '(0028,1053)': 'DS [0.5]' },
    });
    const ours = grey(f);
    storedValues(f.pixels).forEach((x, i) => expect(ours[i]).toBe(Math.round(refLinear(0.5 * x + 3.25, 1000.5, 700))));
    expect(maxDiffFromDcmtk(file, ours, ['+Wi', '1'])).toBeLessThanOrEqual(1);
  });

  it('handles signed stored values with a negative intercept', async () => {
    const { file, film: f } = await film('signed-rescale', {
      rows: 40,
      columns: 50,
      pixels: patternPixels(40, 50, 16, true),
      bitsStored: 16,
      pixelRepresentation: 1,
      attributes: { '(0028,1050)': 'DS [40]', '(0028,1051)': 'DS [400]', '(0028,1052)': 'DS [-1024]', '(0028,1053)': 'DS [1]' },
    });
    const ours = grey(f);
    const stored = storedValues(f.pixels);
    expect(Math.min(...stored)).toBe(-32768); // the pattern reaches both extremes
    stored.forEach((x, i) => expect(ours[i]).toBe(Math.round(refLinear(x - 1024, 40, 400))));
    expect(maxDiffFromDcmtk(file, ours, ['+Wi', '1'])).toBeLessThanOrEqual(1);
  });

  it('LINEAR_EXACT and SIGMOID when VOI LUT Function says so (PS3.3 C.11.2.1.3)', async () => {
    for (const [fn, ref] of [
      ['LINEAR_EXACT', refLinearExact],
      ['SIGMOID', refSigmoid],
    ] as const) {
      const { file, film: f } = await film(`fn-${fn}`, {
        rows: 40,
        columns: 50,
        pixels: patternPixels(40, 50, 12),
        attributes: { '(0028,1050)': 'DS [1500]', '(0028,1051)': 'DS [999]', '(0028,1056)': `CS [${fn}]` },
      });
      const ours = grey(f);
      storedValues(f.pixels).forEach((x, i) => expect(ours[i]).toBe(Math.round(ref(x, 1500, 999))));
      expect(maxDiffFromDcmtk(file, ours, ['+Wi', '1'])).toBeLessThanOrEqual(1);
    }
  });

  it('the exported LINEAR function is the formula (spot values)', () => {
    expect(windowLinear(1000, 1500, 1000)).toBe(0);
    expect(windowLinear(2000, 1500, 1000)).toBe(255);
    expect(windowLinear(1500, 1500, 1000)).toBeCloseTo(127.6276, 4); // (0.5/999 + 0.5) x 255
    expect(windowLinear(10, 10, 1)).toBe(255); // w = 1 is a threshold at c - 0.5
    expect(windowLinear(9, 10, 1)).toBe(0);
  });
});

describe('VOI LUT Sequence (PS3.3 C.11.2.1.1)', () => {
  // An invented square-root curve: 256 entries from stored value 1000, 12 bits per entry.
  const lut = Array.from({ length: 256 }, (_, i) => Math.round(Math.sqrt(i / 255) * 4095));
  const expected = (x: number) => Math.round((lut[Math.min(255, Math.max(0, x - 1000))]! / 4095) * 255);

  for (const syntax of ['explicit', 'implicit'] as const) {
    it(`is applied in preference to the window (${syntax} VR), clamping outside the table`, async () => {
      const { file, film: f } = await film(`voi-${syntax}`, {
        rows: 40,
        columns: 50,
        pixels: patternPixels(40, 50, 12),
        attributes: { '(0028,1050)': 'DS [1500]', '(0028,1051)': 'DS [1000]' },
        dumpLines: voiLutSequenceDump(1000, 12, lut),
        syntax,
      });
      expect(f.meta.hasVoiLut).toBe(true);
      expect(f.voiLut).toMatchObject({ firstMapped: 1000, bits: 12, explanation: 'invented curve' });
      const { grey: g, rendering } = toGrey8(f.pixels, f.meta, f.voiLut);
      expect(rendering.method).toBe('voi-lut');
      storedValues(f.pixels).forEach((x, i) => expect(g.data[i]).toBe(expected(x)));
      expect(maxDiffFromDcmtk(file, g.data, ['+Wl', '1'])).toBeLessThanOrEqual(1);
    });
  }
});

// The 0.5-99.5 % cut is common practice for display windows, not a DICOM rule.
describe('percentile window when the film stores none', () => {
  it('spans the 0.5 to 99.5 % of the histogram, so a few outliers do not flatten the picture', async () => {
    const n = 100 * 100;
    const pixels = Array.from({ length: n }, (_, i) => 1000 + (i % 1001)); // 1000..2000, evenly
    for (let i = 0; i < 30; i += 1) {
      pixels[i * 7] = 0; // 0.3 % dark outliers
      pixels[i * 11 + 3] = 4095; // 0.3 % bright outliers
    }
    const { film: f } = await film('percentile', { rows: 100, columns: 100, pixels });
    const { grey: g, rendering } = toGrey8(f.pixels, f.meta, f.voiLut);
    expect(rendering.method).toBe('percentile');
    // The window lies inside the bulk of the data, within a few values of 1000..2000.
    expect(rendering.center).toBeGreaterThan(1490);
    expect(rendering.center).toBeLessThan(1510);
    expect(rendering.width).toBeGreaterThan(960);
    expect(rendering.width).toBeLessThan(1000);
    const at = (v: number) => g.data[pixels.indexOf(v)];
    expect(at(0)).toBe(0);
    expect(at(4095)).toBe(255);
    expect(at(1500)).toBeGreaterThanOrEqual(126);
    expect(at(1500)).toBeLessThanOrEqual(129);
    // Without the percentile cut the outliers would squeeze 1000..2000 into about 62 grey levels.
    expect((at(1990) ?? 0) - (at(1010) ?? 0)).toBeGreaterThan(240);
  });

  it('is used when the stored window is unusable (width below 1 for LINEAR)', async () => {
    const { film: f } = await film('bad-window', {
      rows: 10,
      columns: 10,
      pixels: patternPixels(10, 10, 12),
      attributes: { '(0028,1050)': 'DS [1500]', '(0028,1051)': 'DS [0]' },
    });
    expect(toGrey8(f.pixels, f.meta, f.voiLut).rendering.method).toBe('percentile');
  });

  it('inverts MONOCHROME1 in the percentile window as well', () => {
    const pixels: DecodedPixels = {
      rows: 1,
      columns: 4,
      bitsAllocated: 16,
      bitsStored: 12,
      highBit: 11,
      pixelRepresentation: 0,
      photometric: 'MONOCHROME1',
      fromColour: false,
      data: new Uint16Array([100, 200, 300, 400]),
    };
    const meta = { rescaleSlope: null, rescaleIntercept: null, windowCenter: null, windowWidth: null, voiLutFunction: null };
    const { lut } = buildDisplayLut(pixels, meta, null);
    expect(lut[100]).toBe(255); // the lowest value is the brightest on a MONOCHROME1 film
    expect(lut[400]).toBe(0);
  });
});
