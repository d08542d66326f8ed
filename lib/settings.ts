// Stored settings: one JSON value per team and key, audited. Groups, defaults and sources:
// lib/settings-registry.ts. A row without a team (stored before settings were per team) is what a
// team reads until it saves its own value.
import "server-only";
import type { Trx } from "@/db/knex";
import { writeAudit } from "@/db/audit";
import type { Actor } from "@/db/types";

export async function getSetting<T>(trx: Trx, teamId: string, key: string, fallback: T): Promise<T> {
  const row = await trx("settings")
    .where({ key })
    .where((w) => void w.where("team_id", teamId).orWhereNull("team_id"))
    .orderByRaw("team_id nulls last")
    .first<{ value: T } | undefined>("value");
  return row ? row.value : fallback;
}

export async function putSetting(trx: Trx, actor: Actor, key: string, value: unknown): Promise<void> {
  const before = await getSetting<unknown>(trx, actor.teamId, key, null);
  await trx("settings")
    .insert({ team_id: actor.teamId, key, value: JSON.stringify(value), updated_by: actor.id, updated_at: trx.fn.now() })
    .onConflict(["team_id", "key"])
    .merge();
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "settings.update", entity: "settings", entityId: key, before, after: value });
}
