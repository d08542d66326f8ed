/**
 * Benchmark: ingestFilm on a 2,500 x 3,000 16-bit DICOM film against a floor measured in the same run:
 * sharp alone taking the same raw 16-bit greyscale pixels to the same display size and format
 * (PNG, one grey channel, same compression level). Target: ingestFilm <= 1.5 x the floor.
 *
 * Run: npx tsx bench/ingest.ts   (prints figures; writes bench/results/ingest.json)
 *
 * The film is written byte by byte here (explicit VR little endian, PS3.5 7.1.2 / PS3.10 7.1) so the
 * benchmark needs nothing but node_modules. Pixels are an invented chest-like picture with noise, so
 * the PNG encoder sees realistic entropy.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import sharp from 'sharp';
import { ingestFilm, readDicom } from '../lib/films';
import { buildDisplayLut, applyLut } from '../lib/films/pixels';
import { displaySize, previewSettings } from '../lib/films/preview';

const COLUMNS = 2500;
const ROWS = 3000;
const WARMUP = 2;
const RUNS = Number(process.env.BENCH_RUNS ?? 7);

function element(group: number, elem: number, vr: string, value: Buffer): Buffer {
  const long = ['OB', 'OW', 'SQ', 'UN', 'UT', 'UC', 'UR', 'OF', 'OD', 'OL', 'OV', 'SV', 'UV'].includes(vr);
  const padded = value.length % 2 === 0 ? value : Buffer.concat([value, Buffer.from(vr === 'UI' ? [0] : [0x20])]);
  const head = Buffer.alloc(long ? 12 : 8);
  head.writeUInt16LE(group, 0);
  head.writeUInt16LE(elem, 2);
  head.write(vr, 4, 'latin1');
  if (long) head.writeUInt32LE(padded.length, 8);
  else head.writeUInt16LE(padded.length, 6);
  return Buffer.concat([head, padded]);
}
const text = (s: string) => Buffer.from(s, 'latin1');
const us = (n: number) => {
  const b = Buffer.alloc(2);
  b.writeUInt16LE(n);
  return b;
};

/** An invented 12-bit PA chest: soft tissue, two lungs, a rib-like ripple and noise. */
function chestPixels(): Uint16Array {
  const px = new Uint16Array(COLUMNS * ROWS);
  let seed = 12345;
  for (let y = 0; y < ROWS; y += 1) {
    for (let x = 0; x < COLUMNS; x += 1) {
      const bx = (x - COLUMNS / 2) / (COLUMNS * 0.46);
      const by = (y - ROWS * 0.55) / (ROWS * 0.5);
      let v = bx * bx + by * by <= 1 ? 2900 : 400;
      const lung = (cx: number) => ((x - cx) / (COLUMNS * 0.17)) ** 2 + ((y - ROWS * 0.5) / (ROWS * 0.3)) ** 2 <= 1;
      if (lung(COLUMNS * 0.3) || lung(COLUMNS * 0.7)) v = 1300 + 150 * Math.sin(y / 37);
      seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0;
      v += ((seed >>> 20) % 61) - 30;
      px[y * COLUMNS + x] = Math.max(0, Math.min(4095, Math.round(v)));
    }
  }
  return px;
}

function dicomFile(pixels: Uint16Array): Buffer {
  const ts = '1.2.840.10008.1.2.1';
  const sopClass = '1.2.840.10008.5.1.4.1.1.1.1'; // Digital X-Ray Image Storage - For Presentation
  const sopInstance = '2.25.9021348756120934857612093';
  const metaBody = Buffer.concat([
    element(0x0002, 0x0001, 'OB', Buffer.from([0, 1])),
    element(0x0002, 0x0002, 'UI', text(sopClass)),
    element(0x0002, 0x0003, 'UI', text(sopInstance)),
    element(0x0002, 0x0010, 'UI', text(ts)),
    element(0x0002, 0x0012, 'UI', text('2.25.7710')),
  ]);
  const groupLength = Buffer.alloc(4);
  groupLength.writeUInt32LE(metaBody.length);
  const data = Buffer.concat([
    element(0x0008, 0x0016, 'UI', text(sopClass)),
    element(0x0008, 0x0018, 'UI', text(sopInstance)),
    element(0x0008, 0x0022, 'DA', text('20260402')),
    element(0x0008, 0x0032, 'TM', text('141500')),
    element(0x0008, 0x0060, 'CS', text('DX')),
    element(0x0018, 0x1164, 'DS', text('0.139\\0.139')),
    element(0x0018, 0x5101, 'CS', text('PA')),
    element(0x0028, 0x0002, 'US', us(1)),
    element(0x0028, 0x0004, 'CS', text('MONOCHROME2')),
    element(0x0028, 0x0010, 'US', us(ROWS)),
    element(0x0028, 0x0011, 'US', us(COLUMNS)),
    element(0x0028, 0x0100, 'US', us(16)),
    element(0x0028, 0x0101, 'US', us(12)),
    element(0x0028, 0x0102, 'US', us(11)),
    element(0x0028, 0x0103, 'US', us(0)),
    element(0x0028, 0x1050, 'DS', text('1700')),
    element(0x0028, 0x1051, 'DS', text('3000')),
    element(0x7fe0, 0x0010, 'OW', Buffer.from(pixels.buffer, pixels.byteOffset, pixels.byteLength)),
  ]);
  return Buffer.concat([Buffer.alloc(128), text('DICM'), element(0x0002, 0x0000, 'UL', groupLength), metaBody, data]);
}

