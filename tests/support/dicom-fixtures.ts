/**
 * Test DICOM films built WITH dcmtk (dump2dcm, dcmconv, dcmcjpeg, dcmcrle, dcmcjpls, img2dcm,
 * dcmodify), so Rimwatch's reader is checked against files it did not write itself, and dcmtk's own
 * readings (dcmdump, dcmj2pnm) to compare with. Every patient detail written here is invented.
 *
 * Reusable by other tests (upload route, hostile corpus): make a directory with `fixtureDir()`, write
 * films with `writeDicom` / `writeJpegBaselineDicom`, remove the directory with `cleanup()`.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import sharp from 'sharp';

/** Encodings a fixture can be written in, and the dcmtk step that makes each. */
export type FixtureSyntax =
  | 'explicit' // dump2dcm --write-xfer-little: 1.2.840.10008.1.2.1
  | 'implicit' // dcmconv +ti: 1.2.840.10008.1.2
  | 'deflated' // dcmconv +td: 1.2.840.10008.1.2.1.99
  | 'big-endian' // dcmconv +tb: 1.2.840.10008.1.2.2 (unsupported by Rimwatch)
  | 'jpeg-lossless' // dcmcjpeg +el (selection value 6 unless set): 1.2.840.10008.1.2.4.57
  | 'jpeg-lossless-sv1' // dcmcjpeg +e1: 1.2.840.10008.1.2.4.70
  | 'jpeg-baseline' // dcmcjpeg +eb (8-bit only): 1.2.840.10008.1.2.4.50
  | 'jpeg-extended' // dcmcjpeg +ee (12-bit lossy): 1.2.840.10008.1.2.4.51 (unsupported)
  | 'rle' // dcmcrle: 1.2.840.10008.1.2.5 (unsupported)
  | 'jpeg-ls'; // dcmcjpls: 1.2.840.10008.1.2.4.80 (unsupported)

export const fixtureSyntaxUid: Record<FixtureSyntax, string> = {
  explicit: '1.2.840.10008.1.2.1',
  implicit: '1.2.840.10008.1.2',
  deflated: '1.2.840.10008.1.2.1.99',
  'big-endian': '1.2.840.10008.1.2.2',
  'jpeg-lossless': '1.2.840.10008.1.2.4.57',
  'jpeg-lossless-sv1': '1.2.840.10008.1.2.4.70',
  'jpeg-baseline': '1.2.840.10008.1.2.4.50',
  'jpeg-extended': '1.2.840.10008.1.2.4.51',
  rle: '1.2.840.10008.1.2.5',
  'jpeg-ls': '1.2.840.10008.1.2.4.80',
};

export interface DicomFixtureSpec {
  rows: number;
  columns: number;
  /** Stored values row by row (signed values allowed when pixelRepresentation is 1). */
  pixels: ArrayLike<number>;
  bitsAllocated?: 8 | 16;
  /** Default: 12 for 16-bit, 8 for 8-bit. */
  bitsStored?: number;
  /** Default: bitsStored - 1. */
  highBit?: number;
  pixelRepresentation?: 0 | 1;
  photometric?: 'MONOCHROME1' | 'MONOCHROME2' | 'RGB' | 'YBR_FULL';
  /** 3 for colour: `pixels` then holds every sample, in the order Planar Configuration says. */
  samplesPerPixel?: 1 | 3;
  planarConfiguration?: 0 | 1;
  /** Number of Frames (0028,0008): `pixels` holds them one after another. */
  frames?: number;
  /** Extra dump lines by tag, e.g. { '(0028,0030)': 'DS [0.139\\0.140]' }. Override the defaults. */
  attributes?: Record<string, string>;
  /** Raw dump2dcm lines added as they are (sequences, see `voiLutSequenceDump`). */
  dumpLines?: string[];
  syntax?: FixtureSyntax;
  /** For 'jpeg-lossless': the predictor (selection value 1..7). */
  selectionValue?: number;
}

/** Invented identity written into every fixture, so tests can check it is never read. */
export const inventedIdentity = {
  patientName: 'Quillfeather^Marnie',
  patientId: 'RW-TEST-40417',
  birthDate: '19610229',
  accessionNumber: 'ACC-55512',
  institution: 'Larkmoor Test Infirmary',
} as const;

