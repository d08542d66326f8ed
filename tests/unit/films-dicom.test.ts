/**
 * Rimwatch's DICOM reading against dcmtk's on the same files: every attribute against `dcmdump +P`,
 * every pixel against `dcmj2pnm` (bit-exact for native, deflated and JPEG lossless files). The files
 * are written by dcmtk (tests/support/dicom-fixtures.ts); all values in them are invented.
 */
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { readDicom, readDicomHeader, type DicomMeta } from '../../lib/films';
import { storedValues } from '../../lib/films/pixels';
import {
  dcmdumpAll,
  dcmdumpValue,
  dcmtkPixels,
  fixtureDir,
  fixtureSyntaxUid,
  inventedIdentity,
  modifyDicom,
  patternPixels,
  readPgm,
  writeDicom,
  writeJpegBaselineDicom,
  type DicomFixtureSpec,
  type FixtureSyntax,
} from '../support/dicom-fixtures';

// Each case runs several dcmtk processes (writing, converting, reading back).
vi.setConfig({ testTimeout: 30_000 });

let dir = '';
let cleanup: () => void = () => {};
beforeAll(() => ({ dir, cleanup } = fixtureDir()));
afterAll(() => cleanup());

// Invented attribute values for a DX chest film; the values are arbitrary, only their reading matters.
const richAttributes: Record<string, string> = {
  '(0008,0022)': 'DA [20260315]',
  '(0008,0032)': 'TM [083012.250]',
  '(0008,0023)': 'DA [20260315]',
  '(0008,0033)': 'TM [083100]',
  '(0008,0201)': 'SH [+0100]',
  '(0018,1110)': 'DS [1800]',
  '(0018,1111)': 'DS [1650.5]',
  '(0018,1114)': 'DS [1.0909]',
  '(0018,1164)': 'DS [0.148\\0.150]',
  '(0018,5100)': 'CS [HFS]',
  '(0018,5101)': 'CS [PA]',
  '(0028,0030)': 'DS [0.139\\0.140]',
  '(0028,0a02)': 'CS [GEOMETRY]',
  '(0028,1050)': 'DS [2100\\1800]',
  '(0028,1051)': 'DS [3000\\2500]',
  '(0028,1052)': 'DS [-12]',
  '(0028,1053)': 'DS [1.5]',
  '(0028,1056)': 'CS [LINEAR]',
};

type Kind = 'str' | 'int' | 'num' | 'pair';
/** Each DicomMeta field, the tag dcmtk reads it from, and how to compare (PS3.3 module in the comment). */
const attributeTable: [keyof DicomMeta, string, Kind][] = [
  ['transferSyntaxUid', '0002,0010', 'str'], // PS3.10 7.1 file meta information
  ['sopClassUid', '0008,0016', 'str'], // PS3.3 C.12.1 SOP Common
  ['sopInstanceUid', '0008,0018', 'str'],
  ['studyInstanceUid', '0020,000d', 'str'], // PS3.3 C.7.2.1 General Study
  ['seriesInstanceUid', '0020,000e', 'str'], // PS3.3 C.7.3.1 General Series
  ['modality', '0008,0060', 'str'],
  ['bodyPartExamined', '0018,0015', 'str'],
  ['viewPosition', '0018,5101', 'str'], // PS3.3 C.8.11.5 DX Positioning
  ['patientPosition', '0018,5100', 'str'],
  ['studyDate', '0008,0020', 'str'],
  ['studyTime', '0008,0030', 'str'],
  ['acquisitionDate', '0008,0022', 'str'], // PS3.3 C.7.6.1 General Image
  ['acquisitionTime', '0008,0032', 'str'],
  ['acquisitionDateTime', '0008,002a', 'str'],
  ['contentDate', '0008,0023', 'str'],
  ['contentTime', '0008,0033', 'str'],
  ['timezoneOffsetFromUtc', '0008,0201', 'str'], // PS3.3 C.12.1
  ['rows', '0028,0010', 'int'], // PS3.3 C.7.6.3 Image Pixel
  ['columns', '0028,0011', 'int'],
  ['samplesPerPixel', '0028,0002', 'int'],
  ['photometricInterpretation', '0028,0004', 'str'],
  ['planarConfiguration', '0028,0006', 'int'],
  ['bitsAllocated', '0028,0100', 'int'],
  ['bitsStored', '0028,0101', 'int'],
  ['highBit', '0028,0102', 'int'],
  ['pixelRepresentation', '0028,0103', 'int'],
  ['rescaleSlope', '0028,1053', 'num'], // PS3.3 C.11.1 Modality LUT
  ['rescaleIntercept', '0028,1052', 'num'],
  ['windowCenter', '0028,1050', 'num'], // PS3.3 C.11.2 VOI LUT, first value
  ['windowWidth', '0028,1051', 'num'],
  ['voiLutFunction', '0028,1056', 'str'],
  ['pixelSpacingMm', '0028,0030', 'pair'], // PS3.3 10.7.1.1, row spacing first
  ['imagerPixelSpacingMm', '0018,1164', 'pair'],
  ['nominalScannedPixelSpacingMm', '0018,2010', 'pair'],
  ['estimatedRadiographicMagnificationFactor', '0018,1114', 'num'],
  ['distanceSourceToDetectorMm', '0018,1110', 'num'],
  ['distanceSourceToPatientMm', '0018,1111', 'num'],
  ['pixelSpacingCalibrationType', '0028,0a02', 'str'],
];

