/**
 * From stored pixel values to 8-bit greyscale for display, through one lookup table indexed by the
 * stored bit pattern: Modality LUT (rescale), then VOI LUT (a table, the stored window, or a robust
 * percentile window), then MONOCHROME1 inversion. Building the table costs at most 65,536 steps; the
 * per-pixel work is a single table read, so a 2,500 x 3,000 film takes a few tens of milliseconds.
 */
import type { DecodedPixels, DicomMeta, VoiLut } from './dicom';

/** 8-bit greyscale pixels, row by row, one byte per pixel. */
export interface Grey8 {
  data: Uint8Array;
  width: number;
  height: number;
}

/** How the 8-bit image was made, for the record and for the viewer's "reset window". */
export interface Rendering {
  /** 'voi-lut': VOI LUT Sequence; 'window': the stored Window Center/Width; 'percentile': 0.5-99.5 % of the histogram; 'identity': 8-bit colour reduced to luma. */
  method: 'voi-lut' | 'window' | 'percentile' | 'identity';
  /** VOI LUT Function applied with a window (PS3.3 C.11.2.1.3). */
  voiLutFunction: 'LINEAR' | 'LINEAR_EXACT' | 'SIGMOID' | null;
  /** Window centre and width in modality units (after rescale); null for 'voi-lut' and 'identity'. */
  center: number | null;
  width: number | null;
  rescaleSlope: number;
  rescaleIntercept: number;
  /** MONOCHROME1: low values are bright, so the output is inverted (PS3.3 C.7.6.3.1.2). */
  inverted: boolean;
}

/** The percentiles of the fallback window. */
export const percentileWindow = { low: 0.005, high: 0.995 } as const;

const Y_MIN = 0;
const Y_MAX = 255;

/**
 * PS3.3 C.11.2.1.2.1, VOI LUT Function LINEAR (the default), exactly:
 *   x <= c - 0.5 - (w-1)/2  -> y = ymin
 *   x >  c - 0.5 + (w-1)/2  -> y = ymax
 *   else y = ((x - (c - 0.5)) / (w-1) + 0.5) * (ymax - ymin) + ymin
 * Output range 0..255 (unrounded). Requires w >= 1; at w = 1 it is a threshold at c - 0.5.
 */
export function windowLinear(x: number, c: number, w: number): number {
  if (x <= c - 0.5 - (w - 1) / 2) return Y_MIN;
  if (x > c - 0.5 + (w - 1) / 2) return Y_MAX;
  return ((x - (c - 0.5)) / (w - 1) + 0.5) * (Y_MAX - Y_MIN) + Y_MIN;
}

/** PS3.3 C.11.2.1.3.2, LINEAR_EXACT: y = ((x - c) / w + 0.5) * (ymax - ymin) + ymin, clamped at c -/+ w/2. w > 0. */
export function windowLinearExact(x: number, c: number, w: number): number {
  if (x <= c - w / 2) return Y_MIN;
  if (x > c + w / 2) return Y_MAX;
  return ((x - c) / w + 0.5) * (Y_MAX - Y_MIN) + Y_MIN;
}

/** PS3.3 C.11.2.1.3.1, SIGMOID: y = (ymax - ymin) / (1 + exp(-4 (x - c) / w)) + ymin. w > 0. */
export function windowSigmoid(x: number, c: number, w: number): number {
  return (Y_MAX - Y_MIN) / (1 + Math.exp((-4 * (x - c)) / w)) + Y_MIN;
}

/** The value a stored bit pattern (already shifted down to bit 0 and masked to Bits Stored) stands for. */
export function storedFromPattern(pattern: number, bitsStored: number, pixelRepresentation: 0 | 1): number {
  // PS3.5 8.1.1 / PS3.3 C.7.6.3.1: signed data are two's complement within Bits Stored.
  if (pixelRepresentation === 1 && pattern >= 2 ** (bitsStored - 1)) return pattern - 2 ** bitsStored;
  return pattern;
}

function layout(p: DecodedPixels): { shift: number; mask: number; size: number } {
  // PS3.5 8.1.1: the stored field occupies bits (High Bit - Bits Stored + 1) .. High Bit of each cell.
  const shift = p.highBit - p.bitsStored + 1;
  const size = 2 ** p.bitsStored;
  return { shift, mask: size - 1, size };
}

/** The stored values of every pixel (Bits Stored extracted, Pixel Representation applied). For tests and tools. */
export function storedValues(p: DecodedPixels): Int32Array {
  const { shift, mask } = layout(p);
  const out = new Int32Array(p.data.length);
  for (let i = 0; i < p.data.length; i += 1) {
    out[i] = storedFromPattern((p.data[i]! >> shift) & mask, p.bitsStored, p.pixelRepresentation);
  }
  return out;
}

function histogram(p: DecodedPixels, shift: number, mask: number, size: number): Uint32Array {
  const h = new Uint32Array(size);
  const d = p.data;
  const n = d.length;
  if (shift === 0 && mask === (p.bitsAllocated === 16 ? 0xffff : 0xff)) {
    for (let i = 0; i < n; i += 1) h[d[i]!]! += 1;
  } else {
    for (let i = 0; i < n; i += 1) h[(d[i]! >> shift) & mask]! += 1;
  }
  return h;
}