function run(cmd: string, args: string[]): string {
  try {
    return execFileSync(cmd, args, { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
  } catch (e) {
    const err = e as { stderr?: string; message: string };
    throw new Error(`${cmd} ${args.join(' ')} failed: ${err.stderr ?? err.message}`);
  }
}

/** True when the dcmtk tools the fixtures need are on PATH. */
export function hasDcmtk(): boolean {
  try {
    execFileSync('dcmdump', ['--version'], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

export function fixtureDir(prefix = 'rimwatch-dicom-'): { dir: string; cleanup: () => void } {
  const dir = mkdtempSync(join(tmpdir(), prefix));
  return { dir, cleanup: () => rmSync(dir, { recursive: true, force: true }) };
}

function pixelBytes(spec: DicomFixtureSpec): Buffer {
  const ba = spec.bitsAllocated ?? 16;
  const bs = spec.bitsStored ?? (ba === 16 ? 12 : 8);
  const hb = spec.highBit ?? bs - 1;
  const shift = hb - bs + 1;
  const mask = 2 ** bs - 1;
  const n = spec.rows * spec.columns * (spec.samplesPerPixel ?? 1) * (spec.frames ?? 1);
  if (spec.pixels.length !== n) throw new Error(`fixture needs ${n} samples, got ${spec.pixels.length}`);
  const buf = Buffer.alloc(n * (ba / 8) + ((n * (ba / 8)) % 2)); // Pixel Data has even length (PS3.5 7.1.1)
  for (let i = 0; i < n; i += 1) {
    const v = spec.pixels[i] ?? 0;
    const cell = ((v & mask) << shift) >>> 0; // two's complement within Bits Stored for signed values
    if (ba === 16) buf.writeUInt16LE(cell & 0xffff, 2 * i);
    else buf.writeUInt8(cell & 0xff, i);
  }
  return buf;
}

let uidCounter = 0;
function inventedUid(kind: number): string {
  uidCounter += 1;
  return `2.25.4711${kind}${process.pid}${Date.now() % 100000}${uidCounter}`;
}

/** Writes a DICOM Part 10 film with dcmtk; returns its path. */
export function writeDicom(dir: string, name: string, spec: DicomFixtureSpec): string {
  const ba = spec.bitsAllocated ?? 16;
  const bs = spec.bitsStored ?? (ba === 16 ? 12 : 8);
  const hb = spec.highBit ?? bs - 1;
  const raw = join(dir, `${name}.raw`);
  writeFileSync(raw, pixelBytes(spec));
  const lines: Record<string, string> = {
    '(0008,0016)': 'UI =DigitalXRayImageStorageForPresentation',
    '(0008,0018)': `UI [${inventedUid(3)}]`,
    '(0008,0020)': 'DA [20260314]',
    '(0008,0030)': 'TM [101500]',
    '(0008,0050)': `SH [${inventedIdentity.accessionNumber}]`,
    '(0008,0060)': 'CS [DX]',
    '(0008,0080)': `LO [${inventedIdentity.institution}]`,
    '(0010,0010)': `PN [${inventedIdentity.patientName}]`,
    '(0010,0020)': `LO [${inventedIdentity.patientId}]`,
    '(0010,0030)': `DA [${inventedIdentity.birthDate}]`,
    '(0010,0040)': 'CS [F]',
    '(0018,0015)': 'CS [CHEST]',
    '(0020,000d)': `UI [${inventedUid(1)}]`,
    '(0020,000e)': `UI [${inventedUid(2)}]`,
    '(0028,0002)': `US ${spec.samplesPerPixel ?? 1}`,
    '(0028,0004)': `CS [${spec.photometric ?? 'MONOCHROME2'}]`,
    ...(spec.samplesPerPixel === 3 ? { '(0028,0006)': `US ${spec.planarConfiguration ?? 0}` } : {}),
    ...(spec.frames !== undefined ? { '(0028,0008)': `IS [${spec.frames}]` } : {}),
    '(0028,0010)': `US ${spec.rows}`,
    '(0028,0011)': `US ${spec.columns}`,
    '(0028,0100)': `US ${ba}`,
    '(0028,0101)': `US ${bs}`,
    '(0028,0102)': `US ${hb}`,
    '(0028,0103)': `US ${spec.pixelRepresentation ?? 0}`,
    ...spec.attributes,
  };
  const dump = Object.entries(lines)
    .sort(([a], [b]) => a.toLowerCase().localeCompare(b.toLowerCase()))
    .map(([tag, value]) => `${tag} ${value}`);
  dump.push(...(spec.dumpLines ?? []));
  dump.push(`(7fe0,0010) ${ba === 16 ? 'OW' : 'OB'} =${raw}`);
  const dumpFile = join(dir, `${name}.dump`);
  writeFileSync(dumpFile, `${dump.join('\n')}\n`);
  const plain = join(dir, `${name}.plain.dcm`);
  run('dump2dcm', ['-q', '--write-xfer-little', dumpFile, plain]);
  const out = join(dir, `${name}.dcm`);
  const syntax = spec.syntax ?? 'explicit';
  switch (syntax) {
    case 'explicit':
      return plain;
    case 'implicit':
      run('dcmconv', ['-q', '+ti', plain, out]);
      break;
    case 'deflated':
      run('dcmconv', ['-q', '+td', plain, out]);
      break;
    case 'big-endian':
      run('dcmconv', ['-q', '+tb', plain, out]);
      break;
    case 'jpeg-lossless':
      run('dcmcjpeg', ['-q', '+el', '+sv', String(spec.selectionValue ?? 6), plain, out]);
      break;
    case 'jpeg-lossless-sv1':
      run('dcmcjpeg', ['-q', '+e1', plain, out]);
      break;
    case 'jpeg-baseline':
      run('dcmcjpeg', ['-q', '+eb', plain, out]);
      break;
    case 'jpeg-extended':
      run('dcmcjpeg', ['-q', '+ee', plain, out]);
      break;
    case 'rle':
      run('dcmcrle', ['-q', plain, out]);
      break;
    case 'jpeg-ls':
      run('dcmcjpls', ['-q', plain, out]);
      break;
  }
  return out;
}

/**
 * dump2dcm lines for a VOI LUT Sequence (0028,3010) with one item (PS3.3 C.11.2): LUT Descriptor
 * [entries, first mapped value, bits per entry] and LUT Data.
 */
export function voiLutSequenceDump(firstMapped: number, bits: number, data: readonly number[], explanation = 'invented curve'): string[] {
  return [
    '(0028,3010) SQ (Sequence with undefined length #=1)',
    '  (fffe,e000) na (Item with undefined length #=3)',
    `    (0028,3002) US ${data.length === 65536 ? 0 : data.length}\\${firstMapped}\\${bits}`,
    `    (0028,3003) LO [${explanation}]`,
    `    (0028,3006) US ${data.join('\\')}`,
    '  (fffe,e00d) na (ItemDelimitationItem)',
    '(fffe,e0dd) na (SequenceDelimitationItem)',
  ];
}

/**
 * A JPEG baseline DICOM the way a secondary-capture workflow makes one: an 8-bit greyscale JPEG encoded
 * by sharp, wrapped by img2dcm (which copies the JPEG stream unchanged), then given attributes by dcmodify.
 */
export async function writeJpegBaselineDicom(
  dir: string,
  name: string,
  grey: { data: Uint8Array; width: number; height: number },
  attributes: Record<string, string> = {},
): Promise<string> {
  const jpeg = join(dir, `${name}.jpg`);
  await sharp(grey.data, { raw: { width: grey.width, height: grey.height, channels: 1 } })
    .toColourspace('b-w')
    .jpeg({ quality: 90 })
    .toFile(jpeg);
  const out = join(dir, `${name}.dcm`);
  run('img2dcm', ['-q', jpeg, out]);
  modifyDicom(out, {
    '(0010,0010)': inventedIdentity.patientName,
    '(0010,0020)': inventedIdentity.patientId,
    ...attributes,
  });
  return out;
}

/** Sets (inserting when absent) attributes with `dcmodify -i`, e.g. { '(0018,1164)': '0.150\\0.150' }. */
export function modifyDicom(file: string, assignments: Record<string, string>): void {
  const args = ['-q', '-nb'];
  for (const [tag, value] of Object.entries(assignments)) args.push('-i', `${tag}=${value}`);
  run('dcmodify', [...args, file]);
}

/**
 * dcmtk's reading of one attribute: `dcmdump +P tag`, the value as printed (strings without their
 * brackets, numbers as text, multiple values joined by a backslash). Null when absent or empty.
 */
export function dcmdumpValue(file: string, tag: string): string | null {
  const out = run('dcmdump', ['-q', '-Un', '+L', '+P', tag, file]).split('\n')[0] ?? '';
  const m = /^\s*\([0-9a-f]{4},[0-9a-f]{4}\)\s+([A-Z]{2})\s+(.*?)\s+#\s*(\d+),/i.exec(out);
  if (!m) return null;
  const value = (m[2] ?? '').trim();
  if (value === '(no value available)' || Number(m[3]) === 0) return null;
  return value.startsWith('[') && value.endsWith(']') ? value.slice(1, -1) : value;
}

/**
 * dcmtk's reading of every top-level attribute in one `dcmdump` run: tag ("gggg,eeee", lower case) ->
 * value as `dcmdumpValue` gives it. Sequence contents are not included.
 */
export function dcmdumpAll(file: string): Map<string, string | null> {
  const out = run('dcmdump', ['-q', '-Un', '-M', '+L', file]); // -M: leave pixel data unloaded
  const values = new Map<string, string | null>();
  for (const line of out.split('\n')) {
    const m = /^\(([0-9a-f]{4},[0-9a-f]{4})\)\s+([A-Z]{2})\s+(.*?)\s+#\s*(\d+),/i.exec(line);
    if (!m?.[1]) continue;
    const value = (m[3] ?? '').trim();
    const empty = value === '(no value available)' || Number(m[4]) === 0 || m[2] === 'SQ';
    values.set(m[1].toLowerCase(), empty ? null : value.startsWith('[') && value.endsWith(']') ? value.slice(1, -1) : value);
  }
  return values;
}

/** Parses an ASCII (P2) or binary (P5) PGM as written by dcmj2pnm. */
export function readPgm(bytes: Buffer): { width: number; height: number; maxval: number; values: number[] } {
  const magic = bytes.subarray(0, 2).toString('latin1');
  let pos = 2;
  const tokens: number[] = [];
  while (tokens.length < 3) {
    while (pos < bytes.length && /\s/.test(String.fromCharCode(bytes[pos] ?? 32))) pos += 1;
    if (bytes[pos] === 0x23) {
      while (pos < bytes.length && bytes[pos] !== 0x0a) pos += 1;
      continue;
    }
    let tok = '';
    while (pos < bytes.length && !/\s/.test(String.fromCharCode(bytes[pos] ?? 32))) tok += String.fromCharCode(bytes[pos++] ?? 32);
    tokens.push(Number(tok));
  }
  const [width = 0, height = 0, maxval = 0] = tokens;
  pos += 1; // the single whitespace after maxval
  const n = width * height;
  let values: number[];
  if (magic === 'P2') {
    values = bytes.subarray(pos).toString('latin1').trim().split(/\s+/).map(Number);
  } else if (magic === 'P5') {
    values = [];
    for (let i = 0; i < n; i += 1) values.push(maxval > 255 ? bytes.readUInt16BE(pos + 2 * i) : (bytes[pos + i] ?? 0));
  } else {
    throw new Error(`not a PGM (${magic})`);
  }
  if (values.length !== n) throw new Error(`PGM has ${values.length} values for ${width} x ${height}`);
  return { width, height, maxval, values };
}

/**
 * dcmtk's decoding of the pixels: `dcmj2pnm -M -W +opn BITS` (no modality LUT, no windowing, n-bit
 * ASCII PGM). dcmj2pnm is dcm2pnm with dcmtk's JPEG decoders linked in (Debian's dcm2pnm has none). dcmtk then maps the stored range linearly onto 0..2^BITS-1, so a stored value v comes
 * out as v - min for MONOCHROME2 and max - v for MONOCHROME1, min/max being the extremes Bits Stored
 * and Pixel Representation allow.
 */
export function dcmtkPixels(file: string, bits: number, extraArgs: string[] = []): ReturnType<typeof readPgm> {
  const out = `${file}.${bits}.pgm`;
  run('dcmj2pnm', ['-q', '-M', '-W', '+opn', String(bits), ...extraArgs, file, out]);
  return readPgm(readFileSync(out));
}

/** dcmtk's 8-bit rendering with extra options, e.g. ['+Wi', '1'] (first stored window), as binary PGM. */
export function dcmtkRender8(file: string, args: string[]): ReturnType<typeof readPgm> {
  const out = `${file}.render8.pgm`;
  run('dcmj2pnm', ['-q', ...args, '+op', file, out]);
  return readPgm(readFileSync(out));
}

/** Deterministic test pixels covering the stored range: a gradient plus a scrambled pattern. */
export function patternPixels(rows: number, columns: number, bitsStored: number, signed = false): Int32Array {
  const size = 2 ** bitsStored;
  const min = signed ? -(size / 2) : 0;
  const out = new Int32Array(rows * columns);
  for (let i = 0; i < out.length; i += 1) {
    // Corners hit both extremes; the rest mixes a ramp with a multiplicative scramble.
    const v = i === 0 ? 0 : i === out.length - 1 ? size - 1 : (i * 2654435761 + (i % columns) * 97) % size;
    out[i] = min + (v >>> 0) % size;
  }
  return out;
}

/** Where the synthetic chest puts things, in pixels, so measurement tests can check against it. */
export interface SyntheticChestGeometry {
  width: number;
  height: number;
  /** Hemithorax (inner chest wall) ellipses: centre x, centre y, half-width, half-height. */
  rightHemithorax: { cx: number; cy: number; rx: number; ry: number };
  leftHemithorax: { cx: number; cy: number; rx: number; ry: number };
  /** The collapsed right lung, inside the right hemithorax: the gap between them is the pneumothorax. */
  rightLung: { cx: number; cy: number; rx: number; ry: number };
}

/**
 * A small synthetic PA chest in 12-bit stored values (MONOCHROME2: air dark, tissue bright): soft
 * tissue, two hemithoraces, the right lung collapsed away from the chest wall (a pneumothorax rim with
 * no lung markings, darkest of all). Image left is patient right, as on a PA film. Invented geometry.
 */
export function syntheticChest(width = 256, height = 320): { pixels: Uint16Array; geometry: SyntheticChestGeometry } {
  const g: SyntheticChestGeometry = {
    width,
    height,
    rightHemithorax: { cx: width * 0.3, cy: height * 0.52, rx: width * 0.18, ry: height * 0.34 },
    leftHemithorax: { cx: width * 0.7, cy: height * 0.52, rx: width * 0.18, ry: height * 0.34 },
    rightLung: { cx: width * 0.32, cy: height * 0.58, rx: width * 0.13, ry: height * 0.26 },
  };
  const inside = (e: { cx: number; cy: number; rx: number; ry: number }, x: number, y: number) =>
    ((x - e.cx) / e.rx) ** 2 + ((y - e.cy) / e.ry) ** 2 <= 1;
  const px = new Uint16Array(width * height);
  for (let y = 0; y < height; y += 1) {
    for (let x = 0; x < width; x += 1) {
      let v = 300; // air around the patient
      if (((x - width / 2) / (width * 0.46)) ** 2 + ((y - height * 0.55) / (height * 0.5)) ** 2 <= 1) v = 2900; // soft tissue
      const markings = 120 * Math.sin(x * 0.37) * Math.sin(y * 0.29); // vessels, roughly
      if (inside(g.leftHemithorax, x, y)) v = 1300 + markings;
      if (inside(g.rightHemithorax, x, y)) v = inside(g.rightLung, x, y) ? 1300 + markings : 700;
      px[y * width + x] = Math.round(v);
    }
  }
  return { pixels: px, geometry: g };
}
