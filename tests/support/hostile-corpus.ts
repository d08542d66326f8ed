/**
 * A generated corpus of malformed and hostile uploads, for the film upload route. Every file is built
 * here from a valid film (a DICOM written by dcmtk through tests/support/dicom-fixtures.ts, and PNG /
 * JPEG files encoded by sharp) and then broken on purpose: truncated at every element boundary, given
 * lying element lengths, absurd Rows / Columns / Bits Allocated, decompression bombs, other formats
 * under a film's name, empty files, zero-length pixel data, huge attribute values, deep sequences.
 *
 * Each entry says why a film reader must refuse it. Bytes are made on demand (`make()`), so the few
 * large entries exist one at a time.
 *
 * DICOM layout facts used below are from DICOM PS3.10 7.1 (128-byte preamble, "DICM", file meta
 * information in explicit VR little endian) and PS3.5 7.1.2 (explicit VR element headers: 8 bytes, or
 * 12 for OB, OW, OF, SQ, UT, UN and the other long-length VRs) and 7.5 (sequence items and delimiters).
 */
import { createDeflateRaw, deflateRawSync, deflateSync } from "node:zlib";
import { readFileSync } from "node:fs";
import sharp from "sharp";
import { patternPixels, writeDicom, writeJpegBaselineDicom } from "./dicom-fixtures";

export interface HostileFile {
  /** Unique, for test names and the file name sent. */
  name: string;
  /** What a reader must notice. */
  why: string;
  filename: string;
  contentType: string;
  make: () => Buffer | Promise<Buffer>;
}

// ---------------------------------------------------------------------------------------------------
// A small explicit VR little endian reader and writer, enough to take a valid file apart and put it
// back together wrongly.

const LONG_VRS = new Set(["OB", "OD", "OF", "OL", "OV", "OW", "SQ", "SV", "UC", "UN", "UR", "UT", "UV"]);
const UNDEFINED = 0xffffffff;

export interface Element {
  group: number;
  element: number;
  vr: string;
  value: Buffer;
  /** Offset of the element's first byte in the file it came from. */
  offset: number;
  /** Offset of the value's first byte. */
  valueOffset: number;
  /** True when the length field was 0xFFFFFFFF (encapsulated pixel data). */
  undefinedLength: boolean;
}

const tagOf = (g: number, e: number) => (g << 16) | e;
const tagText = (el: { group: number; element: number }) => `(${el.group.toString(16).padStart(4, "0")},${el.element.toString(16).padStart(4, "0")})`;

/** Splits an explicit VR little endian Part 10 file into its top-level elements. */
export function parseExplicit(file: Buffer): { preamble: Buffer; elements: Element[] } {
  if (file.toString("latin1", 128, 132) !== "DICM") throw new Error("not a Part 10 file");
  const elements: Element[] = [];
  let off = 132;
  while (off < file.length) {
    const group = file.readUInt16LE(off);
    const element = file.readUInt16LE(off + 2);
    const vr = file.toString("latin1", off + 4, off + 6);
    const long = LONG_VRS.has(vr);
    const length = long ? file.readUInt32LE(off + 8) : file.readUInt16LE(off + 6);
    const valueOffset = off + (long ? 12 : 8);
    if (length === UNDEFINED) {
      // Only encapsulated Pixel Data is expected here: it runs to the sequence delimiter at the end.
      const end = findSequenceDelimiter(file, valueOffset);
      elements.push({ group, element, vr, value: file.subarray(valueOffset, end), offset: off, valueOffset, undefinedLength: true });
      off = end + 8;
      continue;
    }
    elements.push({ group, element, vr, value: file.subarray(valueOffset, valueOffset + length), offset: off, valueOffset, undefinedLength: false });
    off = valueOffset + length;
  }
  return { preamble: file.subarray(0, 128), elements };
}

function findSequenceDelimiter(file: Buffer, from: number): number {
  let off = from;
  while (off + 8 <= file.length) {
    const g = file.readUInt16LE(off);
    const e = file.readUInt16LE(off + 2);
    const len = file.readUInt32LE(off + 4);
    if (g === 0xfffe && e === 0xe0dd) return off;
    if (g !== 0xfffe || e !== 0xe000) throw new Error(`unexpected ${tagText({ group: g, element: e })} in encapsulated pixel data`);
    off += 8 + len;
  }
  throw new Error("no sequence delimiter");
}

export interface EncodeOptions {
  /** Length field written instead of the true one (the value bytes are unchanged). */
  lengthOverride?: number;
  undefinedLength?: boolean;
}

export function encodeElement(group: number, element: number, vr: string, value: Buffer, opts: EncodeOptions = {}): Buffer {
  const long = LONG_VRS.has(vr);
  const head = Buffer.alloc(long ? 12 : 8);
  head.writeUInt16LE(group, 0);
  head.writeUInt16LE(element, 2);
  head.write(vr.padEnd(2, " ").slice(0, 2), 4, "latin1");
  const length = opts.undefinedLength ? UNDEFINED : (opts.lengthOverride ?? value.length);
  if (long) head.writeUInt32LE(length >>> 0, 8);
  else head.writeUInt16LE(length & 0xffff, 6);
  if (opts.undefinedLength) return Buffer.concat([head, value, sequenceDelimiter()]);
  return Buffer.concat([head, value]);
}