function expectedFromDcmtk(dump: Map<string, string | null>, tag: string, kind: Kind): unknown {
  const raw = dump.get(tag) ?? null;
  if (raw === null) return null;
  const first = raw.split('\\')[0]?.trim() ?? '';
  switch (kind) {
    case 'str':
      return raw.trim();
    case 'int':
      return Number.parseInt(first, 10);
    case 'num':
      return Number(first);
    case 'pair':
      return raw.split('\\').map((v) => Number(v));
  }
}

/** Compares every DicomMeta field with dcmtk's reading; returns how many were present in the file. */
function compareAllAttributes(file: string, meta: DicomMeta): number {
  const dump = dcmdumpAll(file);
  let compared = 0;
  for (const [key, tag, kind] of attributeTable) {
    const expected = expectedFromDcmtk(dump, tag, kind);
    expect(meta[key], `${key} (${tag})`).toEqual(expected);
    if (expected !== null) compared += 1;
  }
  // Number of Frames (0028,0008) is absent from single-frame films: Rimwatch reports 1 (PS3.3 C.7.6.6).
  expect(meta.numberOfFrames).toBe(Number(dump.get('0028,0008') ?? 1));
  return compared;
}

const nativeAndLossless: FixtureSyntax[] = ['explicit', 'implicit', 'deflated', 'jpeg-lossless', 'jpeg-lossless-sv1'];

