import { z } from "zod";
import { isoDate, isoDateTime, optionalText, uuid } from "./common";

export const SIDES = ["left", "right"] as const;
export const AETIOLOGIES = ["primary-spontaneous", "secondary-spontaneous", "iatrogenic", "traumatic"] as const;
export const MANAGEMENTS = ["observation", "needle-aspiration", "chest-drain", "ambulatory-valve", "surgery"] as const;
export const EPISODE_STATUSES = ["active", "resolved", "closed"] as const;
export const METHODS = ["collins", "light", "rhea"] as const;

export const AETIOLOGY_LABELS: Record<(typeof AETIOLOGIES)[number], string> = {
  "primary-spontaneous": "Primary spontaneous",
  "secondary-spontaneous": "Secondary spontaneous",
  iatrogenic: "Iatrogenic",
  traumatic: "Traumatic",
};
export const MANAGEMENT_LABELS: Record<(typeof MANAGEMENTS)[number], string> = {
  observation: "Observation",
  "needle-aspiration": "Needle aspiration",
  "chest-drain": "Chest drain",
  "ambulatory-valve": "Ambulatory valve",
  surgery: "Surgery",
};
export const METHOD_LABELS: Record<(typeof METHODS)[number], string> = { collins: "Collins", light: "Light index", rhea: "Rhea" };

const episodeFields = z.object({
  side: z.enum(SIDES, { message: "Choose left or right" }),
  onsetOn: isoDate.nullable().optional(),
  presentedOn: isoDate,
  aetiology: z.enum(AETIOLOGIES, { message: "Choose an aetiology" }),
  underlyingDisease: optionalText(200),
  procedure: optionalText(200),
  management: z.enum(MANAGEMENTS, { message: "Choose the management" }),
  primaryMethod: z.enum(METHODS).default("collins"),
  followUpProtocol: optionalText(60),
  consultantId: uuid.nullable().optional(),
  registrarId: uuid.nullable().optional(),
  notes: optionalText(4000),
});

function checkEpisode(v: z.output<typeof episodeFields>, ctx: z.RefinementCtx) {
  if (v.aetiology === "secondary-spontaneous" && !v.underlyingDisease) {
    ctx.addIssue({ code: "custom", path: ["underlyingDisease"], message: "Name the underlying lung disease" });
  }
  if (v.aetiology === "iatrogenic" && !v.procedure) {
    ctx.addIssue({ code: "custom", path: ["procedure"], message: "Name the procedure that caused it" });
  }
  if (v.onsetOn && v.onsetOn > v.presentedOn) {
    ctx.addIssue({ code: "custom", path: ["onsetOn"], message: "Onset cannot be after presentation" });
  }
}

export const episodeInput = episodeFields.superRefine(checkEpisode);
export type EpisodeInput = z.output<typeof episodeInput>;

export const episodeUpdate = episodeFields
  .extend({
    status: z.enum(EPISODE_STATUSES),
    resolvedOn: isoDate.nullable().optional(),
    dischargedOn: isoDate.nullable().optional(),
    version: z.number().int().min(1),
  })
  .superRefine((v, ctx) => {
    checkEpisode(v, ctx);
    if (v.status === "resolved" && !v.resolvedOn) {
      ctx.addIssue({ code: "custom", path: ["resolvedOn"], message: "Give the date of the film that confirmed resolution" });
    }
  });
export type EpisodeUpdate = z.output<typeof episodeUpdate>;

export const oxygenStart = z.object({
  startedAt: isoDateTime,
  flowLMin: z.number().min(0.5, "At least 0.5 L/min").max(60, "At most 60 L/min").nullable().optional(),
  device: optionalText(60),
});
export const oxygenStop = z.object({ endedAt: isoDateTime });

export const procedureInput = z.object({
  kind: z.enum(["needle-aspiration", "ambulatory-valve", "surgery", "other"]),
  performedAt: isoDateTime,
  volumeMl: z.number().int().min(0).max(5000).nullable().optional(),
  notes: optionalText(1000),
});
