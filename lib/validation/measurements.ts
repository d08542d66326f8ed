// Input for the film desk: caliper geometry only (in ORIGINAL image pixels), never figures: the server
// computes every estimate itself with measure/. Shared by the browser (field messages) and the routes.
import { z } from "zod";
import { caliperNames, type CaliperEstimate, type CaliperName, type CaliperSet } from "@/measure";
import { AppError, fieldMessages } from "@/lib/errors";
import { optionalText } from "./common";

/** Plain names of the calipers, for messages and the side panel. */
export const CALIPER_LABELS: Record<CaliperName, string> = {
  hemithorax: "hemithorax width",
  lung: "lung width",
  apex: "apex to cupola",
  upper: "upper gap",
  lower: "lower gap",
  hilum: "gap at the hilum",
};

/** Largest coordinate accepted at all (a film is never this big); the film's own size is checked on the server. */
const MAX_COORD = 100_000;

const coordinate = z
  .number({ message: "Each end needs x and y as numbers (image pixels)" })
  .refine(Number.isFinite, "A coordinate is not a finite number")
  .refine((v) => v >= 0, "A coordinate lies outside the film (negative)")
  .refine((v) => v <= MAX_COORD, "A coordinate lies far outside any film");

const point = z.object({ x: coordinate, y: coordinate });

function segmentFor(name: CaliperName) {
  return z
    .object({ a: point, b: point }, { message: `The ${CALIPER_LABELS[name]} caliper needs two ends, a and b` })
    .refine((s) => s.a.x !== s.b.x || s.a.y !== s.b.y, {
      message: `The ${CALIPER_LABELS[name]} caliper has no length: both ends are on the same point. Redraw it or skip it.`,
    })
    .nullable()
    .optional();
}

/** A caliper set: any of the six calipers, each a segment or null (skipped). Unknown caliper names are refused. */
export const caliperSet = z
  .strictObject(
    {
      hemithorax: segmentFor("hemithorax"),
      lung: segmentFor("lung"),
      apex: segmentFor("apex"),
      upper: segmentFor("upper"),
      lower: segmentFor("lower"),
      hilum: segmentFor("hilum"),
    },
    {
      error: (iss) =>
        iss.code === "unrecognized_keys"
          ? `Unknown caliper ${iss.keys.map((k) => `"${k}"`).join(", ")}: the caliper set has ${caliperNames.join(", ")}`
          : `Calipers must be an object with any of: ${caliperNames.join(", ")}`,
    },
  )
  .refine((set) => caliperNames.some((n) => set[n]), { message: "Draw at least one caliper before saving." });

export const PLANES = ["film", "patient"] as const;
const plane = z.enum(PLANES, { message: "The plane is 'film' (detector) or 'patient'" }).default("film");

/** POST /api/films/[id]/measurements: a new reading (version 1 of a new chain). Any other field (figures) is ignored. */
export const measurementCreate = z.object({
  calipers: caliperSet,
  plane,
});
export type MeasurementCreate = z.output<typeof measurementCreate>;

/** PUT /api/measurements/[id]: the next version of the chain, based on the version the reader started from. */
export const measurementUpdate = z.object({
  calipers: caliperSet,
  plane,
  basedOnVersion: z.number({ message: "Say which version your change starts from (basedOnVersion)" }).int().min(1),
  reason: optionalText(1000),
});
export type MeasurementUpdate = z.output<typeof measurementUpdate>;

/** Converts the validated input to measure/'s CaliperSet (drops undefined keys; null = skipped). */
export function toCaliperSet(input: z.output<typeof caliperSet>): CaliperSet {
  const out: CaliperSet = {};
  for (const n of caliperNames) {
    const s = input[n];
    if (s !== undefined) out[n] = s === null ? null : { a: { x: s.a.x, y: s.a.y }, b: { x: s.b.x, y: s.b.y } };
  }
  return out;
}

/**
 * Checks every caliper end lies on the film (0..columns, 0..rows, original pixels). Returns field
 * messages keyed `calipers.<name>`, empty when all is well.
 */
export function calipersOutsideFilm(set: CaliperSet, columns: number, rows: number): Record<string, string> {
  const fields: Record<string, string> = {};
  for (const n of caliperNames) {
    const s = set[n];
    if (!s) continue;
    for (const [end, p] of [["first", s.a], ["second", s.b]] as const) {
      if (p.x > columns || p.y > rows) {
        fields[`calipers.${n}`] ??= `The ${CALIPER_LABELS[n]} caliper's ${end} end (${p.x.toFixed(0)}, ${p.y.toFixed(0)}) lies outside the film (${columns} x ${rows} pixels).`;
      }
    }
  }
  return fields;
}

/** Thresholds that shape the estimate (local settings over published defaults), shared by server and film desk. */
export interface EstimateSettings {
  disagreementPoints: number;
  largeBtsHilumCm: number;
  largeAccpApexCm: number;
}

/** One version of a reader's measurement, as the routes answer and the film desk shows it. */
export interface MeasurementView {
  id: string;
  filmId: string;
  episodeId: string;
  chainId: string;
  version: number;
  /** True for the newest version of its chain (not superseded). */
  current: boolean;
  reader: { id: string; name: string };
  createdBy: { id: string; name: string };
  createdAt: string;
  calipers: CaliperSet;
  /** Plane of the centimetre figures; 'none' when the film has no spacing in the chosen plane. */
  plane: "film" | "patient" | "none";
  calibrationSource: string | null;
  /** Everything the server computed with measure/ (estimateFromCalipers). */
  results: CaliperEstimate;
  figures: {
    lightPercent: number | null;
    rheaPercent: number | null;
    collinsPercent: number | null;
    aidCm: number | null;
    apexCm: number | null;
    hilumCm: number | null;
  };
  reason: string | null;
  signedOff: { by: { id: string; name: string }; at: string } | null;
  supersededAt: string | null;
}

/** Each reader's chain on one film: the current version and how many versions it has. */
export interface ReaderChain {
  chainId: string;
  reader: { id: string; name: string };
  current: MeasurementView;
  versions: number;
}

/**
 * Parses a request body; on failure the message is the first field's own words (e.g. which caliper
 * has no length), so a person sees what to fix, and every field message travels along.
 */
export function parseMeasurementInput<S extends z.ZodType>(schema: S, body: unknown): z.output<S> {
  const r = schema.safeParse(body);
  if (r.success) return r.data;
  const fields = fieldMessages(r.error);
  const first = r.error.issues[0];
  const where = first && first.path.length > 0 ? first.path.join(".") : null;
  const message = first ? (where && !/caliper/i.test(first.message) ? `${where}: ${first.message}` : first.message) : "Some fields need correcting.";
  throw new AppError("invalid", message, { fields });
}
