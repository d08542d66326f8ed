import { z } from "zod";
import { isoDate, optionalText, paging } from "./common";

export const SEXES = ["female", "male", "other", "unknown"] as const;

export const patientInput = z.object({
  hospitalNumber: z
    .string()
    .trim()
    .toUpperCase()
    .regex(/^[A-Z0-9-]{4,20}$/, "4 to 20 letters, digits or hyphens"),
  familyName: z.string().trim().min(1, "Required").max(100, "At most 100 characters"),
  givenName: z.string().trim().min(1, "Required").max(100, "At most 100 characters"),
  dateOfBirth: isoDate.refine((d) => d <= new Date().toISOString().slice(0, 10) && d >= "1900-01-01", "Must be a past date after 1900"),
  sex: z.enum(SEXES, { message: "Choose one" }),
  email: z.union([z.literal(""), z.email("Not a valid e-mail address")]).optional().transform((v) => (v ? v.toLowerCase() : null)),
  phone: optionalText(40).refine((v) => !v || /^[+0-9 ()-]{6,40}$/.test(v), "Digits, spaces, + ( ) - only"),
  emailConsent: z.boolean().default(false),
});
export type PatientInput = z.output<typeof patientInput>;

export const patientUpdate = patientInput.extend({ version: z.number().int().min(1) });

export const patientListQuery = paging.extend({
  q: z.string().trim().max(100).optional(),
  sort: z.enum(["name", "hospitalNumber", "dateOfBirth", "updated"]).default("name"),
  dir: z.enum(["asc", "desc"]).default("asc"),
});
