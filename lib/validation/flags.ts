import { z } from "zod";
import { FLAG_STATES, PLAN_KINDS, RULE_LABELS } from "@/lib/followup/rules";
import { paging, uuid } from "./common";

export const flagListQuery = paging.extend({
  state: z.enum([...FLAG_STATES, "live", "all"], { message: "Choose live, open, acknowledged, resolved, superseded or all" }).default("live"),
  rule: z.enum(Object.keys(RULE_LABELS) as [string, ...string[]], { message: "Not a known rule" }).optional(),
  episode: uuid.optional(),
  minAgeDays: z.coerce.number({ message: "Age in whole days" }).int("Age in whole days").min(0, "Age in whole days").max(3650).optional(),
  sort: z.enum(["raised", "rule", "patient", "state"]).default("raised"),
  dir: z.enum(["asc", "desc"]).default("desc"),
});
export type FlagListQuery = z.output<typeof flagListQuery>;

export const flagPlan = z
  .object({
    kind: z.enum(PLAN_KINDS, { message: "Choose a plan" }),
    days: z.number({ message: "Days as a whole number" }).int("Days as a whole number").min(1, "At least 1 day").max(365, "At most 365 days").optional(),
    text: z.string().trim().max(500, "At most 500 characters").optional(),
  })
  .superRefine((p, ctx) => {
    if (p.kind === "repeat-film" && p.days === undefined) ctx.addIssue({ code: "custom", path: ["days"], message: "Say in how many days the repeat film is wanted" });
    if (p.kind === "other" && !p.text) ctx.addIssue({ code: "custom", path: ["text"], message: "Describe the plan" });
  })
  .transform((p) => ({ kind: p.kind, ...(p.days !== undefined ? { days: p.days } : {}), ...(p.text ? { text: p.text } : {}) }));

export const flagAction = z.discriminatedUnion(
  "action",
  [
    z.object({ action: z.literal("acknowledge") }),
    z.object({
      action: z.literal("resolve"),
      note: z.string({ message: "Write a note on the decision" }).trim().min(1, "Write a note on the decision").max(2000, "At most 2,000 characters"),
      /** Optional: a decision can be recorded without a follow-up plan. */
      plan: flagPlan.optional(),
    }),
  ],
  { message: "Say acknowledge or resolve" },
);
export type FlagAction = z.output<typeof flagAction>;
