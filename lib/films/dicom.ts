/**
 * Reading a DICOM film: the attributes Rimwatch needs, the calibration input for measure/, and the
 * pixels of the first frame, decoded to stored values.
 *
 * Identity is deliberately not read: Rimwatch takes the patient from its own records, so no name, ID,
 * birth date, sex, accession number, institution or operator ever leaves this module. The result
 * carries only the allow-listed attributes of `DicomMeta`.
 *
 * Sections named beside the rules are from the DICOM standard: PS3.5 (data structures and encoding,
 * transfer syntaxes), PS3.3 (information object definitions), PS3.10 (file format).
 */
import { inflateRawSync } from 'node:zlib';
import * as dicomParserModule from 'dicom-parser';
import type { DataSet, Element } from 'dicom-parser';
import { Decoder as JpegLosslessDecoder } from 'jpeg-lossless-decoder-js';
import sharp, { type OutputInfo } from 'sharp';
import { BadFilmError, describeThrown, FilmError, UnsupportedFilmError } from './errors';
import { readJpegFrameHeader } from './jpeg';
import { pixelEncodingOf, transferSyntaxName, type PixelEncoding } from './transfer-syntax';

type DicomParserApi = typeof dicomParserModule;

/**
 * dicom-parser is a UMD bundle: bundlers and CommonJS see its named exports, Node's own ESM loader only
 * a `default` holding them. Take whichever carries the functions, so the reader works under all three.
 */
function loadDicomParser(ns: unknown): DicomParserApi {
  for (const candidate of [ns, (ns as { default?: unknown }).default]) {
    if (candidate && typeof (candidate as { parseDicom?: unknown }).parseDicom === 'function') return candidate as DicomParserApi;
  }
  throw new Error('dicom-parser did not load');
}
const { createJPEGBasicOffsetTable, parseDicom, readEncapsulatedImageFrame, readEncapsulatedPixelDataFromFragments, readPart10Header } =
  loadDicomParser(dicomParserModule);

/** Guards against absurd or hostile headers, checked before any pixel buffer is allocated. */
export const filmLimits = {
  /** Largest Rows or Columns accepted. A 43 x 43 cm detector at 0.1 mm is about 4,300 pixels a side. */
  maxSide: 20_000,
  /** Largest Rows x Columns accepted (also sharp's limitInputPixels). */
  maxPixels: 100_000_000,
  /** Largest inflated data set for Deflated Explicit VR Little Endian (defuses deflate bombs). */
  maxInflatedBytes: 512 * 1024 * 1024,
} as const;

/**
 * The spacing attributes in the shape `calibrationFromDicom` (measure/) takes. Values are [row, column]
 * as encoded: the first value of Pixel Spacing is the spacing between ROWS (vertical), the second
 * between COLUMNS (PS3.3 10.7.1.3). Rimwatch never swaps them.
 */
export interface FilmSpacingAttrs {
  /** Pixel Spacing (0028,0030), mm. */
  pixelSpacingMm: [number, number] | null;
  /** Imager Pixel Spacing (0018,1164), mm. */
  imagerPixelSpacingMm: [number, number] | null;
  /** Nominal Scanned Pixel Spacing (0018,2010), mm. */
  nominalScannedPixelSpacingMm: [number, number] | null;
  /** Estimated Radiographic Magnification Factor (0018,1114). */
  estimatedRadiographicMagnificationFactor: number | null;
  /** Distance Source to Detector (0018,1110), mm. */
  distanceSourceToDetectorMm: number | null;
  /** Distance Source to Patient (0018,1111), mm. */
  distanceSourceToPatientMm: number | null;
  /** Pixel Spacing Calibration Type (0028,0A02), e.g. GEOMETRY or FIDUCIAL. */
  pixelSpacingCalibrationType: string | null;
}

/** The attributes Rimwatch keeps from a DICOM film. Nothing that identifies the patient. */
export interface DicomMeta {
  transferSyntaxUid: string;
  transferSyntaxName: string;
  sopClassUid: string | null;
  studyInstanceUid: string | null;
  seriesInstanceUid: string | null;
  sopInstanceUid: string | null;
  modality: string | null;
  bodyPartExamined: string | null;
  viewPosition: string | null;
  patientPosition: string | null;
  /** Raw DA / TM / DT strings as encoded (PS3.5 6.2). */
  studyDate: string | null;
  studyTime: string | null;
  acquisitionDate: string | null;
  acquisitionTime: string | null;
  acquisitionDateTime: string | null;
  contentDate: string | null;
  contentTime: string | null;
  timezoneOffsetFromUtc: string | null;
  rows: number;
  columns: number;
  numberOfFrames: number;
  samplesPerPixel: number;
  photometricInterpretation: string;
  planarConfiguration: number | null;
  bitsAllocated: number;
  bitsStored: number;
  highBit: number;
  pixelRepresentation: number;
  /** Rescale Slope / Intercept (0028,1053 / 0028,1052), null when absent (identity is then applied). */
  rescaleSlope: number | null;
  rescaleIntercept: number | null;
  /** First value of Window Center / Window Width (0028,1050 / 0028,1051). */
  windowCenter: number | null;
  windowWidth: number | null;
  /** VOI LUT Function (0028,1056): LINEAR (default), LINEAR_EXACT or SIGMOID. */
  voiLutFunction: string | null;
  /** Whether a usable VOI LUT Sequence (0028,3010) item was read (the table itself is `DicomHeader.voiLut`). */
  hasVoiLut: boolean;
  pixelSpacingMm: [number, number] | null;
  imagerPixelSpacingMm: [number, number] | null;
  nominalScannedPixelSpacingMm: [number, number] | null;
  estimatedRadiographicMagnificationFactor: number | null;
  distanceSourceToDetectorMm: number | null;
  distanceSourceToPatientMm: number | null;
  pixelSpacingCalibrationType: string | null;
}

