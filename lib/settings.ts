// Stored settings: one JSON value per key, audited. Groups, defaults and sources: lib/settings-registry.ts.
import "server-only";
import type { Trx } from "@/db/knex";
import { writeAudit } from "@/db/audit";
import type { Actor } from "@/db/types";

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