describe('attributes equal dcmdump +P on the same file', () => {
  for (const syntax of nativeAndLossless) {
    it(`${syntax} (${fixtureSyntaxUid[syntax]})`, async () => {
      const file = writeDicom(dir, `attrs-${syntax}`, {
        rows: 30,
        columns: 40,
        pixels: patternPixels(30, 40, 12),
        attributes: richAttributes,
        syntax,
      });
      const film = await readDicom(readFileSync(file));
      const compared = compareAllAttributes(file, film.meta);
      expect(compared).toBeGreaterThanOrEqual(30); // the rich fixture sets most of them
      expect(film.meta.transferSyntaxUid).toBe(fixtureSyntaxUid[syntax]);
      // The calibration input carries the same values, row spacing first (PS3.3 10.7.1.3).
      expect(film.spacingAttrs).toEqual({
        pixelSpacingMm: [0.139, 0.14],
        imagerPixelSpacingMm: [0.148, 0.15],
        nominalScannedPixelSpacingMm: null,
        estimatedRadiographicMagnificationFactor: 1.0909,
        distanceSourceToDetectorMm: 1800,
        distanceSourceToPatientMm: 1650.5,
        pixelSpacingCalibrationType: 'GEOMETRY',
      });
    });
  }

  it('reads spacing set by dcmodify and leaves absent attributes null', () => {
    const file = writeDicom(dir, 'dcmodify-spacing', { rows: 8, columns: 8, pixels: patternPixels(8, 8, 12) });
    modifyDicom(file, { '(0018,1164)': '0.150\\0.150', '(0018,2010)': '0.2\\0.25' });
    const { meta, spacingAttrs } = readDicomHeader(readFileSync(file));
    compareAllAttributes(file, meta);
    expect(spacingAttrs.imagerPixelSpacingMm).toEqual([0.15, 0.15]);
    expect(spacingAttrs.nominalScannedPixelSpacingMm).toEqual([0.2, 0.25]);
    expect(spacingAttrs.pixelSpacingMm).toBeNull();
    expect(spacingAttrs.estimatedRadiographicMagnificationFactor).toBeNull();
    expect(meta.windowCenter).toBeNull();
  });

  it('keeps row and column spacing in DICOM order when they differ (PS3.3 10.7.1.3)', () => {
    // clinical-reference check value: spacing 0.30\0.25 (row\col).
    const file = writeDicom(dir, 'anisotropic', {
      rows: 4,
      columns: 4,
      pixels: patternPixels(4, 4, 12),
      attributes: { '(0028,0030)': 'DS [0.30\\0.25]' },
    });
    expect(dcmdumpValue(file, '0028,0030')).toBe('0.30\\0.25');
    expect(readDicomHeader(readFileSync(file)).spacingAttrs.pixelSpacingMm).toEqual([0.3, 0.25]);
  });

  it('ignores an unreadable spacing with a warning instead of guessing', () => {
    const file = writeDicom(dir, 'bad-spacing', {
      rows: 4,
      columns: 4,
      pixels: patternPixels(4, 4, 12),
      attributes: { '(0028,0030)': 'DS [0.139]', '(0018,1114)': 'DS [abc]' },
    });
    const header = readDicomHeader(readFileSync(file));
    expect(header.spacingAttrs.pixelSpacingMm).toBeNull();
    expect(header.spacingAttrs.estimatedRadiographicMagnificationFactor).toBeNull();
    expect(header.warnings.join(' ')).toMatch(/Pixel Spacing/);
    expect(header.warnings.join(' ')).toMatch(/Magnification/);
  });
});

describe('no patient identity leaves the reader', () => {
  it('reads neither name, ID, birth date, accession number nor institution', async () => {
    const file = writeDicom(dir, 'identity', { rows: 6, columns: 6, pixels: patternPixels(6, 6, 12), attributes: richAttributes });
    // The file does carry them (dcmtk reads them back) ...
    expect(dcmdumpValue(file, '0010,0010')).toBe(inventedIdentity.patientName);
    expect(dcmdumpValue(file, '0010,0020')).toBe(inventedIdentity.patientId);
    // ... and Rimwatch's result does not.
    const film = await readDicom(readFileSync(file));
    const text = JSON.stringify({ ...film, pixels: undefined });
    for (const value of Object.values(inventedIdentity)) expect(text).not.toContain(value);
    expect(Object.keys(film.meta).some((k) => /patient(name|id|birth|sex)|accession|institution|operator/i.test(k))).toBe(false);
  });
});