/** One VOI LUT (PS3.3 C.11.2.1.1): entry i applies to input value firstMapped + i. */
export interface VoiLut {
  firstMapped: number;
  /** Bits per entry, from the third value of LUT Descriptor (8..16). */
  bits: number;
  data: Uint16Array;
  explanation: string | null;
}

export type Projection = 'PA' | 'AP' | 'LL' | 'RL' | 'RLD' | 'LLD' | 'RLO' | 'LLO';

export interface DicomHeader {
  meta: DicomMeta;
  spacingAttrs: FilmSpacingAttrs;
  voiLut: VoiLut | null;
  /** ISO 8601 from Acquisition, else Content, else Study date/time; see `takenAtFromMeta`. */
  takenAt: string | null;
  projection: Projection | null;
  /** Patient Position (0018,5100) as encoded (HFS, FFS, ...), or null. */
  position: string | null;
  /** Plain notes on attributes that were present but unusable and therefore ignored. */
  warnings: string[];
}

/**
 * Pixels of the first frame, as stored (before any modality or VOI transformation), row by row.
 * For native transfer syntaxes `data` may be a view on the bytes given to readDicom (not a copy).
 * For 16-bit data the array holds the whole 16-bit words; `storedValue` in pixels.ts extracts the
 * Bits Stored field and applies the Pixel Representation.
 */
export interface DecodedPixels {
  rows: number;
  columns: number;
  bitsAllocated: 8 | 16;
  bitsStored: number;
  highBit: number;
  pixelRepresentation: 0 | 1;
  photometric: 'MONOCHROME1' | 'MONOCHROME2';
  /** True when the film was colour (RGB / YBR) and was reduced to its luma. */
  fromColour: boolean;
  data: Uint8Array | Uint16Array;
}

export interface DicomFilm extends DicomHeader {
  pixels: DecodedPixels;
}

const DICM = [0x44, 0x49, 0x43, 0x4d];

/** True when the bytes carry the DICOM Part 10 preamble and "DICM" prefix (PS3.10 7.1). */
export function looksLikeDicom(bytes: Uint8Array): boolean {
  return bytes.length >= 132 && DICM.every((b, i) => bytes[128 + i] === b);
}

// Sequences Rimwatch reads: in implicit VR files their VR must be known to parse their items (PS3.5 7.5).
const SEQUENCE_TAGS = new Set(['x00283010', 'x00283000']);

interface Parsed {
  dataSet: DataSet;
  transferSyntaxUid: string;
  encoding: PixelEncoding;
}

function inflater(bytes: Uint8Array, position: number): Uint8Array {
  // PS3.5 A.5: everything after the file meta information is deflated (RFC 1951, no zlib header).
  let inflated: Buffer;
  try {
    inflated = inflateRawSync(bytes.subarray(position), { maxOutputLength: filmLimits.maxInflatedBytes });
  } catch (e) {
    throw new BadFilmError('The deflated DICOM data set could not be inflated (corrupt, or larger than Rimwatch accepts).', {
      cause: e,
    });
  }
  // dicom-parser parses the returned bytes from offset 0, so leave out the preamble and "DICM"
  // (PS3.10 7.1): the file meta information group followed by the inflated data set parse cleanly.
  const full = Buffer.allocUnsafe(position - 132 + inflated.length);
  full.set(bytes.subarray(132, position), 0);
  full.set(inflated, position - 132);
  return full;
}

function parse(bytes: Uint8Array): Parsed {
  if (!looksLikeDicom(bytes)) {
    throw new BadFilmError('This is not a DICOM file: the "DICM" prefix after the 128-byte preamble is missing (DICOM PS3.10 7.1).');
  }
  let transferSyntaxUid: string | undefined;
  try {
    // PS3.10 7.1: the file meta information is always explicit VR little endian.
    transferSyntaxUid = readPart10Header(bytes).string('x00020010')?.trim();
  } catch (e) {
    throw new BadFilmError('The DICOM file meta information is unreadable.', { cause: new Error(describeThrown(e)) });
  }
  if (!transferSyntaxUid) {
    throw new BadFilmError('The DICOM file meta information names no Transfer Syntax UID (0002,0010).');
  }
  const encoding = pixelEncodingOf(transferSyntaxUid);
  if (encoding === null) {
    throw new UnsupportedFilmError(
      `Transfer syntax ${transferSyntaxUid} (${transferSyntaxName(transferSyntaxUid)}) is not supported. ` +
        'Rimwatch reads uncompressed, deflated, JPEG baseline and JPEG lossless DICOM films; ask for an uncompressed export.',
      transferSyntaxUid,
    );
  }
  try {
    const dataSet = parseDicom(bytes, {
      inflater,
      vrCallback: (tag: string) => (SEQUENCE_TAGS.has(tag) ? 'SQ' : undefined),
    });
    if (transferSyntaxUid !== IMPLICIT_VR_LITTLE_ENDIAN) checkExplicitVrs(dataSet);
    return { dataSet, transferSyntaxUid, encoding };
  } catch (e) {
    if (e instanceof FilmError) throw e;
    const inner = e !== null && typeof e === 'object' && 'exception' in e ? e.exception : e;
    if (inner instanceof FilmError) throw inner;
    throw new BadFilmError('The DICOM data set is malformed or truncated.', { cause: new Error(describeThrown(e)) });
  }
}

