// The pure half of flag evaluation: turn the deviation rules' findings into one draft flag per rule,
// and decide, against the flags already stored, what to raise, update, supersede or leave alone.
// No database and no clock here, so the decisions are unit-tested on their own.
import type { Deviation, DeviationRule } from "@/measure";
import { ENGINE_RULES } from "./rules";

export type Figures = Record<string, unknown>;

/** One flag as the engine would like it to be: at most one per rule per episode (a unique index enforces it). */
export interface FlagDraft {
  rule: DeviationRule;
  filmId: string | null;
  figures: Figures;
  reason: string;
  /** What the finding rests on (films, due day, baseline). A resolved flag with the same evidence is never raised again. */
  evidence: string;
}

export interface StoredLiveFlag {
  id: string;
  rule: string;
  state: "open" | "acknowledged";
  filmId: string | null;
  figures: Figures;
  reason: string;
}

/** A flag a clinician has already decided on (state resolved). */
export interface StoredResolvedFlag {
  id: string;
  rule: string;
  evidence: string | null;
}

export type ReconcileStep =
  | { op: "raise"; draft: FlagDraft }
  | { op: "update"; id: string; draft: FlagDraft }
  | { op: "keep"; id: string; rule: string }
  | { op: "supersede"; id: string; rule: string }
  | { op: "already-decided"; resolvedId: string; draft: FlagDraft };

function round(n: number, digits: number): string {
  return n.toFixed(digits);
}

/** The evidence key of one finding: the films it rests on, or the due day / baseline for rules without a film. */
export function evidenceOf(d: Deviation): string {
  const f = d.figures;
  switch (d.rule) {
    case "enlarging":
      return `film:${d.filmId ?? "?"}<${String(f.previousFilmId ?? "?")}`;
    case "large-by-guideline":
      return `film:${d.filmId ?? "?"}:${String(f.guideline ?? "?")}`;
    case "overdue":
      return `due:${typeof f.dueDay === "number" ? round(f.dueDay, 3) : "?"}`;
    case "unresolved-by-prediction":
      return `baseline:${String(f.baselineFilmId ?? "?")}:${typeof f.predictedResolutionDay === "number" ? round(f.predictedResolutionDay, 1) : "?"}`;
    default:
      return `film:${d.filmId ?? "?"}`;
  }
}

const dayOf = (d: Deviation): number => (typeof d.figures.dayIndex === "number" ? d.figures.dayIndex : Number.NEGATIVE_INFINITY);

/**
 * Groups findings by rule (one flag per rule): the finding on the latest film leads (its figures and film),
 * the others are kept under `items`; reasons are joined. Order follows the rule order of measure/.
 */
export function draftsFromDeviations(found: readonly Deviation[]): FlagDraft[] {
  const byRule = new Map<DeviationRule, Deviation[]>();
  for (const d of found) {
    const list = byRule.get(d.rule);
    if (list) list.push(d);
    else byRule.set(d.rule, [d]);
  }
  const drafts: FlagDraft[] = [];
  for (const rule of ENGINE_RULES) {
    const list = byRule.get(rule);
    if (!list || list.length === 0) continue;
    let lead = list[0] as Deviation;
    for (const d of list) if (dayOf(d) >= dayOf(lead)) lead = d;
    const evidence = list.map(evidenceOf).sort().join("+");
    const figures: Figures = { ...lead.figures, evidence };
    if (list.length > 1) figures.items = list.map((d) => ({ filmId: d.filmId, figures: d.figures, reason: d.reason }));
    drafts.push({ rule, filmId: lead.filmId, figures, reason: list.map((d) => d.reason).join(" "), evidence });
  }
  return drafts;
}

/** JSON with sorted keys, so figures read back from jsonb compare equal to freshly computed ones. */
export function stableJson(v: unknown): string {
  if (Array.isArray(v)) return `[${v.map(stableJson).join(",")}]`;
  if (v !== null && typeof v === "object") {
    const entries = Object.entries(v as Record<string, unknown>)
      .filter(([, x]) => x !== undefined)
      .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
    return `{${entries.map(([k, x]) => `${JSON.stringify(k)}:${stableJson(x)}`).join(",")}}`;
  }
  return JSON.stringify(v) ?? "null";
}

function sameAsStored(draft: FlagDraft, live: StoredLiveFlag): boolean {
  return draft.filmId === live.filmId && draft.reason === live.reason && stableJson(draft.figures) === stableJson(live.figures);
}

/**
 * Decides what to do with each rule. `live` are the episode's open or acknowledged flags; `resolved` its
 * resolved flags, newest first. Only the engine's own rules are superseded: flags raised by other parts
 * of Rimwatch (e.g. a drain's persistent air leak) are left alone.
 */
export function reconcile(drafts: readonly FlagDraft[], live: readonly StoredLiveFlag[], resolved: readonly StoredResolvedFlag[]): ReconcileStep[] {
  const steps: ReconcileStep[] = [];
  const liveByRule = new Map(live.map((f) => [f.rule, f]));
  const firing = new Set<string>();
  for (const draft of drafts) {
    firing.add(draft.rule);
    const current = liveByRule.get(draft.rule);
    if (current) {
      steps.push(sameAsStored(draft, current) ? { op: "keep", id: current.id, rule: draft.rule } : { op: "update", id: current.id, draft });
      continue;
    }
    const decided = resolved.find((r) => r.rule === draft.rule && r.evidence === draft.evidence);
    steps.push(decided ? { op: "already-decided", resolvedId: decided.id, draft } : { op: "raise", draft });
  }
  const engine = new Set<string>(ENGINE_RULES);
  for (const f of live) {
    if (engine.has(f.rule) && !firing.has(f.rule)) steps.push({ op: "supersede", id: f.id, rule: f.rule });
  }
  return steps;
}
