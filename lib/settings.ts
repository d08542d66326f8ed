// Stored settings: one JSON value per team and key, audited. Groups, defaults and sources:
// lib/settings-registry.ts. A row without a team (stored before settings were per team) is what a
// team reads until it saves its own value.
import "server-only";
import type { Trx } from "@/db/knex";
import { writeAudit } from "@/db/audit";
import type { Actor } from "@/db/types";

/**
 * The stored value in force for a team, as a scalar SQL expression (null when none is stored): the
 * team's own row over the shared one. Bind settingValueBindings(teamId, key). For a statement that
 * reads a setting beside other things; getSetting runs it alone.
 */
export const SETTING_VALUE_SQL =
  "(select st.value from settings st where st.key = ? and (st.team_id = ? or st.team_id is null) order by st.team_id nulls last limit 1)";
export const settingValueBindings = (teamId: string, key: string): string[] => [key, teamId];

export async function getSetting<T>(trx: Trx, teamId: string, key: string, fallback: T): Promise<T> {
  const { rows } = await trx.raw<{ rows: { value: T | null }[] }>(`select ${SETTING_VALUE_SQL} as value`, settingValueBindings(teamId, key));
  return rows[0]?.value ?? fallback;
}

export async function putSetting(trx: Trx, actor: Actor, key: string, value: unknown): Promise<void> {
  const before = await getSetting<unknown>(trx, actor.teamId, key, null);
  await trx("settings")
    .insert({ team_id: actor.teamId, key, value: JSON.stringify(value), updated_by: actor.id, updated_at: trx.fn.now() })
    .onConflict(["team_id", "key"])
    .merge();
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "settings.update", entity: "settings", entityId: key, before, after: value });
}
