import type { Metadata } from "next";
import { requireUser } from "@/lib/auth/session";
import { can } from "@/lib/auth/permissions";
import { db } from "@/db/knex";
import { getTeam } from "@/db/users";
import { listSettingGroups } from "@/lib/settings-registry";
import { PageTitle } from "@/components/ui/card";
import { SettingsClient } from "./settings-client";

export const metadata: Metadata = { title: "Settings" };

export default async function SettingsPage() {
  const user = await requireUser("settings.read");
  const [groups, team] = await Promise.all([listSettingGroups(db(), user.teamId), getTeam(db(), user.teamId)]);
  const whose = team ? `${team.name}, ${team.hospital}` : "your team";
  return (
    <>
      <PageTitle
        title="Rule and protocol settings"
        subtitle={`These values apply to ${whose} only. Each shows its default and where the default comes from; values marked “suggestion” have no published figure: set them by local agreement.`}
      />
      <SettingsClient groups={groups} canWrite={can(user.role, "settings.write")} />
    </>
  );
}
