import type { Metadata } from "next";
import { requireUser } from "@/lib/auth/session";
import { db } from "@/db/knex";
import { getTeam, listTeamUsers } from "@/db/users";
import { PageTitle } from "@/components/ui/card";
import { UsersClient } from "./users-client";

export const metadata: Metadata = { title: "Users" };

export default async function UsersPage() {
  const user = await requireUser("user.manage");
  const [users, team] = await Promise.all([listTeamUsers(db(), user.teamId), getTeam(db(), user.teamId)]);
  return (
    <>
      <PageTitle title="Users" subtitle={team ? `${team.name}, ${team.hospital}` : undefined} />
      <UsersClient
        selfId={user.id}
        users={users.map((u) => ({ id: u.id, name: u.name, email: u.email, role: u.role, disabled: !!u.disabled_at, notifyOnFlag: u.notify_on_flag }))}
      />
    </>
  );
}