/** 0.5 and 99.5 percentiles of the stored values, as stored values. */
function storedPercentiles(p: DecodedPixels, shift: number, mask: number, size: number): [number, number] {
  const h = histogram(p, shift, mask, size);
  const n = p.data.length;
  const lowCount = percentileWindow.low * n;
  const highCount = percentileWindow.high * n;
  // Walk stored values in ascending order: for signed data the negative patterns come first.
  const start = p.pixelRepresentation === 1 ? -(size / 2) : 0;
  let cumulative = 0;
  let lo: number | null = null;
  let hi = start + size - 1;
  for (let v = start; v < start + size; v += 1) {
    cumulative += h[v & mask]!;
    if (lo === null && cumulative > lowCount) lo = v;
    if (cumulative >= highCount) {
      hi = v;
      break;
    }
  }
  return [lo ?? start, hi];
}

/**
 * Builds the table from stored bit pattern to 8-bit output, and says how. Order per PS3.3 C.11:
 * Modality LUT (C.11.1, rescale), VOI LUT (C.11.2: the VOI LUT Sequence if present, else the first
 * stored window, else a percentile window), then MONOCHROME1 inversion (C.7.6.3.1.2).
 */
export function buildDisplayLut(
  p: DecodedPixels,
  meta: Pick<DicomMeta, 'rescaleSlope' | 'rescaleIntercept' | 'windowCenter' | 'windowWidth' | 'voiLutFunction'>,
  voiLut: VoiLut | null,
): { lut: Uint8Array; rendering: Rendering } {
  const { shift, mask, size } = layout(p);
  const slope = p.fromColour ? 1 : (meta.rescaleSlope ?? 1);
  const intercept = p.fromColour ? 0 : (meta.rescaleIntercept ?? 0);
  const inverted = p.photometric === 'MONOCHROME1';
  const lut = new Uint8Array(size);

  let rendering: Rendering;
  let voi: (x: number) => number;
  const fn = meta.voiLutFunction === 'LINEAR_EXACT' || meta.voiLutFunction === 'SIGMOID' ? meta.voiLutFunction : 'LINEAR';
  const c = meta.windowCenter;
  const w = meta.windowWidth;

  if (p.fromColour) {
    voi = (x) => x;
    rendering = { method: 'identity', voiLutFunction: null, center: null, width: null, rescaleSlope: 1, rescaleIntercept: 0, inverted };
  } else if (voiLut) {
    // C.11.2.1.1: values below the first mapped value map to the first entry, above the last to the last.
    const last = voiLut.data.length - 1;
    const top = 2 ** voiLut.bits - 1;
    const table = voiLut.data;
    voi = (x) => {
      const i = Math.min(last, Math.max(0, Math.round(x) - voiLut.firstMapped));
      return (table[i]! / top) * Y_MAX;
    };
    rendering = { method: 'voi-lut', voiLutFunction: null, center: null, width: null, rescaleSlope: slope, rescaleIntercept: intercept, inverted };
  } else if (c !== null && w !== null && (fn === 'LINEAR' ? w >= 1 : w > 0)) {
    // PS3.3 C.11.2.1.2: Window Width >= 1 for LINEAR, > 0 for LINEAR_EXACT and SIGMOID.
    const cc = c;
    const ww = w;
    voi = fn === 'LINEAR' ? (x) => windowLinear(x, cc, ww) : fn === 'LINEAR_EXACT' ? (x) => windowLinearExact(x, cc, ww) : (x) => windowSigmoid(x, cc, ww);
    rendering = { method: 'window', voiLutFunction: fn, center: cc, width: ww, rescaleSlope: slope, rescaleIntercept: intercept, inverted };
  } else {
    const [sLo, sHi] = storedPercentiles(p, shift, mask, size);
    const a = slope * sLo + intercept;
    const b = slope * sHi + intercept;
    const lo = Math.min(a, b);
    const width = Math.max(Math.max(a, b) - lo, 1);
    const center = lo + width / 2;
    voi = (x) => windowLinearExact(x, center, width);
    rendering = { method: 'percentile', voiLutFunction: 'LINEAR_EXACT', center, width, rescaleSlope: slope, rescaleIntercept: intercept, inverted };
  }

  for (let pattern = 0; pattern < size; pattern += 1) {
    const stored = storedFromPattern(pattern, p.bitsStored, p.pixelRepresentation);
    const modality = slope * stored + intercept; // C.11.1.1.2: output = m * SV + b
    const y = Math.round(Math.min(Y_MAX, Math.max(Y_MIN, voi(modality))));
    lut[pattern] = inverted ? Y_MAX - y : y;
  }
  return { lut, rendering };
}

/** Applies the table to every pixel. */
export function applyLut(p: DecodedPixels, lut: Uint8Array): Uint8Array {
  const { shift, mask } = layout(p);
  const d = p.data;
  const n = d.length;
  const out = new Uint8Array(n);
  if (shift === 0 && mask === (p.bitsAllocated === 16 ? 0xffff : 0xff)) {
    for (let i = 0; i < n; i += 1) out[i] = lut[d[i]!]!;
  } else {
    for (let i = 0; i < n; i += 1) out[i] = lut[(d[i]! >> shift) & mask]!;
  }
  return out;
}

/** Decoded DICOM pixels to 8-bit greyscale, and how it was done. */
export function toGrey8(
  p: DecodedPixels,
  meta: Pick<DicomMeta, 'rescaleSlope' | 'rescaleIntercept' | 'windowCenter' | 'windowWidth' | 'voiLutFunction'>,
  voiLut: VoiLut | null,
): { grey: Grey8; rendering: Rendering } {
  const { lut, rendering } = buildDisplayLut(p, meta, voiLut);
  return { grey: { data: applyLut(p, lut), width: p.columns, height: p.rows }, rendering };
}
