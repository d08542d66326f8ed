import type { Metadata } from "next";
import Link from "next/link";
import { redirect } from "next/navigation";
import { requireUser } from "@/lib/auth/session";
import { can } from "@/lib/auth/permissions";
import { db } from "@/db/knex";
import { listActiveEpisodes } from "@/db/episodes";
import { formatDate, sideLabel } from "@/lib/format";
import { AETIOLOGY_LABELS, MANAGEMENT_LABELS } from "@/lib/validation/episodes";
import { Card, Empty, PageTitle } from "@/components/ui/card";
import { buttonClass } from "@/components/ui/button";
import { TodayPanels } from "@/components/home/today-panels";

export const metadata: Metadata = { title: "Today" };

export default async function HomePage() {
  const user = await requireUser();
  if (user.role === "admin") redirect("/admin/users");
  const mine = user.role === "registrar" ? await listActiveEpisodes(db(), user.teamId, { registrarId: user.id }) : [];
  const team = await listActiveEpisodes(db(), user.teamId);
  const episodes = user.role === "registrar" && mine.length > 0 ? mine : team;
  return (
    <>
      <PageTitle
        title={`Today, ${new Date().toLocaleDateString("en-GB", { weekday: "long", day: "numeric", month: "long", timeZone: "Europe/London" })}`}
        subtitle="What is waiting for you."
        action={can(user.role, "patient.write") ? <Link href="/patients/new" className={buttonClass("quiet")}>Register a patient</Link> : null}
      />
      <div className="space-y-6">
        <TodayPanels user={user} />
        <Card title={user.role === "registrar" && mine.length > 0 ? "Your active episodes" : "Active episodes in your team"}>
          {episodes.length === 0 ? (
            <Empty>No active episode.</Empty>
          ) : (
            <ul className="divide-y divide-line">
              {episodes.map((e) => (
                <li key={e.id} className="flex flex-wrap items-baseline justify-between gap-2 py-2">
                  <Link href={`/episodes/${e.id}`} className="font-bold text-estuary-700 underline-offset-2 hover:underline">
                    {e.family_name}, {e.given_name} <span className="figures font-normal text-ink-soft">{e.hospital_number}</span>
                  </Link>
                  <span className="text-sm text-ink-soft">
                    {sideLabel(e.side)} · {AETIOLOGY_LABELS[e.aetiology]} · {MANAGEMENT_LABELS[e.management]} · since {formatDate(e.presented_on)}
                  </span>
                </li>
              ))}
            </ul>
          )}
        </Card>
      </div>
    </>
  );
}
