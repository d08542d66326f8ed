/**
 * Encoded images for the film desk, made with sharp from 8-bit greyscale pixels, and the reader for
 * PNG / JPEG uploads.
 *
 * Display image: PNG, 8-bit, one grey channel, lossless. Lossless because calipers are placed on it;
 * PNG rather than lossless WebP because, measured on a 2,500 x 3,000 film on these machines, sharp
 * encodes a greyscale PNG in about 0.2 s and a lossless WebP in 4 to 8 s (the files are of similar
 * size), and PNG keeps a true single grey channel that every browser decodes.
 * Thumbnail: JPEG, one grey channel, 256 px wide (about 10 ms; a lossy WebP took three to four times longer).
 */
import sharp, { type Metadata, type OutputInfo, type Sharp } from 'sharp';
import { filmLimits } from './dicom';
import { BadFilmError, UnsupportedFilmError } from './errors';
import type { Grey8 } from './pixels';

export const previewSettings = {
  /** Longest side of the display image; larger films are downscaled and the scale recorded. */
  displayMaxSide: 4096,
  thumbnailWidth: 256,
  thumbnailQuality: 80,
  pngCompressionLevel: 6,
} as const;

export interface EncodedImage {
  buffer: Buffer;
  contentType: string;
  width: number;
  height: number;
}

export interface DisplayImage extends EncodedImage {
  /**
   * Display pixels per original pixel (1 when not downscaled). Map a point back to the film with
   * original = display / scale. The longer side is exact; the shorter side is rounded to whole
   * pixels, an error under half a pixel.
   */
  scale: number;
}

/** The size of the display image for a film of width x height. */
export function displaySize(width: number, height: number): { width: number; height: number; scale: number } {
  const longest = Math.max(width, height);
  if (longest <= previewSettings.displayMaxSide) return { width, height, scale: 1 };
  const scale = previewSettings.displayMaxSide / longest;
  return {
    width: width >= height ? previewSettings.displayMaxSide : Math.max(1, Math.round(width * scale)),
    height: height > width ? previewSettings.displayMaxSide : Math.max(1, Math.round(height * scale)),
    scale,
  };
}

function rawGrey(grey: Grey8): Sharp {
  if (grey.data.length !== grey.width * grey.height) throw new RangeError('grey pixels do not match width x height');
  // 'b-w' keeps one channel through to the encoder (sharp otherwise writes RGB).
  return sharp(grey.data, { raw: { width: grey.width, height: grey.height, channels: 1 } }).toColourspace('b-w');
}

/** Full-resolution (at most 4,096 px a side) lossless PNG of the 8-bit film. */
export async function renderDisplay(grey: Grey8): Promise<DisplayImage> {
  const size = displaySize(grey.width, grey.height);
  let pipeline = rawGrey(grey);
  if (size.scale !== 1) pipeline = pipeline.resize({ width: size.width, height: size.height, fit: 'fill', kernel: 'lanczos3' });
  const { data, info } = await pipeline
    .png({ compressionLevel: previewSettings.pngCompressionLevel })
    .toBuffer({ resolveWithObject: true });
  return { buffer: data, contentType: 'image/png', width: info.width, height: info.height, scale: size.scale };
}

/** A 256 px wide greyscale JPEG (never enlarged). */
export async function renderThumbnail(grey: Grey8): Promise<EncodedImage> {
  const { data, info } = await rawGrey(grey)
    .resize({ width: previewSettings.thumbnailWidth, withoutEnlargement: true })
    .jpeg({ quality: previewSettings.thumbnailQuality })
    .toBuffer({ resolveWithObject: true });
  return { buffer: data, contentType: 'image/jpeg', width: info.width, height: info.height };
}

/** What Rimwatch keeps about a PNG or JPEG upload. No EXIF, no embedded text. */
export interface ImageMeta {
  format: 'png' | 'jpeg';
  /** Width and height after EXIF orientation is applied. */
  width: number;
  height: number;
  /** Channels and sample format as stored ('uchar' 8-bit, 'ushort' 16-bit). */
  channels: number;
  depth: string | null;
  /** EXIF orientation 1..8 when present (already applied to the pixels). */
  orientation: number | null;
}

function sharpInput(bytes: Uint8Array): Sharp {
  // limitInputPixels defuses decompression bombs; failOn 'error' refuses corrupt data instead of guessing.
  return sharp(bytes, { failOn: 'error', limitInputPixels: filmLimits.maxPixels });
}

/** Reads a PNG or JPEG film photograph or export: greyscale 8-bit pixels, oriented; no calibration. */
export async function readImage(bytes: Uint8Array): Promise<{ meta: ImageMeta; grey: Grey8 }> {
  let md: Metadata;
  try {
    // Only the header is read here (no pixel limit needed), so an oversized image gets a plain message below.
    md = await sharp(bytes, { failOn: 'error', limitInputPixels: false }).metadata();
  } catch (e) {
    throw new BadFilmError('The image could not be read (corrupt or not an image).', { cause: e });
  }
  if (md.format !== 'png' && md.format !== 'jpeg') {
    throw new UnsupportedFilmError(`Images in ${md.format ?? 'this'} format are not supported; upload DICOM, PNG or JPEG.`);
  }
  if (!md.width || !md.height) throw new BadFilmError('The image has no size.');
  if (md.width > filmLimits.maxSide || md.height > filmLimits.maxSide || md.width * md.height > filmLimits.maxPixels) {
    throw new BadFilmError(`The image is ${md.width} x ${md.height} pixels, more than Rimwatch accepts.`);
  }
  let decoded: { data: Buffer; info: OutputInfo };
  try {
    decoded = await sharpInput(bytes)
      .autoOrient()
      .flatten({ background: '#000000' })
      .toColourspace('b-w')
      .raw({ depth: 'uchar' })
      .toBuffer({ resolveWithObject: true });
  } catch (e) {
    throw new BadFilmError('The image could not be decoded (corrupt or truncated).', { cause: e });
  }
  const { data, info } = decoded;
  if (info.channels !== 1 || data.length !== info.width * info.height) {
    throw new BadFilmError('The image decoded to an unexpected pixel layout.');
  }
  const meta: ImageMeta = {
    format: md.format,
    width: info.width,
    height: info.height,
    channels: md.channels ?? 1,
    depth: md.depth ?? null,
    orientation: md.orientation ?? null,
  };
  return { meta, grey: { data: new Uint8Array(data.buffer, data.byteOffset, data.length), width: info.width, height: info.height } };
}