describe('takenAt, projection and position', () => {
  it('prefers Acquisition, then Content, then Study date and time (ISO 8601, offset when given)', () => {
    const header = (attributes: Record<string, string>) =>
      readDicomHeader(readFileSync(writeDicom(dir, `t${Object.keys(attributes).length}`, { rows: 2, columns: 2, pixels: [0, 1, 2, 3], attributes })));
    // Study date/time only (fixture default 20260314 101500).
    expect(header({}).takenAt).toBe('2026-03-14T10:15:00');
    expect(header({ '(0008,0023)': 'DA [20260316]', '(0008,0033)': 'TM [0705]' }).takenAt).toBe('2026-03-16T07:05:00');
    expect(header(richAttributes).takenAt).toBe('2026-03-15T08:30:12.250+01:00');
    expect(header({ '(0008,002a)': 'DT [20260317231559-0500]', '(0008,0022)': 'DA [20260315]', '(0008,0032)': 'TM [083012]' }).takenAt).toBe(
      '2026-03-17T23:15:59-05:00',
    );
    expect(header({ '(0008,0022)': 'DA [20260318]', '(0008,0030)': 'TM [101500]', '(0008,0020)': 'DA [20260318]', '(0008,0031)': 'TM [1]' }).takenAt).toBe(
      '2026-03-18',
    ); // acquisition date without a time: the date alone
  });

  it('maps View Position to a projection and keeps Patient Position as written', () => {
    const read = (vp: string, pp: string) =>
      readDicomHeader(
        readFileSync(writeDicom(dir, `vp-${vp || 'none'}`, { rows: 2, columns: 2, pixels: [0, 1, 2, 3], attributes: { '(0018,5101)': `CS [${vp}]`, '(0018,5100)': `CS [${pp}]` } })),
      );
    expect(read('AP', 'FFS')).toMatchObject({ projection: 'AP', position: 'FFS' });
    expect(read('LL', 'HFS')).toMatchObject({ projection: 'LL', position: 'HFS' });
    expect(read('OBLIQUE', 'HFS').projection).toBeNull();
    expect(read('', '')).toMatchObject({ projection: null, position: null });
  });
});

/**
 * dcmtk's stored values: dcmj2pnm -M -W maps the stored range onto 0..2^bits-1 (see dcmtkPixels), so
 * add the range minimum back. +Pid (presentation LUT shape IDENTITY) stops dcmtk inverting
 * MONOCHROME1, whose inversion it otherwise rounds through its own output range.
 */
function dcmtkStored(file: string, spec: Pick<DicomFixtureSpec, 'pixelRepresentation' | 'photometric'>, bitsStored: number): number[] {
  const { values } = dcmtkPixels(file, bitsStored, spec.photometric === 'MONOCHROME1' ? ['+Pid'] : []);
  const min = spec.pixelRepresentation === 1 ? -(2 ** (bitsStored - 1)) : 0;
  return values.map((v) => v + min);
}

