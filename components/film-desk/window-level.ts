// Window/level on the 8-bit display image, done with a 256-entry lookup table applied to a cached
// grey copy of the film (one pass, no per-frame filter on the konva node). Pure except `applyLut`,
// which writes into an ImageData-shaped buffer.

/** Window centre and width in display grey levels (0..255); the identity window is centre 127.5, width 255. */
export interface WindowLevel {
  center: number;
  width: number;
  invert: boolean;
}

export const IDENTITY_WINDOW: WindowLevel = { center: 127.5, width: 255, invert: false };
export const MIN_WINDOW_WIDTH = 2;

export function isIdentity(wl: WindowLevel): boolean {
  return wl.center === IDENTITY_WINDOW.center && wl.width === IDENTITY_WINDOW.width && !wl.invert;
}

/**
 * Linear window: grey levels below centre - width/2 go black, above centre + width/2 go white, a
 * straight line between (the usual radiology window, applied to the already-rendered 8-bit image).
 * Source: common practice (DICOM PS3.3 C.11.2.1.2 describes the same linear shape on stored values).
 */
export function buildLut(wl: WindowLevel): Uint8Array {
  const lut = new Uint8Array(256);
  const width = Math.max(MIN_WINDOW_WIDTH, wl.width);
  const low = wl.center - width / 2;
  for (let v = 0; v < 256; v += 1) {
    const t = (v - low) / width;
    let out = Math.round(Math.min(1, Math.max(0, t)) * 255);
    if (wl.invert) out = 255 - out;
    lut[v] = out;
  }
  return lut;
}

/** A drag of (dx, dy) screen pixels in window mode: right widens the window, down brightens (lowers the centre). */
export function dragWindow(start: WindowLevel, dx: number, dy: number): WindowLevel {
  const width = Math.min(512, Math.max(MIN_WINDOW_WIDTH, start.width + dx));
  const center = Math.min(255 + 128, Math.max(-128, start.center - dy));
  return { ...start, center, width };
}

/**
 * Writes grey -> RGBA through the table: `out` is RGBA bytes (an ImageData's data), `grey` one byte a
 * pixel. One typed-array read and one 32-bit write per pixel.
 */
export function applyLut(grey: Uint8Array, lut: Uint8Array, out: Uint8ClampedArray): void {
  if (out.length !== grey.length * 4) throw new RangeError("output must hold four bytes per grey pixel");
  const out32 = new Uint32Array(out.buffer, out.byteOffset, grey.length);
  const rgba = new Uint32Array(256);
  const littleEndian = new Uint8Array(new Uint32Array([1]).buffer)[0] === 1;
  for (let v = 0; v < 256; v += 1) {
    const g = lut[v] ?? 0;
    rgba[v] = littleEndian ? ((255 << 24) | (g << 16) | (g << 8) | g) >>> 0 : ((g << 24) | (g << 16) | (g << 8) | 255) >>> 0;
  }
  for (let i = 0; i < grey.length; i += 1) out32[i] = rgba[grey[i] ?? 0] ?? 0;
}

/** The red channel of RGBA bytes: the display image is greyscale, so one channel is the whole picture. */
export function greyFromRgba(rgba: Uint8ClampedArray): Uint8Array {
  const n = rgba.length >> 2;
  const grey = new Uint8Array(n);
  for (let i = 0; i < n; i += 1) grey[i] = rgba[i << 2] ?? 0;
  return grey;
}
