// Rule and protocol settings: defaults (with their sources) overlaid by what an admin stored.
import "server-only";
import type { Trx } from "@/db/knex";
import { writeAudit } from "@/db/audit";
import type { Actor } from "@/db/types";

export interface FollowUpProtocol {
  key: string;
  label: string;
  /** Days after the anchor event until the repeat film. */
  repeatFilmAfterDays: number;
  anchor: "discharge" | "aspiration" | "drain-removal" | "presentation";
  source: string;
}

export const DEFAULT_PROTOCOLS: FollowUpProtocol[] = [
  { key: "observation", label: "Observation: repeat film 2-4 weeks after discharge", repeatFilmAfterDays: 14, anchor: "discharge", source: "MacDuff A et al., BTS pleural disease guideline, Thorax 2010;65 Suppl 2 (review at 2-4 weeks)" },
  { key: "aspiration", label: "After aspiration: repeat film 2-4 weeks later", repeatFilmAfterDays: 14, anchor: "aspiration", source: "MacDuff A et al., BTS 2010 (review at 2-4 weeks)" },
  { key: "drain", label: "After drain removal: repeat film 2-4 weeks later", repeatFilmAfterDays: 14, anchor: "drain-removal", source: "MacDuff A et al., BTS 2010 (review at 2-4 weeks)" },
  { key: "early", label: "Early check: repeat film 48 hours after presentation", repeatFilmAfterDays: 2, anchor: "presentation", source: "common practice" },
];

export async function getSetting<T>(trx: Trx, key: string, fallback: T): Promise<T> {
  const row = await trx("settings").where({ key }).first<{ value: T } | undefined>("value");
  return row ? row.value : fallback;
}

export async function putSetting(trx: Trx, actor: Actor, key: string, value: unknown): Promise<void> {
  const before = await trx("settings").where({ key }).first<{ value: unknown } | undefined>("value");
  await trx("settings")
    .insert({ key, value: JSON.stringify(value), updated_by: actor.id, updated_at: trx.fn.now() })
    .onConflict("key")
    .merge();
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "settings.update", entity: "settings", entityId: key, before: before?.value ?? null, after: value });
}

export const getProtocols = (trx: Trx) => getSetting<FollowUpProtocol[]>(trx, "followUpProtocols", DEFAULT_PROTOCOLS);
