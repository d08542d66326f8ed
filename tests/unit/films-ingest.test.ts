/**
 * ingestFilm end to end: DICOM and PNG/JPEG uploads in, display image, thumbnail, metadata and the
 * calibration input out. The display PNG must decode back to exactly the 8-bit rendering (calipers
 * are placed on it), and spacingAttrs must feed measure/'s calibrationFromDicom unchanged.
 */
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { displaySize, ingestFilm, readDicom, toGrey8 } from '../../lib/films';
import { calibrationFromDicom, segmentLengthMm } from '../../measure';
import { fixtureDir, syntheticChest, writeDicom } from '../support/dicom-fixtures';

vi.setConfig({ testTimeout: 60_000 });

let dir = '';
let cleanup: () => void = () => {};
beforeAll(() => ({ dir, cleanup } = fixtureDir()));
afterAll(() => cleanup());

/** Decodes an encoded image; `channels` is what the file itself stores (1 = true greyscale). */
async function rawGrey(encoded: Buffer): Promise<{ data: Buffer; width: number; height: number; channels: number }> {
  const { channels } = await sharp(encoded).metadata();
  const { data, info } = await sharp(encoded).toColourspace('b-w').raw().toBuffer({ resolveWithObject: true });
  return { data, width: info.width, height: info.height, channels: channels ?? 0 };
}

describe('a DICOM chest film', () => {
  // Invented acquisition: detector pitch 0.139 mm, ERMF 1.08 (clinical-reference calibration check values).
  const attributes = {
    '(0018,1164)': 'DS [0.139\\0.139]',
    '(0018,1114)': 'DS [1.08]',
    '(0018,5101)': 'CS [PA]',
    '(0018,5100)': 'CS [HFS]',
    '(0008,0022)': 'DA [20260402]',
    '(0008,0032)': 'TM [141500]',
    '(0028,1050)': 'DS [1600]',
    '(0028,1051)': 'DS [2600]',
  };

  it('gives metadata, a lossless display PNG, a thumbnail and the sha256 of the upload', async () => {
    const { pixels } = syntheticChest(320, 400);
    const file = writeDicom(dir, 'chest', { rows: 400, columns: 320, pixels, attributes, syntax: 'jpeg-lossless-sv1' });
    const bytes = readFileSync(file);
    const result = await ingestFilm(bytes, 'chest.dcm', 'application/dicom');
    if (result.kind !== 'dicom') throw new Error('expected a DICOM result');

    expect(result.sha256).toBe(createHash('sha256').update(bytes).digest('hex'));
    expect(result).toMatchObject({ rows: 400, columns: 320, takenAt: '2026-04-02T14:15:00', projection: 'PA', position: 'HFS' });
    expect(result.rendering).toMatchObject({ method: 'window', center: 1600, width: 2600, inverted: false });
    expect(result.meta.transferSyntaxUid).toBe('1.2.840.10008.1.2.4.70');

    // Display: PNG, one grey channel, full size, identical to the 8-bit rendering.
    expect(result.display).toMatchObject({ contentType: 'image/png', width: 320, height: 400, scale: 1 });
    const film = await readDicom(bytes);
    const expected = toGrey8(film.pixels, film.meta, film.voiLut).grey.data;
    const shown = await rawGrey(result.display.buffer);
    expect(shown.channels).toBe(1);
    expect(shown.width * shown.height).toBe(expected.length);
    expect(Buffer.compare(shown.data, Buffer.from(expected))).toBe(0);

    // Thumbnail: JPEG, 256 px wide, proportional.
    expect(result.thumbnail).toMatchObject({ contentType: 'image/jpeg', width: 256, height: 320 });
    const thumbMeta = await sharp(result.thumbnail.buffer).metadata();
    expect([thumbMeta.format, thumbMeta.width, thumbMeta.height, thumbMeta.channels]).toEqual(['jpeg', 256, 320, 1]);
  });

  it('hands measure/ a calibration input it reads as detector-plane spacing (PS3.3 10.7)', async () => {
    const { pixels } = syntheticChest(64, 80);
    const file = writeDicom(dir, 'chest-cal', { rows: 80, columns: 64, pixels, attributes });
    const result = await ingestFilm(readFileSync(file), 'chest.dcm', 'application/dicom');
    if (result.kind !== 'dicom') throw new Error('expected a DICOM result');
    const calibration = calibrationFromDicom(result.spacingAttrs);
    expect(calibration.film).toMatchObject({ rowMm: 0.139, columnMm: 0.139, source: 'imager-pixel-spacing' });
    // Check values from the clinical reference: 144 px x 0.139 mm = 20.02 mm at the detector; / ERMF 1.08 = 18.53 mm.
    const segment = { a: { x: 10, y: 5 }, b: { x: 10, y: 149 } };
    expect(segmentLengthMm(segment, calibration.film!)).toBeCloseTo(20.02, 2);
    expect(segmentLengthMm(segment, calibration.patient!)).toBeCloseTo(18.53, 2);
  });

  it('downscales a film longer than 4,096 px and records the scale', async () => {
    const rows = 300;
    const columns = 4500;
    const pixels = new Uint16Array(rows * columns).map((_, i) => (i % columns) % 4096);
    const file = writeDicom(dir, 'wide', { rows, columns, pixels });
    const result = await ingestFilm(readFileSync(file), 'wide.dcm', 'application/dicom');
    const scale = 4096 / 4500;
    expect(result.display.width).toBe(4096);
    expect(result.display.height).toBe(Math.round(300 * scale)); // 273
    expect(result.display.scale).toBeCloseTo(scale, 12);
    expect(displaySize(columns, rows)).toEqual({ width: 4096, height: 273, scale });
    expect(result.thumbnail.width).toBe(256);
    // A caliper point maps back to the original pixels: display / scale.
    expect(Math.round(4096 / result.display.scale)).toBe(columns);
  });
});