describe('pixels equal dcmtk decoding, bit for bit (PS3.5 8.1.1 pixel cells, A.4 encapsulation)', () => {
  const cases: { name: string; spec: Omit<DicomFixtureSpec, 'pixels' | 'rows' | 'columns'>; bitsStored: number }[] = [
    { name: '16-bit, 12 stored, MONOCHROME2', spec: { bitsStored: 12 }, bitsStored: 12 },
    { name: '16-bit, 16 stored', spec: { bitsStored: 16 }, bitsStored: 16 },
    { name: '16-bit, 12 stored, MONOCHROME1', spec: { bitsStored: 12, photometric: 'MONOCHROME1' }, bitsStored: 12 },
    { name: '16-bit, 14 stored, signed', spec: { bitsStored: 14, pixelRepresentation: 1 }, bitsStored: 14 },
    { name: '16-bit, 10 stored at high bit 13 (shifted field)', spec: { bitsStored: 10, highBit: 13 }, bitsStored: 10 },
    { name: '8-bit', spec: { bitsAllocated: 8, bitsStored: 8 }, bitsStored: 8 },
  ];
  const allSyntaxes: FixtureSyntax[] = ['explicit', 'implicit', 'deflated', 'jpeg-lossless', 'jpeg-lossless-sv1'];
  for (const [n, c] of cases.entries()) {
    // Every encoding for the first two layouts; the others in one native and one lossless encoding.
    const syntaxes: FixtureSyntax[] = n < 2 || c.spec.pixelRepresentation === 1 ? allSyntaxes : ['explicit', 'jpeg-lossless-sv1'];
    for (const syntax of syntaxes) {
      // dcmtk's lossless encoder takes only the stored field from bit 0 (High Bit = Bits Stored - 1).
      if (syntax.startsWith('jpeg') && (c.spec.highBit ?? c.bitsStored - 1) !== c.bitsStored - 1) continue;
      it(`${c.name}, ${syntax}`, async () => {
        const rows = 37;
        const columns = 53; // odd sizes catch row-stride mistakes
        const pixels = patternPixels(rows, columns, c.bitsStored, c.spec.pixelRepresentation === 1);
        const file = writeDicom(dir, `px-${c.name.replace(/\W+/g, '-')}-${syntax}`, { rows, columns, pixels, ...c.spec, syntax });
        const film = await readDicom(readFileSync(file));
        const ours = Array.from(storedValues(film.pixels));
        expect(ours).toEqual(dcmtkStored(file, c.spec, c.bitsStored));
        expect(ours).toEqual(Array.from(pixels)); // and both equal what was written
      });
    }
  }

  for (const sv of [1, 2, 3, 4, 5, 7]) {
    it(`JPEG lossless process 14 with predictor ${sv} (1.2.840.10008.1.2.4.57)`, async () => {
      const pixels = patternPixels(29, 31, 16);
      const file = writeDicom(dir, `sv${sv}`, { rows: 29, columns: 31, pixels, bitsStored: 16, syntax: 'jpeg-lossless', selectionValue: sv });
      const film = await readDicom(readFileSync(file));
      expect(Array.from(storedValues(film.pixels))).toEqual(dcmtkStored(file, {}, 16));
    });
  }

  it('JPEG baseline from img2dcm (1.2.840.10008.1.2.4.50) equals dcmtk decoding of the same stream', async () => {
    const width = 96;
    const height = 64;
    const grey = new Uint8Array(width * height);
    for (let i = 0; i < grey.length; i += 1) grey[i] = ((i % width) * 2 + Math.floor(i / width) * 3 + ((i * 37) % 11)) % 256;
    const file = await writeJpegBaselineDicom(dir, 'baseline', { data: grey, width, height });
    const film = await readDicom(readFileSync(file));
    expect(film.meta.transferSyntaxUid).toBe('1.2.840.10008.1.2.4.50');
    const ours = Array.from(storedValues(film.pixels));
    const theirs = dcmtkStored(file, {}, 8);
    // Both use the ISO 10918-1 integer IDCT; allow one grey level for a different decoder build.
    const maxDiff = ours.reduce((m, v, i) => Math.max(m, Math.abs(v - (theirs[i] ?? -999))), 0);
    expect(maxDiff).toBeLessThanOrEqual(1);
    // Lossy, but close to what was encoded at quality 90.
    const meanError = ours.reduce((s, v, i) => s + Math.abs(v - (grey[i] ?? 0)), 0) / ours.length;
    expect(meanError).toBeLessThan(6);
  });

  it('JPEG baseline made by dcmcjpeg +eb from 8-bit pixels', async () => {
    const pixels = patternPixels(40, 48, 8).map((v, i) => (v + i) % 256);
    const file = writeDicom(dir, 'eb', { rows: 40, columns: 48, pixels, bitsAllocated: 8, bitsStored: 8, syntax: 'jpeg-baseline' });
    const film = await readDicom(readFileSync(file));
    expect(film.meta.transferSyntaxUid).toBe('1.2.840.10008.1.2.4.50');
    const ours = Array.from(storedValues(film.pixels));
    const theirs = dcmtkStored(file, {}, 8);
    expect(ours.reduce((m, v, i) => Math.max(m, Math.abs(v - (theirs[i] ?? -999))), 0)).toBeLessThanOrEqual(1);
  });
});

describe('multi-frame films: the first frame is read (PS3.3 C.7.6.6, PS3.5 A.4)', () => {
  for (const syntax of ['explicit', 'jpeg-lossless-sv1'] as FixtureSyntax[]) {
    it(`${syntax}, two frames`, async () => {
      const rows = 13;
      const columns = 17;
      const both = patternPixels(2 * rows, columns, 12); // frame 1 then frame 2
      const file = writeDicom(dir, `frames-${syntax}`, { rows, columns, pixels: both, frames: 2, syntax });
      const film = await readDicom(readFileSync(file));
      expect(film.meta.numberOfFrames).toBe(2);
      const ours = Array.from(storedValues(film.pixels));
      expect(ours).toEqual(dcmtkStored(file, {}, 12)); // dcmj2pnm renders frame 1 by default
      expect(ours).toEqual(Array.from(both.subarray(0, rows * columns)));
    });
  }
});