const IMPLICIT_VR_LITTLE_ENDIAN = '1.2.840.10008.1.2';
// PS3.5 6.2: the value representations. In an explicit VR data set every element names one of them;
// anything else means the parser lost its place (a lying length), and what follows cannot be trusted.
const VALUE_REPRESENTATIONS = new Set(
  'AE AS AT CS DA DS DT FD FL IS LO LT OB OD OF OL OV OW PN SH SL SQ SS ST SV TM UC UI UL UN UR US UT UV'.split(' '),
);

function checkExplicitVrs(ds: DataSet): void {
  for (const [tag, el] of Object.entries(ds.elements)) {
    if (el.vr !== undefined && !VALUE_REPRESENTATIONS.has(el.vr)) {
      throw new BadFilmError(`The DICOM data set is corrupt near (${tag.slice(1, 5)},${tag.slice(5)}): an element has no valid value representation.`);
    }
  }
}

// ---------------------------------------------------------------------------------------------------
// Attribute readers. dicom-parser's accessors work for explicit and implicit VR alike.

function str(ds: DataSet, tag: string): string | null {
  const el = ds.elements[tag];
  if (!el || el.length === 0) return null;
  const v = ds.string(tag)?.trim();
  return v ? v : null;
}

function us(ds: DataSet, tag: string): number | null {
  const el = ds.elements[tag];
  if (!el || el.length < 2) return null;
  return ds.uint16(tag) ?? null;
}

/** A decimal string (DS, PS3.5 6.2) value; null when absent; a warning and null when unparsable. */
function ds1(ds: DataSet, tag: string, name: string, warnings: string[], index = 0): number | null {
  const el = ds.elements[tag];
  if (!el || el.length === 0) return null;
  // dicom-parser throws on an index past the last value: count first.
  if ((ds.numStringValues(tag) ?? 0) <= index) return null;
  const raw = ds.string(tag, index)?.trim();
  if (raw === undefined || raw === '') return null;
  const v = Number(raw);
  if (!Number.isFinite(v)) {
    warnings.push(`${name} ${tag.slice(1, 5)},${tag.slice(5)} ignored: "${raw.slice(0, 32)}" is not a number.`);
    return null;
  }
  return v;
}

/** A DS pair [row, column]; exactly two finite values or null with a warning (PS3.3 10.7.1.3). */
function dsPair(ds: DataSet, tag: string, name: string, warnings: string[]): [number, number] | null {
  const el = ds.elements[tag];
  if (!el || el.length === 0) return null;
  const count = ds.numStringValues(tag) ?? 0;
  const a = ds1(ds, tag, name, warnings, 0);
  const b = ds1(ds, tag, name, warnings, 1);
  if (count !== 2 || a === null || b === null) {
    warnings.push(`${name} (${tag.slice(1, 5)},${tag.slice(5)}) ignored: it must hold two numbers, row\\column.`);
    return null;
  }
  return [a, b];
}

function readVoiLut(ds: DataSet, pixelRepresentation: number, warnings: string[]): VoiLut | null {
  // PS3.3 C.11.2 (VOI LUT Module) and C.11.2.1.1 (LUT Descriptor, LUT Data).
  const seq = ds.elements.x00283010;
  if (!seq) return null;
  const item = seq.items?.[0]?.dataSet;
  if (!item) {
    warnings.push('VOI LUT Sequence (0028,3010) has no readable item; the window is used instead.');
    return null;
  }
  const desc = item.elements.x00283002;
  const data = item.elements.x00283006;
  if (!desc || desc.length < 6 || !data) {
    warnings.push('VOI LUT Sequence item lacks LUT Descriptor or LUT Data; the window is used instead.');
    return null;
  }
  const entriesRaw = item.uint16('x00283002', 0) ?? 0;
  const entries = entriesRaw === 0 ? 65536 : entriesRaw; // 0 means 2^16 entries
  // The first mapped value is signed when the pixel data are signed (C.11.2.1.1).
  const firstMapped = pixelRepresentation === 1 ? (item.int16('x00283002', 1) ?? 0) : (item.uint16('x00283002', 1) ?? 0);
  const bits = item.uint16('x00283002', 2) ?? 0;
  if (bits < 8 || bits > 16) {
    warnings.push(`VOI LUT ignored: LUT Descriptor gives ${bits} bits per entry (8 to 16 allowed).`);
    return null;
  }
  if (data.length < entries * 2 || data.dataOffset + entries * 2 > item.byteArray.length) {
    warnings.push('VOI LUT ignored: LUT Data is shorter than the LUT Descriptor announces.');
    return null;
  }
  const table = new Uint16Array(entries);
  for (let i = 0; i < entries; i += 1) table[i] = item.byteArrayParser.readUint16(item.byteArray, data.dataOffset + 2 * i);
  return { firstMapped, bits, data: table, explanation: str(item, 'x00283003') };
}

