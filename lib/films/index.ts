/** The film pipeline's public face: read DICOM / PNG / JPEG films and make their previews. */
export { ingestFilm, filmKindOf, type IngestedFilm, type IngestedDicom, type IngestedImage } from './ingest';
export {
  readDicom,
  readDicomHeader,
  looksLikeDicom,
  takenAtFromMeta,
  projectionFromViewPosition,
  filmLimits,
  type DicomFilm,
  type DicomHeader,
  type DicomMeta,
  type DecodedPixels,
  type FilmSpacingAttrs,
  type Projection,
  type VoiLut,
} from './dicom';
export { toGrey8, buildDisplayLut, applyLut, storedValues, windowLinear, windowLinearExact, windowSigmoid, type Grey8, type Rendering } from './pixels';
export { readImage, renderDisplay, renderThumbnail, displaySize, previewSettings, type DisplayImage, type EncodedImage, type ImageMeta } from './preview';
export { FilmError, BadFilmError, UnsupportedFilmError } from './errors';
export { transferSyntaxName, supportedTransferSyntaxes } from './transfer-syntax';
