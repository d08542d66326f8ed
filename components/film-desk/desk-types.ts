// Shapes shared by the film desk's client components.
import type { CaliperName, FilmCalibration } from "@/measure";
import type { EstimateSettings, MeasurementView, ReaderChain } from "@/lib/validation/measurements";

export type DeskMode = "measure" | "pan" | "window";

export interface SelectedEnd {
  name: CaliperName;
  end: "a" | "b";
}

/** One colour per caliper, chosen to stay apart from each other on a grey film. */
export const CALIPER_COLOURS: Record<CaliperName, string> = {
  hemithorax: "#f2b544",
  lung: "#5fd0c4",
  apex: "#f0876a",
  upper: "#b8a2ff",
  lower: "#92d36b",
  hilum: "#78b6ff",
};

/** What the server page hands the film desk. */
export interface FilmDeskFilm {
  id: string;
  episodeId: string;
  columns: number;
  rows: number;
  displayWidth: number;
  displayHeight: number;
  displayScale: number;
  imageUrl: string;
  takenAt: string | null;
  projection: string | null;
  position: string | null;
  /** The calibration measure/ uses: a reference line when drawn, else the DICOM spacing, else none. */
  calibration: FilmCalibration;
  calibrationWords: string;
  withdrawn: boolean;
  /** Thresholds in force, so live figures match what the server will store. */
  settings: EstimateSettings;
}

export interface FilmDeskUser {
  id: string;
  name: string;
  canMeasure: boolean;
  canSignOff: boolean;
}

export interface FilmMeasurements {
  versions: MeasurementView[];
  readers: ReaderChain[];
}
