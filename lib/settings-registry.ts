// The registry of rule and protocol settings: each group has a key, a title, a zod schema, defaults,
// and per field a label, a unit and the source of its default. The settings screen and GET/PUT
// /api/settings are built from this list; other parts of Rimwatch add their groups to SETTING_GROUPS.
import "server-only";
import { z } from "zod";
import { defaultDeviationSettings, deviationSettingNotes, type DeviationSettings, type SettingBasis } from "@/measure";
import { AppError } from "@/lib/errors";
import { getSetting, putSetting } from "@/lib/settings";
import type { Trx } from "@/db/knex";
import type { Actor } from "@/db/types";
import { diaryGroup, type DiarySettings } from "@/lib/mail/settings";
import { travelGroup, type TravelSettings } from "@/lib/travel/settings";
import { drainGroup, type DrainSettings } from "@/lib/drains/settings";

export interface SettingField {
  label: string;
  unit?: string;
  /** Where the default comes from (authors, year, journal or guideline; or common practice). */
  source: string;
  basis: SettingBasis;
  /** For the form: number inputs take a step. */
  step?: number;
}

export interface SettingGroup<S extends z.ZodObject = z.ZodObject> {
  key: string;
  title: string;
  description: string;
  schema: S;
  defaults: z.output<S>;
  fields: Record<string, SettingField>;
}

const num = (label: string, min: number, max: number, opts: { integer?: boolean; exclusiveMin?: boolean } = {}) => {
  let s = z.number({ message: `${label}: enter a number` }).finite(`${label}: enter a number`);
  if (opts.integer) s = s.int(`${label}: a whole number`);
  s = opts.exclusiveMin ? s.gt(min, `${label}: more than ${min}`) : s.min(min, `${label}: at least ${min}`);
  return s.max(max, `${label}: at most ${max}`);
};

// Ranges mirror the checks of measure/'s resolveDeviationSettings (no negative tolerances, positive rates and distances),
// with upper bounds a person could not mean to exceed.
const deviationSchema = z
  .object({
    enlargingTolerancePoints: num("Enlarging tolerance", 0, 50),
    aboveBandPoints: num("Band above the expected course", 0, 50),
    consecutiveAbovePoints: num("Excess on two consecutive films", 0, 50),
    largeBtsHilumCm: num("BTS large from", 0, 10, { exclusiveMin: true }),
    largeAccpApexCm: num("ACCP large from", 0, 10, { exclusiveMin: true }),
    disagreementPoints: num("Method disagreement", 0, 100),
    overdueGraceDays: num("Grace for a planned film", 0, 30),
    unresolvedMarginDays: num("Margin after the predicted resolution", 0, 90),
    ratePerDay: num("Resorption rate on air", 0, 10, { exclusiveMin: true }),
    oxygenMultiplier: num("Oxygen multiplier", 1, 10),
  })
  .strict() satisfies z.ZodType<DeviationSettings>;

const note = (k: keyof DeviationSettings) => ({ source: deviationSettingNotes[k].source, basis: deviationSettingNotes[k].basis });

export const deviationGroup: SettingGroup<typeof deviationSchema> = {
  key: "deviationRules",
  title: "Deviation rules",
  description:
    "When a flag is raised on the deviation board. The resorption rate and oxygen multiplier also draw the expected line of the resorption chart; the band above the expected course is its shaded band.",
  schema: deviationSchema,
  defaults: { ...defaultDeviationSettings },
  fields: {
    ratePerDay: { label: "Resorption rate on air", unit: "% of hemithorax per day", step: 0.05, ...note("ratePerDay") },
    oxygenMultiplier: { label: "Faster on supplemental oxygen by", unit: "times", step: 0.1, ...note("oxygenMultiplier") },
    aboveBandPoints: { label: "Band above the expected course", unit: "percentage points", step: 0.5, ...note("aboveBandPoints") },
    consecutiveAbovePoints: { label: "Excess allowed on two consecutive films", unit: "percentage points", step: 0.5, ...note("consecutiveAbovePoints") },
    enlargingTolerancePoints: { label: "Enlarging: tolerance over the previous film", unit: "percentage points", step: 0.5, ...note("enlargingTolerancePoints") },
    largeBtsHilumCm: { label: "Large by BTS from (interpleural distance at the hilum)", unit: "cm", step: 0.1, ...note("largeBtsHilumCm") },
    largeAccpApexCm: { label: "Large by ACCP from (apex to cupola)", unit: "cm", step: 0.1, ...note("largeAccpApexCm") },
    disagreementPoints: { label: "Methods disagree when they spread by more than", unit: "percentage points", step: 1, ...note("disagreementPoints") },
    overdueGraceDays: { label: "Grace before a planned film is overdue", unit: "days", step: 1, ...note("overdueGraceDays") },
    unresolvedMarginDays: { label: "Still open this long after the predicted resolution", unit: "days", step: 1, ...note("unresolvedMarginDays") },
  },
};

// Follow-up protocols: days from an anchor event to the repeat film. The protocols themselves (key,
// anchor, source) are fixed; the days are settings. Review at 2-4 weeks: MacDuff A et al., BTS 2010.
export interface FollowUpProtocol {
  key: string;
  label: string;
  /** Days after the anchor event until the repeat film. */
  repeatFilmAfterDays: number;
  anchor: "discharge" | "aspiration" | "drain-removal" | "presentation";
  source: string;
}

