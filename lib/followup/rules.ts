// Plain words for the deviation rules and resolution plans, shared by server and browser code.
import { deviationRules, type DeviationRule } from "@/measure";

/** Rules raised by the deviation engine (measure/deviations.ts). Other rules (e.g. a drain's persistent air leak) are raised elsewhere. */
export const ENGINE_RULES: readonly DeviationRule[] = deviationRules;

export const RULE_LABELS: Record<string, string> = {
  enlarging: "Larger than the previous film",
  "slower-than-expected": "Shrinking slower than expected",
  "large-by-guideline": "Large by a guideline distance",
  "methods-disagree": "Size methods disagree on one film",
  overdue: "Repeat film overdue",
  "unresolved-by-prediction": "Still open after the predicted resolution",
  "persistent-air-leak": "Persistent air leak",
};

export const ruleLabel = (rule: string): string => RULE_LABELS[rule] ?? rule;

/** Rules that a clinic nurse acts on with a booking (an earlier or a first repeat film). */
export const BOOKING_RULES = ["overdue", "slower-than-expected", "unresolved-by-prediction"] as const;

export const FLAG_STATES = ["open", "acknowledged", "resolved", "superseded"] as const;
export type FlagState = (typeof FLAG_STATES)[number];
/** Live = still needs a decision. */
export const LIVE_STATES: readonly FlagState[] = ["open", "acknowledged"];

export const PLAN_KINDS = ["repeat-film", "refer-drain", "continue-observation", "refer-surgery", "other"] as const;
export type PlanKind = (typeof PLAN_KINDS)[number];
export const PLAN_LABELS: Record<PlanKind, string> = {
  "repeat-film": "Repeat film in … days",
  "refer-drain": "Refer for a chest drain",
  "continue-observation": "Continue observation",
  "refer-surgery": "Refer for a thoracic surgical opinion",
  other: "Other (describe)",
};

export interface FlagPlan {
  kind: PlanKind;
  days?: number | undefined;
  text?: string | undefined;
}

export function planWords(plan: FlagPlan | null | undefined): string {
  if (!plan) return "—";
  switch (plan.kind) {
    case "repeat-film":
      return `Repeat film in ${plan.days ?? "?"} days${plan.text ? `: ${plan.text}` : ""}`;
    case "other":
      return plan.text ?? "Other";
    default:
      return `${PLAN_LABELS[plan.kind]}${plan.text ? `: ${plan.text}` : ""}`;
  }
}

const n = (v: unknown, digits = 1): string => (typeof v === "number" && Number.isFinite(v) ? (Math.round(v * 10 ** digits) / 10 ** digits).toString() : "—");

/** The key figures of a flag in a few words, for the board and the episode page. */
export function figuresSummary(rule: string, f: Record<string, unknown>): string {
  switch (rule) {
    case "enlarging":
      return `${n(f.percent)} % on day ${n(f.dayIndex)}, was ${n(f.previousPercent)} % (+${n(f.increasePoints)} points)`;
    case "slower-than-expected":
      return `${n(f.percent)} % on day ${n(f.dayIndex)}, expected ${n(f.expectedPercent)} % (+${n(f.excessPoints)} points)`;
    case "large-by-guideline":
      return `${typeof f.guideline === "string" ? f.guideline : "Guideline"}: ${n(f.valueCm)} cm (large from ${n(f.thresholdCm)} cm)`;
    case "methods-disagree":
      return `Day ${n(f.dayIndex)}: Light ${n(f.light)} %, Rhea ${n(f.rhea)} %, Collins ${n(f.collins)} %, spread ${n(f.spreadPoints)} points`;
    case "overdue":
      return `Due day ${n(f.dueDay)}, ${n(f.daysLate)} days late`;
    case "unresolved-by-prediction":
      return `Predicted resolved by day ${n(f.predictedResolutionDay)}; now day ${n(f.now)}`;
    default:
      return "";
  }
}