describe('PNG and JPEG uploads (no calibration)', () => {
  it('a 16-bit greyscale PNG becomes 8-bit grey, identity rendering, no spacing', async () => {
    const width = 300;
    const height = 200;
    const px16 = new Uint16Array(width * height).map((_, i) => ((i % width) * 200) % 65536);
    const png = await sharp(px16, { raw: { width, height, channels: 1 } }).toColourspace('grey16').png().toBuffer();
    expect((await sharp(png).metadata()).depth).toBe('ushort');
    const result = await ingestFilm(png, 'scan.png', 'image/png');
    expect(result.kind).toBe('image');
    expect(result).toMatchObject({ spacingAttrs: null, takenAt: null, projection: null, rows: height, columns: width });
    expect(result.meta).toMatchObject({ format: 'png', width, height });
    expect(result.rendering.method).toBe('identity');
    const shown = await rawGrey(result.display.buffer);
    expect(shown.channels).toBe(1);
    expect([shown.width, shown.height]).toEqual([width, height]);
    // The 16-bit ramp (0..59,800 along each row) arrives as an 8-bit ramp (0..233).
    expect(shown.data[0]).toBe(0);
    expect(Math.abs(shown.data[299]! - 233)).toBeLessThanOrEqual(1);
    for (let x = 1; x < width; x += 1) expect(shown.data[x]!).toBeGreaterThanOrEqual(shown.data[x - 1]!);
  });

  it('a photographed film (JPEG, EXIF orientation 6) is turned upright and made grey', async () => {
    const width = 120;
    const height = 80;
    const rgb = Buffer.alloc(width * height * 3);
    for (let i = 0; i < width * height; i += 1) rgb.set([200, (i % width) * 2, 40], i * 3);
    const jpg = await sharp(rgb, { raw: { width, height, channels: 3 } }).jpeg().withMetadata({ orientation: 6 }).toBuffer();
    expect((await sharp(jpg).metadata()).orientation).toBe(6);
    const result = await ingestFilm(jpg, 'IMG_0001.JPG', 'image/jpeg');
    if (result.kind !== 'image') throw new Error('expected an image result');
    // Orientation 6 is a quarter turn: the upright picture is 80 wide and 120 high.
    expect([result.columns, result.rows]).toEqual([80, 120]);
    expect(result.meta).toMatchObject({ format: 'jpeg', orientation: 6, width: 80, height: 120 });
    expect((await rawGrey(result.display.buffer)).channels).toBe(1);
  });
});
