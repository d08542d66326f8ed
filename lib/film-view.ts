// The film record as the browser sees it, and the plain words for its calibration, projection and
// position. Pure: used by the films route handlers, the episode page and its client components.
import type { FilmCalibration, Plane, Segment, SpacingSource } from "@/measure";

export const PROJECTIONS = ["PA", "AP", "LL", "RL", "RLD", "LLD", "RLO", "LLO"] as const;
export type FilmProjection = (typeof PROJECTIONS)[number];

export const PROJECTION_LABELS: Record<FilmProjection, string> = {
  PA: "PA",
  AP: "AP",
  LL: "Left lateral",
  RL: "Right lateral",
  RLD: "Right lateral decubitus",
  LLD: "Left lateral decubitus",
  RLO: "Right oblique",
  LLO: "Left oblique",
};

/** How the patient was placed, for films without a DICOM header. */
export const IMAGE_POSITIONS = ["erect", "semi-erect", "supine", "decubitus"] as const;
export type ImagePosition = (typeof IMAGE_POSITIONS)[number];

const POSITION_LABELS: Record<string, string> = {
  erect: "erect",
  "semi-erect": "semi-erect",
  supine: "supine",
  decubitus: "decubitus",
  // Patient Position (0018,5100) defined terms most often met on chest films (DICOM PS3.3 C.7.3.1.1.2).
  HFS: "supine (HFS)",
  FFS: "supine (FFS)",
  HFP: "prone (HFP)",
  FFP: "prone (FFP)",
  HFDR: "right decubitus (HFDR)",
  HFDL: "left decubitus (HFDL)",
  FFDR: "right decubitus (FFDR)",
  FFDL: "left decubitus (FFDL)",
};

export function projectionLabel(p: string | null): string | null {
  if (!p) return null;
  return (PROJECTION_LABELS as Record<string, string>)[p] ?? p;
}

export function positionLabel(p: string | null): string | null {
  if (!p) return null;
  return POSITION_LABELS[p] ?? p;
}

/** A reference line drawn on the film (original film pixels) and the calibration made from it. */
export interface CalibrationOverride {
  segment: Segment;
  knownLengthMm: number;
  plane: Plane;
  calibration: FilmCalibration;
  setBy: string;
  setAt: string;
}

export type TakenAtSource = "dicom" | "upload" | "entered";

export interface FilmView {
  id: string;
  episodeId: string;
  kind: "dicom" | "image";
  filename: string;
  contentType: string;
  sizeBytes: number;
  sha256: string;
  takenAt: string | null;
  takenAtSource: TakenAtSource | null;
  projection: string | null;
  position: string | null;
  /** Original film size: the coordinate system of calipers and reference lines. */
  rows: number;
  columns: number;
  display: { width: number; height: number; scale: number };
  /** What the film desk measures with: the reference line when drawn, else the DICOM spacing, else none. */
  calibration: EffectiveCalibration;
  /** The calibration read from the DICOM header (null for PNG/JPEG films). */
  dicomCalibration: FilmCalibration | null;
  calibrationOverride: CalibrationOverride | null;
  /** Which header values may still be set by a person (PNG/JPEG films, or DICOM films lacking them). */
  editable: { takenAt: boolean; projection: boolean; position: boolean };
  uploadedBy: { id: string | null; name: string | null };
  createdAt: string;
  withdrawn: { at: string; byName: string | null; reason: string | null } | null;
  measurementCount: number;
  images: { display: string; thumb: string; original: string };
}

export interface EffectiveCalibration extends FilmCalibration {
  source: "reference-line" | "dicom" | "none";
  /** Plain words, e.g. "detector plane from Imager Pixel Spacing". */
  words: string;
}

const SOURCE_WORDS: Record<SpacingSource, string> = {
  "imager-pixel-spacing": "Imager Pixel Spacing",
  "pixel-spacing-uncorrected": "Pixel Spacing",
  "pixel-spacing-unverified": "Pixel Spacing",
  "nominal-scanned-pixel-spacing": "Nominal Scanned Pixel Spacing",
  "pixel-spacing-calibrated": "calibrated Pixel Spacing",
  "imager-spacing/ermf": "Imager Pixel Spacing and the magnification factor",
  "imager-spacing*sod/sid": "Imager Pixel Spacing and the source distances",
  "reference-line": "a reference line",
};

const NONE_WORDS = "no calibration: Light index only";

function formatMm(mm: number): string {
  return Number.isInteger(mm) ? String(mm) : mm.toFixed(1);
}

/** The calibration the film desk uses, and how to say where it came from. */
export function effectiveCalibration(dicom: FilmCalibration | null, override: CalibrationOverride | null): EffectiveCalibration {
  if (override) {
    const plane = override.plane === "film" ? "detector plane" : "patient plane";
    return { ...override.calibration, source: "reference-line", words: `reference line ${formatMm(override.knownLengthMm)} mm, ${plane}` };
  }
  if (!dicom || (!dicom.film && !dicom.patient)) {
    const base: FilmCalibration = dicom ?? { film: null, patient: null, correctionUnknown: false, notes: [] };
    return { ...base, source: "none", words: NONE_WORDS };
  }
  const parts: string[] = [];
  if (dicom.film) parts.push(`detector plane from ${SOURCE_WORDS[dicom.film.source]}`);
  if (dicom.patient) parts.push(`patient plane from ${SOURCE_WORDS[dicom.patient.source]}`);
  if (dicom.correctionUnknown) parts.push("correction status unknown");
  return { ...dicom, source: "dicom", words: parts.join("; ") };
}