const sequenceDelimiter = () => Buffer.from([0xfe, 0xff, 0xdd, 0xe0, 0, 0, 0, 0]);
const itemHeader = (length: number) => {
  const b = Buffer.from([0xfe, 0xff, 0x00, 0xe0, 0, 0, 0, 0]);
  b.writeUInt32LE(length >>> 0, 4);
  return b;
};
const itemDelimiter = () => Buffer.from([0xfe, 0xff, 0x0d, 0xe0, 0, 0, 0, 0]);

export interface Edit {
  /** Replace the value of these tags (the element is kept, its length follows the new value). */
  values?: Map<number, Buffer>;
  /** Replace the VR of these tags. */
  vrs?: Map<number, string>;
  /** Drop these tags. */
  drop?: Set<number>;
  /** Write these length fields instead of the true ones. */
  lengths?: Map<number, number>;
  /** Extra elements inserted before the first element with a larger tag (already encoded). */
  insert?: { tag: number; bytes: Buffer }[];
  /** Keep (0002,0000) as it was instead of recomputing it. */
  keepGroupLength?: boolean;
}

const padEven = (b: Buffer, pad: number) => (b.length % 2 === 0 ? b : Buffer.concat([b, Buffer.from([pad])]));
export const text = (s: string) => padEven(Buffer.from(s, "latin1"), 0x20);
export const uid = (s: string) => padEven(Buffer.from(s, "latin1"), 0x00);
export const us = (...v: number[]) => {
  const b = Buffer.alloc(2 * v.length);
  v.forEach((x, i) => b.writeUInt16LE(x & 0xffff, 2 * i));
  return b;
};

/** Writes the elements back as a Part 10 file, with the edits applied and the meta group length recomputed. */
export function rebuild(parsed: { preamble: Buffer; elements: Element[] }, edit: Edit = {}): Buffer {
  const inserts = [...(edit.insert ?? [])].sort((a, b) => a.tag - b.tag);
  const encoded: { tag: number; bytes: Buffer }[] = [];
  for (const el of parsed.elements) {
    const tag = tagOf(el.group, el.element);
    while (inserts.length && (inserts[0]?.tag ?? Infinity) < tag) encoded.push(inserts.shift() as { tag: number; bytes: Buffer });
    if (edit.drop?.has(tag)) continue;
    const value = edit.values?.get(tag) ?? el.value;
    const vr = edit.vrs?.get(tag) ?? el.vr;
    const lengthOverride = edit.lengths?.get(tag);
    encoded.push({ tag, bytes: encodeElement(el.group, el.element, vr, value, { lengthOverride, undefinedLength: el.undefinedLength && lengthOverride === undefined }) });
  }
  encoded.push(...inserts);
  if (!edit.keepGroupLength && !edit.lengths?.has(tagOf(2, 0))) {
    const glIndex = encoded.findIndex((e) => e.tag === tagOf(2, 0));
    if (glIndex >= 0) {
      const metaBytes = encoded.filter((e) => e.tag >>> 16 === 2 && e.tag !== tagOf(2, 0)).reduce((n, e) => n + e.bytes.length, 0);
      const v = Buffer.alloc(4);
      v.writeUInt32LE(metaBytes, 0);
      encoded[glIndex] = { tag: tagOf(2, 0), bytes: encodeElement(2, 0, "UL", v) };
    }
  }
  return Buffer.concat([parsed.preamble, Buffer.from("DICM", "latin1"), ...encoded.map((e) => e.bytes)]);
}

// ---------------------------------------------------------------------------------------------------
// PNG and JPEG pieces.

const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);

function crc32(buf: Buffer): number {
  let c = ~0;
  for (const byte of buf) {
    c ^= byte;
    for (let k = 0; k < 8; k += 1) c = c & 1 ? (c >>> 1) ^ 0xedb88320 : c >>> 1;
  }
  return ~c >>> 0;
}

