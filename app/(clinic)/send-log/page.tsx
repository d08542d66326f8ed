import type { Metadata } from "next";
import Link from "next/link";
import { requireUser } from "@/lib/auth/session";
import { db } from "@/db/knex";
import { listMessages } from "@/db/messages";
import { formatDateTime } from "@/lib/format";
import { TEMPLATE_LABELS, isTemplate } from "@/lib/mail/templates";
import { MESSAGE_STATUSES, messageListQuery } from "@/lib/validation/bookings";
import { Card, Empty, PageTitle, Tag } from "@/components/ui/card";

export const metadata: Metadata = { title: "Send log" };

const STATUS_TONE = { queued: "info", sent: "good", failed: "alarm", skipped: "watch" } as const;
const STATUS_WORDS = { queued: "waiting", sent: "sent", failed: "failed", skipped: "not sent" } as const;

export default async function SendLogPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const user = await requireUser("message.read");
  const raw = await searchParams;
  const parsed = messageListQuery.safeParse({ page: raw.page, pageSize: 50, status: raw.status || undefined });
  const q = parsed.success ? parsed.data : messageListQuery.parse({ pageSize: 50 });
  const { rows, total } = await listMessages(db(), user.teamId, q);
  const pages = Math.max(1, Math.ceil(total / q.pageSize));
  const href = (page: number, status = q.status) => `/send-log?${new URLSearchParams({ page: String(page), ...(status ? { status } : {}) }).toString()}`;

  return (
    <>
      <PageTitle title="Send log" subtitle="Every message Rimwatch recorded: to whom, which, what became of it, and why a message was not sent." />
      <nav aria-label="Filter by status" className="mb-4 flex flex-wrap gap-2 text-sm">
        <Link href="/send-log" aria-current={!q.status ? "page" : undefined} className={`rounded-md border px-3 py-1 ${!q.status ? "border-estuary-600 bg-estuary-50 font-bold" : "border-line bg-card"}`}>All</Link>
        {MESSAGE_STATUSES.map((s) => (
          <Link key={s} href={href(1, s)} aria-current={q.status === s ? "page" : undefined} className={`rounded-md border px-3 py-1 ${q.status === s ? "border-estuary-600 bg-estuary-50 font-bold" : "border-line bg-card"}`}>
            {STATUS_WORDS[s]}
          </Link>
        ))}
      </nav>
      <Card>
        {rows.length === 0 ? (
          <Empty>No message {q.status ? `with status “${STATUS_WORDS[q.status]}”` : "yet"}. Bookings record their confirmation here.</Empty>
        ) : (
          <div className="overflow-x-auto">
            <table className="w-full text-left text-sm">
              <thead className="text-estuary-900">
                <tr>
                  <th scope="col" className="py-2 pr-3">Recorded</th>
                  <th scope="col" className="pr-3">To</th>
                  <th scope="col" className="pr-3">Message</th>
                  <th scope="col" className="pr-3">Status</th>
                  <th scope="col" className="pr-3 text-right">Attempts</th>
                  <th scope="col" className="pr-3">Sent</th>
                  <th scope="col">Error or reason</th>
                </tr>
              </thead>
              <tbody>
                {rows.map((m) => (
                  <tr key={m.id} className="border-t border-line align-top" data-testid="message-row">
                    <td className="figures whitespace-nowrap py-2 pr-3">{formatDateTime(m.created_at)}</td>
                    <td className="pr-3">
                      <span className="break-all">{m.recipient}</span>
                      {m.patient_name && m.episode_id ? (
                        <div><Link href={`/episodes/${m.episode_id}`} className="text-xs text-estuary-700 underline">{m.patient_name}</Link></div>
                      ) : null}
                    </td>
                    <td className="pr-3">
                      <div className="font-bold">{isTemplate(m.template) ? TEMPLATE_LABELS[m.template] : m.template}</div>
                      <div className="text-xs text-ink-soft">{m.subject}</div>
                    </td>
                    <td className="pr-3"><Tag tone={STATUS_TONE[m.status]}>{STATUS_WORDS[m.status]}</Tag></td>
                    <td className="figures pr-3 text-right">{m.attempts}</td>
                    <td className="figures whitespace-nowrap pr-3">{m.sent_at ? formatDateTime(m.sent_at) : "—"}</td>
                    <td className={m.status === "failed" ? "text-rust-ink" : "text-ink-soft"}>{m.last_error ?? "—"}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
        <nav aria-label="Pages" className="mt-4 flex items-center gap-3 text-sm">
          {q.page > 1 ? <Link className="text-estuary-700 underline" href={href(q.page - 1)}>Newer</Link> : <span className="text-ink-soft">Newer</span>}
          <span>Page {q.page} of {pages} · {total} messages</span>
          {q.page < pages ? <Link className="text-estuary-700 underline" href={href(q.page + 1)}>Older</Link> : <span className="text-ink-soft">Older</span>}
        </nav>
      </Card>
    </>
  );
}