const PROJECTIONS: readonly Projection[] = ['PA', 'AP', 'LL', 'RL', 'RLD', 'LLD', 'RLO', 'LLO'];

/** View Position (0018,5101) defined terms (PS3.3 C.8.11.5 / C.8.1.1) -> projection, else null. */
export function projectionFromViewPosition(viewPosition: string | null): Projection | null {
  const v = viewPosition?.trim().toUpperCase() ?? '';
  return (PROJECTIONS as readonly string[]).includes(v) ? (v as Projection) : null;
}

function isoDate(da: string | null): string | null {
  // DA is YYYYMMDD (PS3.5 6.2); the retired YYYY.MM.DD form is accepted too.
  const m = /^(\d{4})\.?(\d{2})\.?(\d{2})$/.exec(da?.trim() ?? '');
  if (!m) return null;
  const [, y, mo, d] = m as unknown as [string, string, string, string];
  const month = Number(mo);
  const day = Number(d);
  if (month < 1 || month > 12 || day < 1 || day > 31) return null;
  return `${y}-${mo}-${d}`;
}

function isoTime(tm: string | null): string | null {
  // TM is HH[MM[SS[.F{1,6}]]] (PS3.5 6.2); the retired HH:MM:SS form is accepted too.
  const m = /^(\d{2})(?::?(\d{2})(?::?(\d{2})(?:\.(\d{1,6}))?)?)?$/.exec(tm?.trim() ?? '');
  if (!m) return null;
  const hh = m[1] ?? '00';
  const mm = m[2] ?? '00';
  const ss = m[3] ?? '00';
  if (Number(hh) > 23 || Number(mm) > 59 || Number(ss) > 60) return null;
  const frac = m[4] ? `.${m[4].padEnd(3, '0').slice(0, 3)}` : '';
  return `${hh}:${mm}:${ss}${frac}`;
}

function isoOffset(tz: string | null): string {
  // Timezone Offset From UTC (0008,0201) and the DT suffix: &ZZXX (PS3.5 6.2).
  const m = /^([+-])(\d{2})(\d{2})$/.exec(tz?.trim() ?? '');
  return m ? `${m[1]}${m[2]}:${m[3]}` : '';
}

function isoFromDt(dt: string | null, tz: string | null): string | null {
  // DT is YYYYMMDDHHMMSS.FFFFFF&ZZXX with trailing components optional (PS3.5 6.2).
  const m = /^(\d{8})(\d{2}(?:\d{2}(?:\d{2}(?:\.\d{1,6})?)?)?)?([+-]\d{4})?$/.exec(dt?.trim() ?? '');
  if (!m) return null;
  const date = isoDate(m[1] ?? null);
  if (!date) return null;
  if (!m[2]) return date;
  const time = isoTime(m[2]);
  if (!time) return date;
  return `${date}T${time}${isoOffset(m[3] ?? tz)}`;
}

/**
 * When the film was taken, as ISO 8601: Acquisition DateTime, else Acquisition Date + Time, else
 * Content Date + Time, else Study Date + Time. "YYYY-MM-DD" when only a date is known;
 * "YYYY-MM-DDTHH:MM:SS[.mmm]" in the modality's local time, with "+HH:MM" only when the file gives
 * Timezone Offset From UTC (0008,0201). Null when none is readable.
 */
export function takenAtFromMeta(meta: DicomMeta): string | null {
  const tz = meta.timezoneOffsetFromUtc;
  const fromDt = isoFromDt(meta.acquisitionDateTime, tz);
  if (fromDt) return fromDt;
  const pairs: [string | null, string | null][] = [
    [meta.acquisitionDate, meta.acquisitionTime],
    [meta.contentDate, meta.contentTime],
    [meta.studyDate, meta.studyTime],
  ];
  for (const [da, tm] of pairs) {
    const date = isoDate(da);
    if (!date) continue;
    const time = isoTime(tm);
    return time ? `${date}T${time}${isoOffset(tz)}` : date;
  }
  return null;
}