export function pngChunk(type: string, data: Buffer, badCrc = false): Buffer {
  const len = Buffer.alloc(4);
  len.writeUInt32BE(data.length, 0);
  const body = Buffer.concat([Buffer.from(type, "latin1"), data]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(badCrc ? (crc32(body) ^ 0xdeadbeef) >>> 0 : crc32(body), 0);
  return Buffer.concat([len, body, crc]);
}

function ihdr(width: number, height: number, bitDepth = 8, colourType = 0): Buffer {
  const d = Buffer.alloc(13);
  d.writeUInt32BE(width >>> 0, 0);
  d.writeUInt32BE(height >>> 0, 4);
  d[8] = bitDepth;
  d[9] = colourType;
  return d; // compression, filter, interlace: 0
}

/** A greyscale PNG whose every row is zero: `width x height` pixels from a small zlib stream. */
async function zeroPng(width: number, height: number): Promise<Buffer> {
  const row = Buffer.alloc(width + 1); // filter byte 0 + pixels
  const deflater = createDeflateRaw({ level: 9 });
  const chunks: Buffer[] = [];
  deflater.on("data", (c: Buffer) => chunks.push(c));
  const done = new Promise<void>((resolve, reject) => {
    deflater.on("end", resolve);
    deflater.on("error", reject);
  });
  const block = Buffer.concat(Array.from({ length: 64 }, () => row));
  for (let y = 0; y < height; y += 64) {
    const n = Math.min(64, height - y);
    if (!deflater.write(n === 64 ? block : block.subarray(0, n * row.length))) await new Promise((r) => deflater.once("drain", r));
  }
  deflater.end();
  await done;
  const raw = Buffer.concat(chunks);
  // zlib wrapper around the raw deflate stream (RFC 1950): header 78 DA, Adler-32 of the data.
  const adler = adler32Zeros(row.length, height);
  const zlib = Buffer.concat([Buffer.from([0x78, 0xda]), raw, adler]);
  return Buffer.concat([PNG_SIGNATURE, pngChunk("IHDR", ihdr(width, height)), pngChunk("IDAT", zlib), pngChunk("IEND", Buffer.alloc(0))]);
}

/** Adler-32 of `rows` rows of `rowLength` zero bytes: a = 1, b = total length (mod 65521). */
function adler32Zeros(rowLength: number, rows: number): Buffer {
  const n = (rowLength % 65521) * (rows % 65521);
  const b = n % 65521;
  const out = Buffer.alloc(4);
  out.writeUInt32BE(((b << 16) | 1) >>> 0, 0);
  return out;
}

function jpegWithFrameSize(jpeg: Buffer, width: number, height: number): Buffer {
  const out = Buffer.from(jpeg);
  let off = 2;
  while (off + 4 < out.length) {
    if (out[off] !== 0xff) throw new Error("lost in JPEG markers");
    const marker = out[off + 1] ?? 0;
    const len = out.readUInt16BE(off + 2);
    if (marker >= 0xc0 && marker <= 0xcf && marker !== 0xc4 && marker !== 0xc8 && marker !== 0xcc) {
      out.writeUInt16BE(height & 0xffff, off + 5);
      out.writeUInt16BE(width & 0xffff, off + 7);
      return out;
    }
    off += 2 + len;
  }
  throw new Error("no SOF marker");
}

function jpegMarkerOffset(jpeg: Buffer, wanted: number): number {
  let off = 2;
  while (off + 4 < jpeg.length) {
    const marker = jpeg[off + 1] ?? 0;
    if (marker === wanted) return off;
    off += 2 + jpeg.readUInt16BE(off + 2);
  }
  throw new Error(`no marker ${wanted.toString(16)}`);
}

/** A minimal zip archive (one stored file), as PKWARE's APPNOTE 4.3 lays it out. */
function zipOf(name: string, content: Buffer): Buffer {
  const n = Buffer.from(name, "latin1");
  const crc = crc32(content);
  const local = Buffer.alloc(30);
  local.writeUInt32LE(0x04034b50, 0);
  local.writeUInt16LE(20, 4);
  local.writeUInt32LE(crc, 14);
  local.writeUInt32LE(content.length, 18);
  local.writeUInt32LE(content.length, 22);
  local.writeUInt16LE(n.length, 26);
  const central = Buffer.alloc(46);
  central.writeUInt32LE(0x02014b50, 0);
  central.writeUInt16LE(20, 4);
  central.writeUInt16LE(20, 6);
  central.writeUInt32LE(crc, 16);
  central.writeUInt32LE(content.length, 20);
  central.writeUInt32LE(content.length, 24);
  central.writeUInt16LE(n.length, 28);
  const localPart = Buffer.concat([local, n, content]);
  const centralPart = Buffer.concat([central, n]);
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0);
  end.writeUInt16LE(1, 8);
  end.writeUInt16LE(1, 10);
  end.writeUInt32LE(centralPart.length, 12);
  end.writeUInt32LE(localPart.length, 16);
  return Buffer.concat([localPart, centralPart, end]);
}

// ---------------------------------------------------------------------------------------------------

const T = {
  metaLength: tagOf(0x0002, 0x0000),
  transferSyntax: tagOf(0x0002, 0x0010),
  sopClass: tagOf(0x0008, 0x0016),
  samples: tagOf(0x0028, 0x0002),
  photometric: tagOf(0x0028, 0x0004),
  rows: tagOf(0x0028, 0x0010),
  columns: tagOf(0x0028, 0x0011),
  bitsAllocated: tagOf(0x0028, 0x0100),
  bitsStored: tagOf(0x0028, 0x0101),
  highBit: tagOf(0x0028, 0x0102),
  pixelRepresentation: tagOf(0x0028, 0x0103),
  voiLutSequence: tagOf(0x0028, 0x3010),
  patientName: tagOf(0x0010, 0x0010),
  pixelData: tagOf(0x7fe0, 0x0010),
} as const;

export interface CorpusSources {
  /** The valid films the corpus is made from (each must be accepted by the upload route). */
  explicit: Buffer;
  implicit: Buffer;
  deflated: Buffer;
  jpegDicom: Buffer;
  png: Buffer;
  jpeg: Buffer;
}

/** Writes the valid source films with dcmtk and sharp into `dir`. */
export async function makeSources(dir: string): Promise<CorpusSources> {
  const rows = 32;
  const columns = 24;
  const spec = { rows, columns, pixels: patternPixels(rows, columns, 12), attributes: { "(0028,0030)": "DS [0.2\\0.2]" } };
  const explicit = readFileSync(writeDicom(dir, "source-explicit", spec));
  const implicit = readFileSync(writeDicom(dir, "source-implicit", { ...spec, syntax: "implicit" }));
  const deflated = readFileSync(writeDicom(dir, "source-deflated", { ...spec, syntax: "deflated" }));
  const grey = new Uint8Array(rows * columns).map((_, i) => (i * 37) % 256);
  const jpegDicom = readFileSync(await writeJpegBaselineDicom(dir, "source-jpeg", { data: grey, width: columns, height: rows }));
  const png = await sharp(Buffer.from(grey), { raw: { width: columns, height: rows, channels: 1 } }).png().toBuffer();
  const jpeg = await sharp(Buffer.from(grey), { raw: { width: columns, height: rows, channels: 1 } }).jpeg({ quality: 90 }).toBuffer();
  return { explicit, implicit, deflated, jpegDicom, png, jpeg };
}

