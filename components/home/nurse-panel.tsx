// The clinic nurse's start-page panel: films to book, today's appointments, missed films and
// messages that could not be sent — each a count that links to the diary or the send log.
import Link from "next/link";
import { db } from "@/db/knex";
import { getWorklist } from "@/db/bookings";
import type { CurrentUser } from "@/lib/auth/session";
import { clinicDate, clinicTime } from "@/lib/clinic-time";
import { Card } from "@/components/ui/card";

export async function NursePanel({ user }: { user: CurrentUser }) {
  if (user.role !== "nurse") return null;
  const k = db();
  const [list, failedRow] = await Promise.all([
    getWorklist(k, user.teamId, new Date()),
    k("messages").where({ team_id: user.teamId, status: "failed" }).count<{ count: number }[]>({ count: "*" }).first(),
  ]);
  const todays = list.coming.filter((b) => clinicDate(new Date(b.scheduledAt), list.timeZone) === list.today);
  const failed = Number(failedRow?.count ?? 0);
  const big = "figures text-figure font-bold text-estuary-700 underline-offset-2 hover:underline";
  return (
    <Card title="Follow-up today">
      <div className="grid gap-6 md:grid-cols-4">
        <div>
          <h3 className="text-sm font-bold text-estuary-900">Needing a booking</h3>
          <Link href="/diary" className={big}>{list.needing.length}</Link>
          <p className="text-sm text-ink-soft">{list.needing.some((e) => e.proposals.some((p) => p.kind === "flag")) ? "Some asked for by a flag." : "Proposals ready to book."}</p>
        </div>
        <div>
          <h3 className="text-sm font-bold text-estuary-900">Appointments today</h3>
          <Link href="/diary" className={big}>{todays.length}</Link>
          {todays.length > 0 ? (
            <ul className="mt-1 text-sm">
              {todays.slice(0, 5).map((b) => (
                <li key={b.id}>
                  <span className="figures">{clinicTime(new Date(b.scheduledAt), list.timeZone)}</span> {b.patient.name}
                </li>
              ))}
            </ul>
          ) : null}
        </div>
        <div>
          <h3 className="text-sm font-bold text-estuary-900">Missed or not marked</h3>
          <Link href="/diary" className={big}>{list.missed.length}</Link>
          <p className="text-sm text-ink-soft">Chase and rebook.</p>
        </div>
        <div>
          <h3 className="text-sm font-bold text-estuary-900">E-mails that failed</h3>
          <Link href="/send-log?status=failed" className={`${big} ${failed > 0 ? "text-rust-ink" : ""}`}>{failed}</Link>
          <p className="text-sm text-ink-soft">{failed > 0 ? "Tell these patients another way." : "Nothing failed."}</p>
        </div>
      </div>
    </Card>
  );
}