function readHeader(parsed: Parsed): DicomHeader {
  const { dataSet: ds, transferSyntaxUid } = parsed;
  const warnings: string[] = [];

  // PS3.3 C.7.6.3 Image Pixel Module.
  const rows = us(ds, 'x00280010');
  const columns = us(ds, 'x00280011');
  const samplesPerPixel = us(ds, 'x00280002') ?? 1;
  const photometricInterpretation = str(ds, 'x00280004')?.toUpperCase() ?? null;
  const bitsAllocated = us(ds, 'x00280100');
  const bitsStored = us(ds, 'x00280101') ?? bitsAllocated;
  const highBit = us(ds, 'x00280102') ?? (bitsStored === null ? null : bitsStored - 1);
  const pixelRepresentation = us(ds, 'x00280103') ?? 0;
  if (rows === null || columns === null || rows === 0 || columns === 0) {
    throw new BadFilmError('The DICOM file has no image: Rows (0028,0010) or Columns (0028,0011) is missing or zero.');
  }
  if (rows > filmLimits.maxSide || columns > filmLimits.maxSide || rows * columns > filmLimits.maxPixels) {
    throw new BadFilmError(
      `The DICOM header declares ${columns} x ${rows} pixels, more than Rimwatch accepts ` +
        `(at most ${filmLimits.maxSide} a side and ${filmLimits.maxPixels / 1e6} million in all).`,
    );
  }
  if (photometricInterpretation === null) {
    throw new BadFilmError('Photometric Interpretation (0028,0004) is missing (DICOM PS3.3 C.7.6.3).');
  }
  if (bitsAllocated === null || bitsStored === null || highBit === null) {
    throw new BadFilmError('Bits Allocated (0028,0100) is missing (DICOM PS3.3 C.7.6.3).');
  }
  const frames = ds.elements.x00280008 ? ds.intString('x00280008') : 1;
  const numberOfFrames = frames !== undefined && Number.isInteger(frames) && frames >= 1 ? frames : 1;

  const voiLut = readVoiLut(ds, pixelRepresentation, warnings);

  // PS3.3 10.7 (Basic Pixel Spacing Calibration Macro) and the DX / CR modules for the others.
  const spacingAttrs: FilmSpacingAttrs = {
    pixelSpacingMm: dsPair(ds, 'x00280030', 'Pixel Spacing', warnings),
    imagerPixelSpacingMm: dsPair(ds, 'x00181164', 'Imager Pixel Spacing', warnings),
    nominalScannedPixelSpacingMm: dsPair(ds, 'x00182010', 'Nominal Scanned Pixel Spacing', warnings),
    estimatedRadiographicMagnificationFactor: ds1(ds, 'x00181114', 'Estimated Radiographic Magnification Factor', warnings),
    distanceSourceToDetectorMm: ds1(ds, 'x00181110', 'Distance Source to Detector', warnings),
    distanceSourceToPatientMm: ds1(ds, 'x00181111', 'Distance Source to Patient', warnings),
    pixelSpacingCalibrationType: str(ds, 'x00280a02'),
  };

  const meta: DicomMeta = {
    transferSyntaxUid,
    transferSyntaxName: transferSyntaxName(transferSyntaxUid),
    sopClassUid: str(ds, 'x00080016'),
    studyInstanceUid: str(ds, 'x0020000d'),
    seriesInstanceUid: str(ds, 'x0020000e'),
    sopInstanceUid: str(ds, 'x00080018'),
    modality: str(ds, 'x00080060'),
    bodyPartExamined: str(ds, 'x00180015'),
    viewPosition: str(ds, 'x00185101'),
    patientPosition: str(ds, 'x00185100'),
    studyDate: str(ds, 'x00080020'),
    studyTime: str(ds, 'x00080030'),
    acquisitionDate: str(ds, 'x00080022'),
    acquisitionTime: str(ds, 'x00080032'),
    acquisitionDateTime: str(ds, 'x0008002a'),
    contentDate: str(ds, 'x00080023'),
    contentTime: str(ds, 'x00080033'),
    timezoneOffsetFromUtc: str(ds, 'x00080201'),
    rows,
    columns,
    numberOfFrames,
    samplesPerPixel,
    photometricInterpretation,
    planarConfiguration: us(ds, 'x00280006'),
    bitsAllocated,
    bitsStored,
    highBit,
    pixelRepresentation,
    // PS3.3 C.11.1 Modality LUT Module.
    rescaleSlope: ds1(ds, 'x00281053', 'Rescale Slope', warnings),
    rescaleIntercept: ds1(ds, 'x00281052', 'Rescale Intercept', warnings),
    // PS3.3 C.11.2 VOI LUT Module: the first window is the default one.
    windowCenter: ds1(ds, 'x00281050', 'Window Center', warnings),
    windowWidth: ds1(ds, 'x00281051', 'Window Width', warnings),
    voiLutFunction: str(ds, 'x00281056')?.toUpperCase() ?? null,
    hasVoiLut: voiLut !== null,
    ...spacingAttrs,
  };
  if (ds.elements.x00283000) warnings.push('Modality LUT Sequence (0028,3000) is not applied; Rescale Slope/Intercept are.');

  return {
    meta,
    spacingAttrs,
    voiLut,
    takenAt: takenAtFromMeta(meta),
    projection: projectionFromViewPosition(meta.viewPosition),
    position: meta.patientPosition,
    warnings,
  };
}

/** Whatever a parser throws on hostile input becomes a BadFilmError; FilmErrors pass through. */
function asFilmError(e: unknown): FilmError {
  if (e instanceof FilmError) return e;
  return new BadFilmError('The DICOM file could not be read (malformed attribute values).', { cause: e });
}