/** dcmtk's greyscale rendering of a colour film: dcmj2pnm +G (8-bit PGM). */
function dcmtkGrey(file: string): number[] {
  const out = `${file}.grey.pgm`;
  execFileSync('dcmj2pnm', ['-q', '+G', '+op', file, out]);
  return readPgm(readFileSync(out)).values;
}

function maxDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  expect(a.length).toBe(b.length);
  let m = 0;
  for (let i = 0; i < a.length; i += 1) m = Math.max(m, Math.abs((a[i] ?? 0) - (b[i] ?? 0)));
  return m;
}

describe('colour films are reduced to their luma (PS3.3 C.7.6.3.1.2)', () => {
  const rows = 13;
  const columns = 17;
  const n = rows * columns;
  const rgb = Array.from({ length: n * 3 }, (_, i) => (i * 97 + (i % 3) * 41) % 256); // invented colours

  for (const planar of [0, 1] as const) {
    it(`RGB, Planar Configuration ${planar}: Rec. 601 luma, within one grey level of dcmtk`, async () => {
      // Planar Configuration 1 stores all R, then all G, then all B (C.7.6.3.1.3).
      const samples = planar === 0 ? rgb : [0, 1, 2].flatMap((c) => Array.from({ length: n }, (_, i) => rgb[3 * i + c] ?? 0));
      const file = writeDicom(dir, `rgb-${planar}`, {
        rows,
        columns,
        pixels: samples,
        bitsAllocated: 8,
        bitsStored: 8,
        samplesPerPixel: 3,
        planarConfiguration: planar,
        photometric: 'RGB',
      });
      const film = await readDicom(readFileSync(file));
      expect(film.pixels.fromColour).toBe(true);
      const ours = storedValues(film.pixels);
      // Y = 0.299 R + 0.587 G + 0.114 B (ITU-R BT.601), rounded.
      const luma = Array.from({ length: n }, (_, i) => Math.round(0.299 * rgb[3 * i]! + 0.587 * rgb[3 * i + 1]! + 0.114 * rgb[3 * i + 2]!));
      expect(Array.from(ours)).toEqual(luma);
      expect(maxDiff(ours, dcmtkGrey(file))).toBeLessThanOrEqual(1);
    });
  }

  it('YBR_FULL: the Y channel, close to dcmtk converting through RGB', async () => {
    // In-gamut YBR_FULL made from the RGB above with the C.7.6.3.1.2 equations.
    const ybr: number[] = [];
    for (let i = 0; i < n; i += 1) {
      const [r, g, b] = [rgb[3 * i]!, rgb[3 * i + 1]!, rgb[3 * i + 2]!];
      ybr.push(
        Math.round(0.299 * r + 0.587 * g + 0.114 * b),
        Math.round(-0.1687 * r - 0.3313 * g + 0.5 * b + 128),
        Math.round(0.5 * r - 0.4187 * g - 0.0813 * b + 128),
      );
    }
    const file = writeDicom(dir, 'ybr', { rows, columns, pixels: ybr, bitsAllocated: 8, bitsStored: 8, samplesPerPixel: 3, photometric: 'YBR_FULL' });
    const film = await readDicom(readFileSync(file));
    const ours = storedValues(film.pixels);
    expect(Array.from(ours)).toEqual(ybr.filter((_, k) => k % 3 === 0));
    expect(maxDiff(ours, dcmtkGrey(file))).toBeLessThanOrEqual(2); // dcmtk rounds twice (to RGB, then to grey)
  });

  it('a colour JPEG baseline (img2dcm: YBR_FULL_422) within one grey level of dcmtk', async () => {
    const jpg = join(dir, 'colour.jpg');
    await sharp(Buffer.from(rgb), { raw: { width: columns, height: rows, channels: 3 } }).jpeg({ quality: 95 }).toFile(jpg);
    const file = join(dir, 'colour-jpeg.dcm');
    execFileSync('img2dcm', ['-q', jpg, file]);
    const film = await readDicom(readFileSync(file));
    expect(film.meta.photometricInterpretation).toBe('YBR_FULL_422');
    expect(maxDiff(storedValues(film.pixels), dcmtkGrey(file))).toBeLessThanOrEqual(1);
  });
});
