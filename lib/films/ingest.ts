/**
 * One call for the upload route: bytes in, everything Rimwatch stores about a film out.
 */
import { createHash } from 'node:crypto';
import {
  looksLikeDicom,
  readDicom,
  type DicomMeta,
  type FilmSpacingAttrs,
  type Projection,
} from './dicom';
import { BadFilmError, UnsupportedFilmError } from './errors';
import { toGrey8, type Grey8, type Rendering } from './pixels';
import { readImage, renderDisplay, renderThumbnail, type DisplayImage, type EncodedImage, type ImageMeta } from './preview';

interface IngestedCommon {
  /** Size of the original film, pixels (the coordinate system of calipers). */
  rows: number;
  columns: number;
  display: DisplayImage;
  thumbnail: EncodedImage;
  /** SHA-256 of the original bytes, lowercase hex. */
  sha256: string;
  /** How the 8-bit picture was made from the stored values. */
  rendering: Rendering;
  /** Attributes that were present but unusable (kept for the film record). */
  warnings: string[];
}

export interface IngestedDicom extends IngestedCommon {
  kind: 'dicom';
  meta: DicomMeta;
  spacingAttrs: FilmSpacingAttrs;
  takenAt: string | null;
  projection: Projection | null;
  position: string | null;
}

export interface IngestedImage extends IngestedCommon {
  kind: 'image';
  meta: ImageMeta;
  spacingAttrs: null;
  takenAt: null;
  projection: null;
  position: null;
}

export type IngestedFilm = IngestedDicom | IngestedImage;

const PNG_MAGIC = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];

/**
 * Which reader a file goes to. The bytes decide first (the DICM prefix, PNG and JPEG signatures);
 * the declared type and file name only send unrecognised bytes to the DICOM reader, which then
 * explains what is wrong with them.
 */
export function filmKindOf(bytes: Uint8Array, filename: string, contentType: string): 'dicom' | 'image' {
  if (looksLikeDicom(bytes)) return 'dicom';
  if (PNG_MAGIC.every((b, i) => bytes[i] === b)) return 'image';
  if (bytes[0] === 0xff && bytes[1] === 0xd8 && bytes[2] === 0xff) return 'image';
  const type = contentType.split(';')[0]?.trim().toLowerCase() ?? '';
  if (type === 'application/dicom' || /\.(dcm|dicom|dic)$/i.test(filename)) return 'dicom';
  if (type === 'image/png' || type === 'image/jpeg') return 'image';
  throw new UnsupportedFilmError('This file is neither DICOM, PNG nor JPEG.');
}

async function previews(grey: Grey8): Promise<{ display: DisplayImage; thumbnail: EncodedImage }> {
  const [display, thumbnail] = await Promise.all([renderDisplay(grey), renderThumbnail(grey)]);
  return { display, thumbnail };
}

/**
 * Reads an uploaded film and makes its display image and thumbnail.
 * Throws `UnsupportedFilmError` (route: 415) or `BadFilmError` (route: 422); other errors are bugs.
 */
export async function ingestFilm(bytes: Buffer, filename: string, contentType: string): Promise<IngestedFilm> {
  if (bytes.length === 0) throw new BadFilmError('The file is empty.');
  const kind = filmKindOf(bytes, filename, contentType);
  const hash = () => createHash('sha256').update(bytes).digest('hex');

  if (kind === 'dicom') {
    const film = await readDicom(bytes);
    const { grey, rendering } = toGrey8(film.pixels, film.meta, film.voiLut);
    // sharp encodes on its own thread: hash the upload on this one meanwhile.
    const encoding = previews(grey);
    const sha256 = hash();
    const { display, thumbnail } = await encoding;
    return {
      kind: 'dicom',
      meta: film.meta,
      spacingAttrs: film.spacingAttrs,
      takenAt: film.takenAt,
      projection: film.projection,
      position: film.position,
      rows: film.meta.rows,
      columns: film.meta.columns,
      display,
      thumbnail,
      sha256,
      rendering,
      warnings: film.warnings,
    };
  }

  const { meta, grey } = await readImage(bytes);
  const encoding = previews(grey);
  const sha256 = hash();
  const { display, thumbnail } = await encoding;
  return {
    kind: 'image',
    meta,
    spacingAttrs: null,
    takenAt: null,
    projection: null,
    position: null,
    rows: grey.height,
    columns: grey.width,
    display,
    thumbnail,
    sha256,
    rendering: {
      method: 'identity',
      voiLutFunction: null,
      center: null,
      width: null,
      rescaleSlope: 1,
      rescaleIntercept: 0,
      inverted: false,
    },
    warnings: [],
  };
}