/** Reads the attributes of a DICOM Part 10 file without decoding its pixels. Synchronous. */
export function readDicomHeader(bytes: Uint8Array): DicomHeader {
  try {
    return readHeader(parse(bytes));
  } catch (e) {
    throw asFilmError(e);
  }
}

/**
 * Reads a DICOM Part 10 film: attributes, calibration input, and the first frame decoded to stored
 * pixel values. Throws `UnsupportedFilmError` (transfer syntax or pixel format Rimwatch does not
 * decode) or `BadFilmError` (malformed, truncated, inconsistent); never anything else for bad input.
 */
export async function readDicom(bytes: Uint8Array): Promise<DicomFilm> {
  try {
    const parsed = parse(bytes);
    const header = readHeader(parsed);
    const pixels = await decodePixels(parsed, header.meta);
    return { ...header, pixels };
  } catch (e) {
    throw asFilmError(e);
  }
}

// ---------------------------------------------------------------------------------------------------
// Pixel decoding.

function checkPixelFormat(meta: DicomMeta): { colour: boolean } {
  const { samplesPerPixel: spp, photometricInterpretation: pi, bitsAllocated: ba, bitsStored: bs, highBit: hb } = meta;
  // PS3.3 C.7.6.3.1.3: Bits Allocated; Rimwatch decodes 8- and 16-bit cells.
  if (ba === 1 || ba === 32 || ba === 64) {
    throw new UnsupportedFilmError(`Bits Allocated ${ba} is not supported; Rimwatch reads 8- and 16-bit films.`);
  }
  if (ba !== 8 && ba !== 16) throw new BadFilmError(`Bits Allocated (0028,0100) is ${ba}; it must be 8 or 16 here.`);
  // PS3.3 C.7.6.3.1: Bits Stored <= Bits Allocated, High Bit = Bits Stored - 1 .. Bits Allocated - 1.
  if (bs < 1 || bs > ba || hb < bs - 1 || hb >= ba) {
    throw new BadFilmError(`Bits Stored ${bs} / High Bit ${hb} do not fit Bits Allocated ${ba}.`);
  }
  if (meta.pixelRepresentation !== 0 && meta.pixelRepresentation !== 1) {
    throw new BadFilmError(`Pixel Representation (0028,0103) is ${meta.pixelRepresentation}; it must be 0 or 1.`);
  }
  // PS3.3 C.7.6.3.1.1 / C.7.6.3.1.2: Samples per Pixel and Photometric Interpretation.
  if (spp === 1) {
    if (pi === 'MONOCHROME1' || pi === 'MONOCHROME2') return { colour: false };
    throw new UnsupportedFilmError(`Photometric Interpretation ${pi} is not supported for a film.`);
  }
  if (spp === 3) {
    if (!['RGB', 'YBR_FULL', 'YBR_FULL_422'].includes(pi)) {
      throw new UnsupportedFilmError(`Photometric Interpretation ${pi} is not supported.`);
    }
    if (ba !== 8) throw new UnsupportedFilmError('Colour DICOM with more than 8 bits per sample is not supported.');
    return { colour: true };
  }
  throw new BadFilmError(`Samples per Pixel (0028,0002) is ${spp}; it must be 1 (greyscale) or 3 (colour).`);
}

/** Rec. 601 luma of interleaved or planar 8-bit RGB, rounded. */
function lumaFromRgb(src: Uint8Array, n: number, planar: boolean): Uint8Array {
  const out = new Uint8Array(n);
  for (let i = 0; i < n; i += 1) {
    const r = planar ? (src[i] ?? 0) : (src[3 * i] ?? 0);
    const g = planar ? (src[n + i] ?? 0) : (src[3 * i + 1] ?? 0);
    const b = planar ? (src[2 * n + i] ?? 0) : (src[3 * i + 2] ?? 0);
    out[i] = Math.round(0.299 * r + 0.587 * g + 0.114 * b);
  }
  return out;
}

function firstChannel(src: Uint8Array, n: number, planar: boolean): Uint8Array {
  if (planar) return src.slice(0, n);
  const out = new Uint8Array(n);
  for (let i = 0; i < n; i += 1) out[i] = src[3 * i] ?? 0;
  return out;
}

function monochromeFromColour(meta: DicomMeta, src: Uint8Array, planar: boolean, alreadyRgb: boolean): DecodedPixels {
  const n = meta.rows * meta.columns;
  // YBR_FULL carries luma in its first channel (PS3.3 C.7.6.3.1.2); RGB is reduced to Rec. 601 luma.
  const data =
    meta.photometricInterpretation === 'YBR_FULL' && !alreadyRgb ? firstChannel(src, n, planar) : lumaFromRgb(src, n, planar);
  return greyPixels(meta, data, 'MONOCHROME2', true);
}

