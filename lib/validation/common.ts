import { z } from "zod";

/** A calendar date typed as YYYY-MM-DD, and a real one. */
export const isoDate = z.iso.date({ message: "Use a date such as 2026-12-02" });
export const isoDateTime = z.iso.datetime({ offset: true, message: "Use a date and time such as 2026-12-02T09:30:00Z" });
export const uuid = z.uuid({ message: "Not a valid identifier" });
export const optionalText = (max: number) =>
  z
    .string()
    .trim()
    .max(max, `At most ${max} characters`)
    .transform((v) => (v === "" ? null : v))
    .nullable()
    .optional();

export const paging = z.object({
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(100).default(25),
});

export const PASSWORD_RULE = "At least 10 characters, with a letter and a digit";
export const password = z
  .string()
  .min(10, PASSWORD_RULE)
  .max(200, "At most 200 characters")
  .refine((v) => /[A-Za-z]/.test(v) && /\d/.test(v), PASSWORD_RULE);
