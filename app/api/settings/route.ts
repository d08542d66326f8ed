// GET: every settings group with the values in force for the caller's team, the defaults and their sources. PUT { key, values }: store one group for the caller's team (audited).
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { listSettingGroups, writeGroup } from "@/lib/settings-registry";
import { settingsPut } from "@/lib/validation/settings";

export const GET = apiRoute("settings.read", async ({ user }) => ({ groups: await listSettingGroups(db(), user.teamId) }));

export const PUT = apiRoute("settings.write", async ({ req, user }) => {
  const input = await parseJson(req, settingsPut);
  const group = await db().transaction((trx) => writeGroup(trx, user, input.key, input.values));
  return { group };
});
