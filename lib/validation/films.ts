import { z } from "zod";
import { IMAGE_POSITIONS, PROJECTIONS } from "@/lib/film-view";
import { isoDateTime } from "./common";

/** PATCH /api/films/[id]: a person corrects what the file could not say. */
export const filmUpdate = z
  .object({
    takenAt: isoDateTime.optional(),
    projection: z.enum(PROJECTIONS, { message: "Choose a projection such as PA or AP" }).nullable().optional(),
    position: z.enum(IMAGE_POSITIONS, { message: "Choose erect, semi-erect, supine or decubitus" }).nullable().optional(),
  })
  .refine((v) => v.takenAt !== undefined || v.projection !== undefined || v.position !== undefined, {
    message: "Send at least one of takenAt, projection or position",
    path: ["_"],
  });
export type FilmUpdate = z.output<typeof filmUpdate>;

/** DELETE /api/films/[id]: withdrawing a film needs a reason, kept in the record. */
export const filmWithdraw = z.object({
  reason: z
    .string({ message: "Say why the film is withdrawn" })
    .trim()
    .min(3, "Say why the film is withdrawn (at least 3 characters)")
    .max(500, "At most 500 characters"),
});

const coordinate = z.number({ message: "A number of pixels" }).min(0, "Inside the film (not negative)");
const point = z.object({ x: coordinate, y: coordinate });

/** POST /api/films/[id]/calibration: a reference line of known length, in original film pixels. */
export const referenceLineInput = z.object({
  segment: z.object({ a: point, b: point }),
  knownLengthMm: z
    .number({ message: "Give the known length in millimetres" })
    .positive("The known length must be more than 0 mm")
    .max(1000, "At most 1,000 mm"),
  plane: z.enum(["film", "patient"], { message: "Say whether the object lies on the detector (film) or at the patient" }),
});
export type ReferenceLineInput = z.output<typeof referenceLineInput>;

export const FILM_VARIANTS = ["display", "thumb", "original"] as const;
export const filmImageQuery = z.object({ variant: z.enum(FILM_VARIANTS, { message: "variant is display, thumb or original" }).default("display") });

export const filmListQuery = z.object({ include: z.enum(["withdrawn"], { message: "include may only be 'withdrawn'" }).optional() });