const PROTOCOLS = [
  { key: "observation", field: "observationDays", anchor: "discharge", words: "Observation: repeat film {d} days after discharge", source: "MacDuff A et al., BTS pleural disease guideline, Thorax 2010;65 Suppl 2 (review at 2-4 weeks)" },
  { key: "aspiration", field: "aspirationDays", anchor: "aspiration", words: "After aspiration: repeat film {d} days later", source: "MacDuff A et al., BTS 2010 (review at 2-4 weeks)" },
  { key: "drain", field: "drainDays", anchor: "drain-removal", words: "After drain removal: repeat film {d} days later", source: "MacDuff A et al., BTS 2010 (review at 2-4 weeks)" },
  { key: "early", field: "earlyDays", anchor: "presentation", words: "Early check: repeat film {d} days after presentation", source: "common practice" },
] as const;

const protocolSchema = z
  .object({
    observationDays: num("Observation", 1, 90, { integer: true }),
    aspirationDays: num("After aspiration", 1, 90, { integer: true }),
    drainDays: num("After drain removal", 1, 90, { integer: true }),
    earlyDays: num("Early check", 1, 14, { integer: true }),
  })
  .strict();

export const protocolGroup: SettingGroup<typeof protocolSchema> = {
  key: "followUpProtocols",
  title: "Follow-up protocols",
  description: "Days from the anchor event to the repeat film that the follow-up diary proposes. An episode follows the protocol chosen on it, else the one for its management.",
  schema: protocolSchema,
  defaults: { observationDays: 14, aspirationDays: 14, drainDays: 14, earlyDays: 2 },
  fields: {
    observationDays: { label: "Observation: after discharge", unit: "days", step: 1, source: PROTOCOLS[0].source, basis: "published" },
    aspirationDays: { label: "After needle aspiration", unit: "days", step: 1, source: PROTOCOLS[1].source, basis: "published" },
    drainDays: { label: "After chest drain removal", unit: "days", step: 1, source: PROTOCOLS[2].source, basis: "published" },
    earlyDays: { label: "Early check: after presentation", unit: "days", step: 1, source: "common practice: a film about 48 hours after presentation", basis: "common practice" },
  },
};

/** The follow-up protocols with the days in force (for the episode form and the diary's proposals). */
export async function getProtocols(trx: Trx, teamId: string): Promise<FollowUpProtocol[]> {
  const days = await readGroup(trx, teamId, protocolGroup);
  return PROTOCOLS.map((p) => ({ key: p.key, label: p.words.replace("{d}", String(days[p.field])), repeatFilmAfterDays: days[p.field], anchor: p.anchor, source: p.source }));
}

/** Every settings group, in the order the settings screen shows them. Add new groups here. */
export const SETTING_GROUPS: readonly SettingGroup[] = [deviationGroup, protocolGroup, diaryGroup, travelGroup, drainGroup];

export function findGroup(key: string): SettingGroup {
  const g = SETTING_GROUPS.find((x) => x.key === key);
  if (!g) throw new AppError("not_found", `There is no settings group called “${key}”.`);
  return g;
}

/**
 * The values in force for one group: what an admin stored, field by field, over the defaults.
 * A stored field that no longer passes the schema (e.g. after a range changed) falls back to its default.
 */
export async function readGroup<S extends z.ZodObject>(trx: Trx, teamId: string, group: SettingGroup<S>): Promise<z.output<S>> {
  return groupValues(group, await getSetting<unknown>(trx, teamId, group.key, null));
}

/** readGroup's merge, for a caller that read the stored value itself (in a statement of its own). */
export function groupValues<S extends z.ZodObject>(group: SettingGroup<S>, stored: unknown): z.output<S> {
  const merged: Record<string, unknown> = { ...(group.defaults as Record<string, unknown>) };
  if (stored && typeof stored === "object") {
    for (const [k, v] of Object.entries(stored as Record<string, unknown>)) {
      if (!(k in merged)) continue;
      const candidate = { ...merged, [k]: v };
      if (group.schema.safeParse(candidate).success) merged[k] = v;
    }
  }
  return group.schema.parse(merged);
}

export const readDeviationSettings = (trx: Trx, teamId: string): Promise<DeviationSettings> => readGroup(trx, teamId, deviationGroup);
export const readDiarySettings = (trx: Trx, teamId: string): Promise<DiarySettings> => readGroup(trx, teamId, diaryGroup);
export const readTravelSettings = (trx: Trx, teamId: string): Promise<TravelSettings> => readGroup(trx, teamId, travelGroup);
export const readDrainSettings = (trx: Trx, teamId: string): Promise<DrainSettings> => readGroup(trx, teamId, drainGroup);

export interface GroupView {
  key: string;
  title: string;
  description: string;
  values: Record<string, unknown>;
  defaults: Record<string, unknown>;
  fields: Record<string, SettingField>;
}

export async function listSettingGroups(trx: Trx, teamId: string): Promise<GroupView[]> {
  return Promise.all(
    SETTING_GROUPS.map(async (g) => ({
      key: g.key,
      title: g.title,
      description: g.description,
      values: await readGroup<z.ZodObject>(trx, teamId, g),
      defaults: g.defaults,
      fields: g.fields,
    })),
  );
}

/** Validates a whole group with its schema (400 with field messages) and stores it, audited. */
export async function writeGroup(trx: Trx, actor: Actor, key: string, values: unknown): Promise<GroupView> {
  const group = findGroup(key);
  const parsed = group.schema.safeParse(values);
  if (!parsed.success) {
    const fields: Record<string, string> = {};
    for (const issue of parsed.error.issues) fields[issue.path.join(".") || "_"] ??= issue.message;
    throw new AppError("invalid", `Some ${group.title.toLowerCase()} need correcting; nothing was saved.`, { fields });
  }
  await putSetting(trx, actor, group.key, parsed.data);
  return { key: group.key, title: group.title, description: group.description, values: parsed.data, defaults: group.defaults, fields: group.fields };
}