/** The floor: sharp alone, raw 16-bit grey in, the same display size and format out. */
async function sharpFloor(pixels: Uint16Array, withThumbnail: boolean): Promise<number> {
  const size = displaySize(COLUMNS, ROWS);
  const raw = { width: COLUMNS, height: ROWS, channels: 1 as const };
  const display = sharp(pixels, { raw })
    .resize({ width: size.width, height: size.height, fit: 'fill' })
    .toColourspace('b-w')
    .png({ compressionLevel: previewSettings.pngCompressionLevel })
    .toBuffer();
  const thumb = withThumbnail
    ? sharp(pixels, { raw }).resize({ width: previewSettings.thumbnailWidth }).toColourspace('b-w').jpeg({ quality: previewSettings.thumbnailQuality }).toBuffer()
    : Promise.resolve(Buffer.alloc(0));
  const [d] = await Promise.all([display, thumb]);
  return d.length;
}

/** CPU time (all threads of this process, user + system) of the last `time` call, ms: steadier than wall time on a busy machine. */
let lastCpuMs = 0;

async function time(fn: () => unknown): Promise<number> {
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  await fn();
  const wall = performance.now() - t0;
  const c = process.cpuUsage(c0);
  lastCpuMs = (c.user + c.system) / 1000;
  return wall;
}

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)] ?? NaN;
};

async function main(): Promise<void> {
  const pixels = chestPixels();
  const file = dicomFile(pixels);
  const film = await readDicom(file); // also checks the file is well formed
  console.log(`film: ${COLUMNS} x ${ROWS}, 16-bit (12 stored), ${(file.length / 1e6).toFixed(1)} MB, sharp ${sharp.versions.sharp}, libvips ${sharp.versions.vips}`);

  const runs = { ingest: [] as number[], floor: [] as number[], floorWithThumb: [] as number[], lut: [] as number[], lutPercentile: [] as number[], read: [] as number[] };
  const cpu = { ingest: [] as number[], floor: [] as number[] };
  for (let i = 0; i < WARMUP + RUNS; i += 1) {
    // Interleaved, so drift in machine load hits both sides alike.
    const ingest = await time(() => ingestFilm(file, 'bench.dcm', 'application/dicom'));
    const ingestCpu = lastCpuMs;
    const floor = await time(() => sharpFloor(pixels, false));
    const floorCpu = lastCpuMs;
    const floorWithThumb = await time(() => sharpFloor(pixels, true));
    const lut = await time(() => applyLut(film.pixels, buildDisplayLut(film.pixels, film.meta, film.voiLut).lut));
    const noWindow = { ...film.meta, windowCenter: null, windowWidth: null };
    const lutPercentile = await time(() => applyLut(film.pixels, buildDisplayLut(film.pixels, noWindow, null).lut));
    const read = await time(() => readDicom(file));
    if (i >= WARMUP) {
      cpu.ingest.push(ingestCpu);
      cpu.floor.push(floorCpu);
      runs.ingest.push(ingest);
      runs.floor.push(floor);
      runs.floorWithThumb.push(floorWithThumb);
      runs.lut.push(lut);
      runs.lutPercentile.push(lutPercentile);
      runs.read.push(read);
    }
  }
  const m = Object.fromEntries(Object.entries(runs).map(([k, v]) => [k, median(v)])) as Record<keyof typeof runs, number>;
  const ratio = m.ingest / m.floor;
  const ratioWithThumb = m.ingest / m.floorWithThumb;
  const f = (ms: number) => `${ms.toFixed(0).padStart(5)} ms`;
  console.log(`median of ${RUNS} runs after ${WARMUP} warm-up runs:`);
  console.log(`  ingestFilm (parse, LUT, display PNG, thumbnail JPEG, sha256) ${f(m.ingest)}`);
  console.log(`  floor: sharp raw 16-bit -> ${COLUMNS} x ${ROWS} PNG               ${f(m.floor)}`);
  console.log(`  floor + the same thumbnail by sharp                           ${f(m.floorWithThumb)}`);
  console.log(`  of which in ingestFilm: readDicom ${f(m.read)}, window LUT build+apply ${f(m.lut)} (percentile ${f(m.lutPercentile)})`);
  const cpuRatio = median(cpu.ingest) / median(cpu.floor);
  console.log(`  CPU time (this process, all threads): ingestFilm ${f(median(cpu.ingest))}, floor ${f(median(cpu.floor))}, ratio ${cpuRatio.toFixed(2)}x`);
  console.log(`ratio ingestFilm / floor: ${ratio.toFixed(2)}x (target <= 1.5x) ${ratio <= 1.5 ? 'OK' : 'OVER TARGET'}; against floor + thumbnail: ${ratioWithThumb.toFixed(2)}x`);

  const dir = join(__dirname, 'results');
  mkdirSync(dir, { recursive: true });
  writeFileSync(
    join(dir, 'ingest.json'),
    `${JSON.stringify({ when: new Date().toISOString(), columns: COLUMNS, rows: ROWS, runs: RUNS, medianMs: m, cpuMedianMs: { ingest: median(cpu.ingest), floor: median(cpu.floor) }, ratio, cpuRatio, ratioWithThumb, target: 1.5 }, null, 2)}\n`,
  );
}

main().catch((e: unknown) => {
  console.error(e);
  process.exit(1);
});