function greyPixels(
  meta: DicomMeta,
  data: Uint8Array | Uint16Array,
  photometric: 'MONOCHROME1' | 'MONOCHROME2',
  fromColour = false,
): DecodedPixels {
  const eightBit = data instanceof Uint8Array;
  return {
    rows: meta.rows,
    columns: meta.columns,
    bitsAllocated: eightBit ? 8 : 16,
    bitsStored: eightBit ? Math.min(meta.bitsStored, 8) : meta.bitsStored,
    highBit: eightBit ? Math.min(meta.highBit, 7) : meta.highBit,
    pixelRepresentation: fromColour ? 0 : (meta.pixelRepresentation as 0 | 1),
    photometric,
    fromColour,
    data,
  };
}

function nativeFrame(ds: DataSet, el: Element, meta: DicomMeta): DecodedPixels {
  // PS3.5 8.1.1 / 8.2: native pixel data, cells packed with no gaps, little endian here.
  const bytesPerSample = meta.bitsAllocated / 8;
  const frameBytes = meta.rows * meta.columns * meta.samplesPerPixel * bytesPerSample;
  const available = Math.min(el.length, ds.byteArray.length - el.dataOffset);
  if (el.encapsulatedPixelData) throw new BadFilmError('Pixel Data is encapsulated although the transfer syntax is native.');
  if (available < frameBytes) {
    throw new BadFilmError(
      `Pixel Data holds ${Math.max(available, 0)} bytes; Rows x Columns x samples x bytes needs ${frameBytes} (the file is truncated or inconsistent).`,
    );
  }
  // PS3.5 8.1.1: native Pixel Data is exactly the frames' cells, padded to an even length. More than
  // that means Rows, Columns, Bits Allocated or Number of Frames do not describe these pixels.
  const allFrames = frameBytes * meta.numberOfFrames;
  if (el.length > allFrames + (allFrames % 2)) {
    throw new BadFilmError(
      `Pixel Data holds ${el.length} bytes, more than the ${allFrames} that Rows x Columns x samples x bytes x frames describe: the header does not match the pixels.`,
    );
  }
  const bytes = ds.byteArray.subarray(el.dataOffset, el.dataOffset + frameBytes);
  const { colour } = checkPixelFormat(meta);
  if (colour) return monochromeFromColour(meta, bytes, meta.planarConfiguration === 1, false);
  // Views share memory with the input (no copy of a 15 MB frame); copies only when unaligned.
  if (bytesPerSample === 1) return greyPixels(meta, bytes, photometricOf(meta));
  if (LITTLE_ENDIAN_HOST && bytes.byteOffset % 2 === 0) {
    return greyPixels(meta, new Uint16Array(bytes.buffer, bytes.byteOffset, frameBytes / 2), photometricOf(meta));
  }
  const words = new Uint16Array(frameBytes / 2);
  if (LITTLE_ENDIAN_HOST) {
    new Uint8Array(words.buffer).set(bytes);
  } else {
    for (let i = 0; i < words.length; i += 1) words[i] = (bytes[2 * i] ?? 0) | ((bytes[2 * i + 1] ?? 0) << 8);
  }
  return greyPixels(meta, words, photometricOf(meta));
}

const LITTLE_ENDIAN_HOST = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

function photometricOf(meta: DicomMeta): 'MONOCHROME1' | 'MONOCHROME2' {
  return meta.photometricInterpretation === 'MONOCHROME1' ? 'MONOCHROME1' : 'MONOCHROME2';
}

function encapsulatedFrame(ds: DataSet, el: Element, meta: DicomMeta): Uint8Array {
  // PS3.5 A.4: encapsulated pixel data, a Basic Offset Table item then one or more fragments per frame.
  const fragments = el.fragments ?? [];
  if (!el.encapsulatedPixelData || fragments.length === 0) {
    throw new BadFilmError('Pixel Data is not encapsulated although the transfer syntax is compressed.');
  }
  if (meta.numberOfFrames === 1) {
    // A single frame owns every fragment (PS3.5 A.4).
    return readEncapsulatedPixelDataFromFragments(ds, el, 0, fragments.length);
  }
  // dcmtk and others leave the Basic Offset Table empty: rebuild it from the JPEG SOI markers.
  const table = el.basicOffsetTable && el.basicOffsetTable.length > 0 ? el.basicOffsetTable : createJPEGBasicOffsetTable(ds, el);
  return readEncapsulatedImageFrame(ds, el, 0, table);
}