/** The corpus: at least 200 entries, every one of which a film reader must refuse. */
export function hostileCorpus(src: CorpusSources): HostileFile[] {
  const out: HostileFile[] = [];
  const add = (name: string, why: string, make: () => Buffer | Promise<Buffer>, filename = `${name}.dcm`, contentType = "application/octet-stream") => {
    if (out.some((f) => f.name === name)) throw new Error(`duplicate corpus name ${name}`);
    out.push({ name, why, filename, contentType, make });
  };
  const base = parseExplicit(src.explicit);
  const pixel = base.elements.find((e) => e.group === 0x7fe0 && e.element === 0x0010);
  if (!pixel) throw new Error("source film has no Pixel Data");

  // 1. Truncated at every element boundary of the explicit VR film: at the element's start, inside its
  //    header, where its value starts and half-way through its value; and inside the preamble.
  const cuts = new Map<number, string>([
    [1, "one byte of preamble"],
    [64, "half the preamble"],
    [128, "preamble without DICM"],
    [130, "half of DICM"],
    [132, "DICM and nothing else"],
  ]);
  for (const el of base.elements) {
    const t = tagText(el);
    cuts.set(el.offset, `before ${t}`);
    cuts.set(el.offset + 2, `inside the tag of ${t}`);
    cuts.set(el.offset + 5, `inside the VR of ${t}`);
    cuts.set(el.valueOffset, `after the header of ${t}`);
    if (el.value.length > 1) cuts.set(el.valueOffset + Math.floor(el.value.length / 2), `half-way through the value of ${t}`);
  }
  for (const frac of [0.01, 0.25, 0.75, 0.99]) cuts.set(pixel.valueOffset + Math.max(1, Math.floor(pixel.value.length * frac)), `${Math.round(frac * 100)}% into Pixel Data`);
  cuts.set(src.explicit.length - 1, "one byte short");
  for (const [at, what] of [...cuts].sort((a, b) => a[0] - b[0])) {
    if (at <= 0 || at >= src.explicit.length) continue;
    add(`trunc-explicit-${at}`, `explicit VR film truncated ${what} (byte ${at} of ${src.explicit.length})`, () => src.explicit.subarray(0, at));
  }
  // The same for the other encodings, at a spread of points.
  for (const [label, file] of [["implicit", src.implicit], ["deflated", src.deflated], ["jpeg", src.jpegDicom]] as const) {
    for (const frac of [0.05, 0.2, 0.4, 0.6, 0.8, 0.9, 0.95, 0.97]) {
      const at = Math.floor(file.length * frac);
      add(`trunc-${label}-${at}`, `${label} film truncated at byte ${at} of ${file.length}`, () => file.subarray(0, at));
    }
  }

  // 2. Lying element lengths (the bytes stay, the length field lies).
  const lieTargets: [number, string][] = [
    [T.transferSyntax, "Transfer Syntax UID"],
    [T.sopClass, "SOP Class UID"],
    [T.samples, "Samples per Pixel"],
    [T.photometric, "Photometric Interpretation"],
    [T.rows, "Rows"],
    [T.columns, "Columns"],
    [T.bitsAllocated, "Bits Allocated"],
    [T.pixelData, "Pixel Data"],
  ];
  for (const [tag, name] of lieTargets) {
    const el = base.elements.find((e) => tagOf(e.group, e.element) === tag);
    if (!el) continue;
    const long = LONG_VRS.has(el.vr);
    const lies: [string, number][] = [
      ["max", long ? 0xfffffffe : 0xfffe],
      ["plus-2", el.value.length + 2],
      ["odd", el.value.length + 1],
      ["beyond-file", long ? src.explicit.length * 4 : Math.min(0xfffe, src.explicit.length)],
    ];
    if (el.value.length >= 2) lies.push(["minus-2", el.value.length - 2]);
    if (tag === T.pixelData) lies.push(["half", el.value.length / 2], ["zero-header-data-follows", 0], ["undefined-native", UNDEFINED]);
    for (const [lieName, len] of lies) {
      const why = lieName === "undefined-native" ? "given an undefined length in a native film" : `length field says ${len}, the value has ${el.value.length} bytes`;
      add(`lie-${name.replace(/\W+/g, "-").toLowerCase()}-${lieName}`, `${name} ${why}`, () => rebuild(base, { lengths: new Map([[tag, len]]) }));
    }
  }

  // 3. Absurd or inconsistent image attributes.
  const usValue = (tag: number, v: number, why: string, name: string) => add(name, why, () => rebuild(base, { values: new Map([[tag, us(v)]]) }));
  for (const v of [0, 1, 64, 65535]) usValue(T.rows, v, `Rows ${v} over pixel data of 32 rows`, `rows-${v}`);
  for (const v of [0, 1, 48, 65535]) usValue(T.columns, v, `Columns ${v} over pixel data of 24 columns`, `columns-${v}`);
  add("rows-cols-65535", "65535 x 65535 pixels declared (4.3 billion), 1.5 kB of pixel data", () => rebuild(base, { values: new Map([[T.rows, us(65535)], [T.columns, us(65535)]]) }));
  add("rows-cols-over-side", "40000 x 40000 pixels declared: beyond any detector", () => rebuild(base, { values: new Map([[T.rows, us(40000)], [T.columns, us(40000)]]) }));
  add("rows-cols-over-count", "10001 x 10001 pixels declared: each side plausible, the count is not (100 million)", () => rebuild(base, { values: new Map([[T.rows, us(10001)], [T.columns, us(10001)]]) }));
  for (const v of [0, 1, 7, 12, 24, 32, 64, 65535]) usValue(T.bitsAllocated, v, `Bits Allocated ${v}`, `bits-allocated-${v}`);
  for (const v of [0, 17, 65535]) usValue(T.bitsStored, v, `Bits Stored ${v} with Bits Allocated 16`, `bits-stored-${v}`);
  for (const v of [16, 65535]) usValue(T.highBit, v, `High Bit ${v} with Bits Allocated 16`, `high-bit-${v}`);
  usValue(T.pixelRepresentation, 2, "Pixel Representation 2 (only 0 or 1 exist)", "pixel-representation-2");
  for (const v of [0, 3, 65535]) usValue(T.samples, v, `Samples per Pixel ${v} with MONOCHROME2 and one sample of pixel data`, `samples-${v}`);
  for (const [label, pi] of [["empty", ""], ["palette", "PALETTE COLOR"], ["rgb", "RGB"], ["made-up", "XYZ"], ["garbage", "\u0001\u0002\u00ff".repeat(20)]] as const) {
    add(`photometric-${label}`, `Photometric Interpretation "${label}" for one-sample grey pixel data`, () => rebuild(base, { values: new Map([[T.photometric, text(pi)]]) }));
  }
  for (const [label, ts] of [
    ["empty", ""],
    ["unknown", "1.2.3.4.5.6"],
    ["garbage", "not-a-uid-\u00ff\u00fe"],
    ["jpeg2000", "1.2.840.10008.1.2.4.90"],
    ["big-endian-lie", "1.2.840.10008.1.2.2"],
    ["jpeg-lie", "1.2.840.10008.1.2.4.50"],
    ["deflate-lie", "1.2.840.10008.1.2.1.99"],
  ] as const) {
    add(`transfer-syntax-${label}`, `Transfer Syntax UID "${ts}" for explicit little endian bytes`, () => rebuild(base, { values: new Map([[T.transferSyntax, uid(ts)]]) }));
  }
  add("pixel-data-vr-sq", "Pixel Data given the VR SQ", () => rebuild(base, { vrs: new Map([[T.pixelData, "SQ"]]) }));
  for (const [label, tag] of [["rows", T.rows], ["columns", T.columns], ["photometric", T.photometric], ["bits-allocated", T.bitsAllocated], ["pixel-data", T.pixelData], ["transfer-syntax", T.transferSyntax]] as const) {
    add(`missing-${label}`, `the film has no ${label.replace("-", " ")} element`, () => rebuild(base, { drop: new Set([tag]) }));
  }
  add("missing-meta", "no file meta information group at all", () => rebuild(base, { drop: new Set(base.elements.filter((e) => e.group === 2).map((e) => tagOf(e.group, e.element))) }));
  add("pixel-data-empty", "0-byte Pixel Data", () => rebuild(base, { values: new Map([[T.pixelData, Buffer.alloc(0)]]) }));
  add("pixel-data-2-bytes", "2-byte Pixel Data for 32 x 24 pixels", () => rebuild(base, { values: new Map([[T.pixelData, pixel.value.subarray(0, 2)]]) }));
  add("pixel-data-half", "Pixel Data holds half the pixels Rows x Columns needs", () => rebuild(base, { values: new Map([[T.pixelData, pixel.value.subarray(0, pixel.value.length / 2)]]) }));

  // 4. Huge attribute values, in films that are wrong anyway (so the refusal is certain) - the reader
  //    must get past them without running out of memory or time.
  const noPixels = new Set<number>([T.pixelData]);
  add("huge-transfer-syntax", "a 64 kB Transfer Syntax UID", () => rebuild(base, { values: new Map([[T.transferSyntax, uid("1.2.".repeat(16_383))]]) }));
  add("huge-photometric", "a 64 kB Photometric Interpretation", () => rebuild(base, { values: new Map([[T.photometric, text("MONOCHROME2".repeat(5957))]]) }));
  add("huge-bits-allocated-vm", "Bits Allocated holding 32,767 values, the first of them 64", () => rebuild(base, { values: new Map([[T.bitsAllocated, us(64, ...new Array<number>(32_766).fill(16))]]) }));
  add("huge-patient-name-no-pixels", "a 64 kB Patient Name and no Pixel Data", () => rebuild(base, { values: new Map([[T.patientName, text("Quill^".repeat(10_922))]]), drop: noPixels }));
  add("huge-window-values-no-pixels", "Window Center with 16,000 values and no Pixel Data", () =>
    rebuild(base, { insert: [{ tag: tagOf(0x0028, 0x1050), bytes: encodeElement(0x0028, 0x1050, "DS", text(new Array(16_000).fill("2048").join("\\").slice(0, 65_534))) }], drop: noPixels }),
  );
  add("huge-private-ut-no-pixels", "a 40 MB text element and no Pixel Data", () =>
    rebuild(base, { insert: [{ tag: tagOf(0x0009, 0x1010), bytes: encodeElement(0x0009, 0x1010, "UT", Buffer.alloc(40 * 1024 * 1024, 0x41)) }], drop: noPixels }),
  );
  add("huge-declared-length-element", "a text element whose length field says 4 GB", () =>
    Buffer.concat([rebuild(base, { drop: noPixels }), encodeElement(0x0009, 0x1012, "UT", Buffer.from("short"), { lengthOverride: 0xfffffff0 })]),
  );

  // 5. Sequences: deep nesting, never closed, items that lie.
  const sqTag = tagOf(0x0040, 0x0275); // Request Attributes Sequence
  const deep = (depth: number, closed: boolean) => {
    const open = Buffer.concat([encodeElement(0x0040, 0x0275, "SQ", Buffer.alloc(0), { lengthOverride: UNDEFINED }), itemHeader(UNDEFINED)]);
    const parts: Buffer[] = [];
    for (let i = 0; i < depth; i += 1) parts.push(open);
    if (closed) for (let i = 0; i < depth; i += 1) parts.push(itemDelimiter(), sequenceDelimiter());
    return Buffer.concat(parts);
  };
  add("deep-sequence-unclosed-20000", "20,000 nested sequences of undefined length, never closed, swallowing the pixel data", () =>
    rebuild(base, { insert: [{ tag: sqTag, bytes: deep(20_000, false) }] }),
  );
  add("deep-sequence-100000-no-pixels", "100,000 nested sequences, closed, and no Pixel Data", () => rebuild(base, { insert: [{ tag: sqTag, bytes: deep(100_000, true) }], drop: noPixels }));
  add("voi-lut-sequence-deep", "a VOI LUT Sequence nested 5,000 deep and never closed", () => {
    const open = Buffer.concat([encodeElement(0x0028, 0x3010, "SQ", Buffer.alloc(0), { lengthOverride: UNDEFINED }), itemHeader(UNDEFINED)]);
    return rebuild(base, { insert: [{ tag: T.voiLutSequence, bytes: Buffer.concat(new Array<Buffer>(5_000).fill(open)) }] });
  });
  add("sequence-item-longer-than-sequence", "a sequence of 16 bytes whose item claims 1 MB", () =>
    rebuild(base, { insert: [{ tag: sqTag, bytes: encodeElement(0x0040, 0x0275, "SQ", Buffer.concat([itemHeader(1 << 20), Buffer.alloc(8)])) }] }),
  );
  add("sequence-bad-item-tag", "a sequence whose item does not start with the item tag", () =>
    rebuild(base, { insert: [{ tag: sqTag, bytes: encodeElement(0x0040, 0x0275, "SQ", Buffer.concat([Buffer.from([0x08, 0x00, 0x16, 0x00, 8, 0, 0, 0]), Buffer.alloc(8)])) }] }),
  );

  // 6. Encapsulated (JPEG baseline) pixel data that lies.
  const jb = parseExplicit(src.jpegDicom);
  const jpixel = jb.elements.find((e) => e.group === 0x7fe0 && e.element === 0x0010);
  if (jpixel?.undefinedLength) {
    const items = jpixel.value; // basic offset table item, then fragments
    const bot = items.readUInt32LE(4);
    const fragStart = 8 + bot;
    const fragLen = items.readUInt32LE(fragStart + 4);
    const jpegStream = Buffer.from(items.subarray(fragStart + 8, fragStart + 8 + fragLen));
    const withItems = (newItems: Buffer) => rebuild(jb, { values: new Map([[T.pixelData, newItems]]) });
    const replaceFragment = (frag: Buffer) => withItems(Buffer.concat([items.subarray(0, fragStart), itemHeader(frag.length + (frag.length % 2)), padEven(frag, 0)]));
    add("jpeg-dicom-fragment-length-lie", "a JPEG fragment whose item length runs past the file", () => {
      const copy = Buffer.from(items);
      copy.writeUInt32LE(0x7ffffff0, fragStart + 4);
      return withItems(copy);
    });
    add("jpeg-dicom-no-fragments", "encapsulated pixel data with an offset table and no fragment", () => withItems(items.subarray(0, fragStart)));
    add("jpeg-dicom-frame-size-lie", "a JPEG frame of 60000 x 60000 inside a 32 x 24 film", () => replaceFragment(jpegWithFrameSize(jpegStream, 60_000, 60_000)));
    add("jpeg-dicom-frame-mismatch", "a JPEG frame of 48 x 32 where Rows x Columns says 32 x 24", () => replaceFragment(jpegWithFrameSize(jpegStream, 48, 32)));
    add("jpeg-dicom-fragment-garbage", "a fragment of random bytes instead of a JPEG stream", () => replaceFragment(Buffer.from(Array.from({ length: 400 }, (_, i) => (i * 97 + 13) % 256))));
    add("jpeg-dicom-fragment-truncated", "a JPEG stream cut before its scan", () => replaceFragment(jpegStream.subarray(0, jpegMarkerOffset(jpegStream, 0xda))));
  }

  // 7. Deflated data sets: a bomb and garbage.
  const deflatedMeta = rebuild({ preamble: base.preamble, elements: base.elements.filter((e) => e.group === 2) }, { values: new Map([[T.transferSyntax, uid("1.2.840.10008.1.2.1.99")]]) });
  add("deflate-bomb", "a deflated data set that inflates to 600 MB of zeros", async () => Buffer.concat([deflatedMeta, await deflateZeros(600 * 1024 * 1024)]));
  add("deflate-garbage", "a deflated transfer syntax followed by bytes that are not deflate data", () => Buffer.concat([deflatedMeta, Buffer.from(Array.from({ length: 2048 }, (_, i) => (i * 131 + 7) % 256))]));
  add("deflate-empty-dataset", "a deflated data set that inflates to nothing", () => Buffer.concat([deflatedMeta, deflateRawSync(Buffer.alloc(0))]));

  // 8. Other files under a film's name or type.
  const html = Buffer.from('<!doctype html><html><body><script>fetch("/api/patients").then(r=>r.text()).then(alert)</script></body></html>');
  add("html-named-dcm", "an HTML page with a script, named .dcm", () => html, "film.dcm", "application/dicom");
  add("html-as-html", "an HTML page sent as text/html", () => html, "film.html", "text/html");
  add("html-named-png", "an HTML page named .png, typed image/png", () => html, "film.png", "image/png");
  add("zip-named-dcm", "a zip archive holding a DICOM film, named .dcm", () => zipOf("film.dcm", src.explicit), "study.dcm", "application/dicom");
  add("zip-named-zip", "a zip archive sent as application/zip", () => zipOf("film.dcm", src.explicit), "study.zip", "application/zip");
  add("pdf-named-dcm", "a PDF named .dcm", () => Buffer.from("%PDF-1.4\n1 0 obj<<>>endobj\ntrailer<<>>\n%%EOF\n"), "report.dcm");
  add("elf-named-dcm", "an executable's header named .dcm", () => Buffer.concat([Buffer.from([0x7f, 0x45, 0x4c, 0x46, 2, 1, 1, 0]), Buffer.alloc(120)]), "tool.dcm");
  add("json-typed-json", "a JSON document sent to the film route", () => Buffer.from('{"rows":32,"columns":24}'), "film.json", "application/json");
  add("text-named-dcm", "plain text named .dcm", () => Buffer.from("This is not a film.\n".repeat(20)), "notes.dcm", "text/plain");
  add("svg-named-png", "an SVG with a script and an external image, named .png", () =>
    Buffer.from('<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10"><script>alert(1)</script><image href="http://127.0.0.1:9/x.png" width="10" height="10"/></svg>'), "film.png", "image/png");
  add("gif-named-png", "a GIF named .png", () => sharp(src.png).gif().toBuffer(), "film.png", "image/png");
  add("webp-named-jpg", "a WebP named .jpg", () => sharp(src.png).webp().toBuffer(), "film.jpg", "image/jpeg");
  add("tiff-named-png", "a TIFF named .png", () => sharp(src.png).tiff().toBuffer(), "film.png", "image/png");
  add("bmp-named-png", "a BMP header named .png", () => Buffer.concat([Buffer.from("BM", "latin1"), Buffer.alloc(60)]), "film.png", "image/png");
  add("dicm-then-html", "a DICOM preamble and DICM prefix followed by an HTML page", () => Buffer.concat([Buffer.alloc(128), Buffer.from("DICM", "latin1"), html]));
  add("dicm-then-nothing", "a DICOM preamble and DICM prefix only", () => Buffer.concat([Buffer.alloc(128), Buffer.from("DICM", "latin1")]));
  add("dicomdir-no-image", "a media directory record (no image at all)", () =>
    rebuild(base, { values: new Map([[T.sopClass, uid("1.2.840.10008.1.3.10")]]), drop: new Set([T.pixelData, T.rows, T.columns]) }),
  );
  add("multipart-form", "a browser form post instead of the file itself", () => Buffer.from(`--x\r\nContent-Disposition: form-data; name="f"; filename="a.dcm"\r\n\r\n${"A".repeat(64)}\r\n--x--\r\n`), "a.dcm", "multipart/form-data; boundary=x");

  // 9. Empty files.
  for (const [label, name, type] of [
    ["dicom", "empty.dcm", "application/dicom"],
    ["octet", "empty.dcm", "application/octet-stream"],
    ["png", "empty.png", "image/png"],
    ["jpeg", "empty.jpg", "image/jpeg"],
    ["no-name", "", "application/octet-stream"],
  ] as const) {
    add(`empty-${label}`, `an empty file (${type})`, () => Buffer.alloc(0), name, type);
  }

  // 10. PNG and JPEG: bombs, lies, truncation, broken chunks.
  const png = (name: string, why: string, make: () => Buffer | Promise<Buffer>) => add(name, why, make, `${name}.png`, "image/png");
  const jpg = (name: string, why: string, make: () => Buffer | Promise<Buffer>) => add(name, why, make, `${name}.jpg`, "image/jpeg");
  const idat = Buffer.from(deflateSync(Buffer.alloc(2 * 2)));
  png("png-bomb-12000", "a 210 kB PNG that decodes to 144 million pixels (12000 x 12000)", () => zeroPng(12_000, 12_000));
  png("png-bomb-wide", "a PNG 25000 pixels wide (more than any film side)", () => zeroPng(25_000, 8));
  png("png-header-lie-huge", "a PNG header declaring 100000 x 100000 over a 2 x 2 image", () =>
    Buffer.concat([PNG_SIGNATURE, pngChunk("IHDR", ihdr(100_000, 100_000)), pngChunk("IDAT", idat), pngChunk("IEND", Buffer.alloc(0))]));
  png("png-header-lie-max", "a PNG header declaring 2^31-1 x 2^31-1", () =>
    Buffer.concat([PNG_SIGNATURE, pngChunk("IHDR", ihdr(0x7fffffff, 0x7fffffff)), pngChunk("IDAT", idat), pngChunk("IEND", Buffer.alloc(0))]));
  png("png-zero-size", "a PNG 0 x 0", () => Buffer.concat([PNG_SIGNATURE, pngChunk("IHDR", ihdr(0, 0)), pngChunk("IDAT", idat), pngChunk("IEND", Buffer.alloc(0))]));
  png("png-zero-height", "a PNG 2 x 0", () => Buffer.concat([PNG_SIGNATURE, pngChunk("IHDR", ihdr(2, 0)), pngChunk("IDAT", idat), pngChunk("IEND", Buffer.alloc(0))]));
  png("png-bad-bit-depth", "a PNG with bit depth 3", () => Buffer.concat([PNG_SIGNATURE, pngChunk("IHDR", ihdr(2, 2, 3)), pngChunk("IDAT", idat), pngChunk("IEND", Buffer.alloc(0))]));
  png("png-bad-colour-type", "a PNG with colour type 5", () => Buffer.concat([PNG_SIGNATURE, pngChunk("IHDR", ihdr(2, 2, 8, 5)), pngChunk("IDAT", idat), pngChunk("IEND", Buffer.alloc(0))]));
  png("png-bad-ihdr-crc", "a PNG whose IHDR checksum is wrong", () => Buffer.concat([PNG_SIGNATURE, pngChunk("IHDR", ihdr(2, 2), true), pngChunk("IDAT", idat), pngChunk("IEND", Buffer.alloc(0))]));
  png("png-idat-not-zlib", "a PNG whose image data is not a zlib stream", () =>
    Buffer.concat([PNG_SIGNATURE, pngChunk("IHDR", ihdr(16, 16)), pngChunk("IDAT", Buffer.from(Array.from({ length: 300 }, (_, i) => (i * 53 + 1) % 256))), pngChunk("IEND", Buffer.alloc(0))]));
  png("png-no-idat", "a PNG with a header and no image data", () => Buffer.concat([PNG_SIGNATURE, pngChunk("IHDR", ihdr(16, 16)), pngChunk("IEND", Buffer.alloc(0))]));
  png("png-signature-only", "the 8-byte PNG signature and nothing else", () => PNG_SIGNATURE);
  const goodPng = src.png;
  const pngIdat = goodPng.indexOf(Buffer.from("IDAT", "latin1")) - 4;
  for (const [label, at] of [["mid-ihdr", 20], ["after-ihdr", 33], ["start-idat", pngIdat + 10], ["mid-idat", pngIdat + Math.floor((goodPng.length - pngIdat) / 2)], ["end-idat", goodPng.length - 16]] as const) {
    png(`png-truncated-${label}`, `a PNG cut ${label.replace("-", " ")} (byte ${at} of ${goodPng.length})`, () => goodPng.subarray(0, at));
  }
  const goodJpeg = src.jpeg;
  jpg("jpeg-frame-65500", "a JPEG whose frame header says 65500 x 65500 (4.3 billion pixels)", () => jpegWithFrameSize(goodJpeg, 65_500, 65_500));
  jpg("jpeg-frame-wide", "a JPEG whose frame header says 30000 x 8", () => jpegWithFrameSize(goodJpeg, 30_000, 8));
  jpg("jpeg-frame-zero", "a JPEG whose frame header says 0 x 0", () => jpegWithFrameSize(goodJpeg, 0, 0));
  // Not here: a JPEG whose frame header is larger than its scan but which ends with a proper EOI
  // marker. libjpeg only warns ("premature end of data segment") and sharp with failOn 'error' fills the
  // rest grey, so lib/films/preview.ts accepts it; refusing it needs failOn 'warning' (a choice for the
  // film pipeline, which would also refuse JPEGs with harmless warnings).
  jpg("jpeg-soi-only", "the JPEG start marker alone", () => goodJpeg.subarray(0, 3));
  const sos = jpegMarkerOffset(goodJpeg, 0xda);
  for (const [label, at] of [["before-scan", sos], ["start-scan", sos + 20], ["mid-scan", sos + Math.floor((goodJpeg.length - sos) / 2)]] as const) {
    jpg(`jpeg-truncated-${label}`, `a JPEG cut ${label.replace("-", " ")} (byte ${at} of ${goodJpeg.length})`, () => goodJpeg.subarray(0, at));
  }

  return out;
}

/** A raw deflate stream of `bytes` zeros, made in 1 MB steps. */
async function deflateZeros(bytes: number): Promise<Buffer> {
  const deflater = createDeflateRaw({ level: 9 });
  const chunks: Buffer[] = [];
  deflater.on("data", (c: Buffer) => chunks.push(c));
  const done = new Promise<void>((resolve, reject) => {
    deflater.on("end", resolve);
    deflater.on("error", reject);
  });
  const mb = Buffer.alloc(1024 * 1024);
  for (let n = 0; n < bytes; n += mb.length) {
    if (!deflater.write(mb)) await new Promise((r) => deflater.once("drain", r));
  }
  deflater.end();
  await done;
  return Buffer.concat(chunks);
}
