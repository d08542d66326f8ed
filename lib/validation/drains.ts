// Chest drains and drain observations: one schema per operation, shared by the form and the route.
import { z } from "zod";
import { isoDateTime, optionalText } from "./common";

export const TECHNIQUES = ["seldinger", "blunt-dissection"] as const;
export const INDICATIONS = ["air", "blood", "fluid"] as const;
export const DRAINAGES = ["underwater-seal", "flutter-valve"] as const;
export const BUBBLING = ["none", "on-coughing", "on-expiration", "continuous"] as const;

export type Technique = (typeof TECHNIQUES)[number];
export type Indication = (typeof INDICATIONS)[number];
export type Drainage = (typeof DRAINAGES)[number];
export type Bubbling = (typeof BUBBLING)[number];

export const TECHNIQUE_LABELS: Record<Technique, string> = { seldinger: "Seldinger", "blunt-dissection": "Blunt dissection" };
export const INDICATION_LABELS: Record<Indication, string> = { air: "Air (pneumothorax)", blood: "Blood (haemothorax)", fluid: "Fluid (effusion)" };
export const DRAINAGE_LABELS: Record<Drainage, string> = { "underwater-seal": "Underwater seal", "flutter-valve": "Flutter valve" };
export const BUBBLING_LABELS: Record<Bubbling, string> = {
  none: "None",
  "on-coughing": "On coughing",
  "on-expiration": "On expiration",
  continuous: "Continuous",
};

/** French gauges of chest drains in use run from about 6 to 40 Fr (common practice). */
export const FR_RANGE = { min: 6, max: 40 } as const;
/** Suction level in kPa below atmospheric; wall suction for drains rarely exceeds a few kPa (common practice). */
export const SUCTION_KPA_RANGE = { min: 0.1, max: 10 } as const;

const suctionFields = {
  suctionOn: z.boolean({ message: "Say whether suction is on" }).default(false),
  suctionKpa: z
    .number({ message: "Give the suction level as a number of kPa" })
    .min(SUCTION_KPA_RANGE.min, `At least ${SUCTION_KPA_RANGE.min} kPa`)
    .max(SUCTION_KPA_RANGE.max, `At most ${SUCTION_KPA_RANGE.max} kPa`)
    .nullable()
    .optional(),
};

function checkSuction(v: { suctionOn: boolean; suctionKpa?: number | null | undefined }, ctx: z.RefinementCtx) {
  if (v.suctionOn && (v.suctionKpa === null || v.suctionKpa === undefined)) {
    ctx.addIssue({ code: "custom", path: ["suctionKpa"], message: "Give the suction level when suction is on" });
  }
  if (!v.suctionOn && v.suctionKpa !== null && v.suctionKpa !== undefined) {
    ctx.addIssue({ code: "custom", path: ["suctionKpa"], message: "Leave the level empty when suction is off" });
  }
}

export const drainInsert = z
  .object({
    insertedAt: isoDateTime,
    insertedBy: z.string({ message: "Say who inserted the drain" }).trim().min(2, "Say who inserted the drain").max(120, "At most 120 characters"),
    sizeFr: z
      .number({ message: "Give the size in French gauge (Fr)" })
      .int("A whole number of Fr")
      .min(FR_RANGE.min, `At least ${FR_RANGE.min} Fr`)
      .max(FR_RANGE.max, `At most ${FR_RANGE.max} Fr`),
    site: z.string({ message: "Give the insertion site" }).trim().min(2, "Give the insertion site").max(120, "At most 120 characters"),
    technique: z.enum(TECHNIQUES, { message: "Choose Seldinger or blunt dissection" }),
    indication: z.enum(INDICATIONS, { message: "Choose air, blood or fluid" }).default("air"),
    drainage: z.enum(DRAINAGES, { message: "Choose underwater seal or flutter valve" }),
    ...suctionFields,
  })
  .superRefine(checkSuction);
export type DrainInsert = z.output<typeof drainInsert>;

/** PATCH /api/drains/[id]: either remove the drain, or change its suction. */
export const drainUpdate = z.discriminatedUnion(
  "action",
  [
    z.object({
      action: z.literal("remove"),
      removedAt: isoDateTime,
      removalReason: z.string({ message: "Give the reason for removal" }).trim().min(3, "Give the reason for removal").max(300, "At most 300 characters"),
    }),
    z.object({ action: z.literal("suction"), ...suctionFields }).superRefine(checkSuction),
  ],
  { message: "Say what to change: action 'remove' or 'suction'" },
);
export type DrainUpdate = z.output<typeof drainUpdate>;

export const drainObservation = z.object({
  observedAt: isoDateTime,
  swinging: z.boolean({ message: "Say whether the fluid column swings" }),
  bubbling: z.enum(BUBBLING, { message: "Choose none, on coughing, on expiration or continuous" }),
  fluidMl: z
    .number({ message: "Give the fluid output as a number of mL" })
    .int("A whole number of mL")
    .min(0, "Not below 0 mL")
    .max(5000, "At most 5,000 mL")
    .nullable()
    .optional(),
  note: optionalText(500),
});
export type DrainObservationInput = z.output<typeof drainObservation>;