async function jpegBaselineFrame(frame: Uint8Array, meta: DicomMeta): Promise<DecodedPixels> {
  const sof = readJpegFrameHeader(frame);
  if (!sof) throw new BadFilmError('The encapsulated frame is not a JPEG stream.');
  if (sof.width !== meta.columns || sof.height !== meta.rows) {
    throw new BadFilmError(`The JPEG frame is ${sof.width} x ${sof.height} but the header says ${meta.columns} x ${meta.rows}.`);
  }
  // PS3.5 8.2.1: JPEG Baseline is process 1, 8-bit samples (SOF0; SOF1 at 8 bits is accepted too).
  if ((sof.marker !== 0xc0 && sof.marker !== 0xc1) || sof.precision !== 8) {
    throw new BadFilmError('The JPEG frame is not an 8-bit baseline stream, as its transfer syntax says it is.');
  }
  const colour = meta.samplesPerPixel === 3;
  let decoded: { data: Buffer; info: OutputInfo };
  try {
    decoded = await sharp(frame, { failOn: 'error', limitInputPixels: filmLimits.maxPixels }).raw().toBuffer({ resolveWithObject: true });
  } catch (e) {
    throw new BadFilmError('The JPEG frame could not be decoded.', { cause: e });
  }
  const { data, info } = decoded;
  if (info.width !== meta.columns || info.height !== meta.rows) throw new BadFilmError('The decoded JPEG frame has the wrong size.');
  const n = meta.rows * meta.columns;
  const meta8 = { ...meta, bitsAllocated: 8, bitsStored: 8, highBit: 7, pixelRepresentation: 0 };
  if (info.channels === 1) return greyPixels(meta8, Uint8Array.from(data.subarray(0, n)), photometricOf(meta));
  if (info.channels >= 3) {
    const rgb = info.channels === 3 ? data : packRgb(data, n, info.channels);
    // libjpeg has already converted YCbCr to RGB.
    return colour ? monochromeFromColour(meta8, rgb, false, true) : greyPixels(meta8, lumaFromRgb(rgb, n, false), photometricOf(meta));
  }
  throw new BadFilmError('The JPEG frame decoded to an unexpected number of channels.');
}

function packRgb(data: Uint8Array, n: number, channels: number): Uint8Array {
  const out = new Uint8Array(n * 3);
  for (let i = 0; i < n; i += 1) {
    out[3 * i] = data[channels * i] ?? 0;
    out[3 * i + 1] = data[channels * i + 1] ?? 0;
    out[3 * i + 2] = data[channels * i + 2] ?? 0;
  }
  return out;
}

/**
 * jpeg-lossless-decoder-js 2.1.2 computes predictor 7 as (Ra + Rb) / 2 in floating point; ISO/IEC
 * 10918-1 H.1.2.1 (Table H.1) means the integer quotient, as IJG (and so dcmtk) computes it with a
 * right shift. Found by comparing with dcmtk (tests/unit/films-dicom.test.ts, predictor 7).
 */
class LosslessDecoder extends JpegLosslessDecoder {
  override select7(compOffset?: number): number {
    return (this.getPreviousX(compOffset) + this.getPreviousY(compOffset)) >> 1;
  }
}

function jpegLosslessFrame(frame: Uint8Array, meta: DicomMeta): DecodedPixels {
  const sof = readJpegFrameHeader(frame);
  if (!sof) throw new BadFilmError('The encapsulated frame is not a JPEG stream.');
  // ISO/IEC 10918-1 process 14 uses SOF3 (PS3.5 8.2.1, transfer syntaxes .57 and .70).
  if (sof.marker !== 0xc3) throw new BadFilmError('The JPEG frame is not a lossless (SOF3) stream, as its transfer syntax says it is.');
  if (sof.width !== meta.columns || sof.height !== meta.rows || sof.components !== meta.samplesPerPixel) {
    throw new BadFilmError(`The JPEG frame is ${sof.width} x ${sof.height} but the header says ${meta.columns} x ${meta.rows}.`);
  }
  if (sof.precision < 2 || sof.precision > 16 || sof.precision > meta.bitsAllocated) {
    throw new BadFilmError(`The JPEG frame has ${sof.precision}-bit samples, which do not fit Bits Allocated ${meta.bitsAllocated}.`);
  }
  const { colour } = checkPixelFormat(meta);
  const n = meta.rows * meta.columns;
  let out: Uint8Array | Uint16Array;
  try {
    const decoder = new LosslessDecoder();
    out = decoder.decode(frame.buffer as ArrayBuffer, frame.byteOffset, frame.byteLength, meta.bitsAllocated / 8);
  } catch (e) {
    throw new BadFilmError('The JPEG lossless frame could not be decoded.', { cause: e });
  }
  if (out.length < n * meta.samplesPerPixel) throw new BadFilmError('The JPEG lossless frame decoded to too few samples.');
  if (colour) return monochromeFromColour(meta, Uint8Array.from(out), false, false);
  return greyPixels(meta, out.length === n ? out : out.slice(0, n), photometricOf(meta));
}

async function decodePixels(parsed: Parsed, meta: DicomMeta): Promise<DecodedPixels> {
  const ds = parsed.dataSet;
  const el = ds.elements.x7fe00010;
  if (!el) {
    if (ds.elements.x7fe00008 || ds.elements.x7fe00009) throw new UnsupportedFilmError('Float Pixel Data is not supported.');
    throw new BadFilmError('The DICOM file has no Pixel Data (7FE0,0010).');
  }
  checkPixelFormat(meta);
  if (parsed.encoding === 'native') return nativeFrame(ds, el, meta);
  let frame: Uint8Array;
  try {
    frame = encapsulatedFrame(ds, el, meta);
  } catch (e) {
    if (e instanceof FilmError) throw e;
    throw new BadFilmError('The compressed Pixel Data is malformed.', { cause: new Error(describeThrown(e)) });
  }
  if (parsed.encoding === 'jpeg-baseline') return jpegBaselineFrame(frame, meta);
  return jpegLosslessFrame(frame, meta);
}
