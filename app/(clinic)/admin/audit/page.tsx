import type { Metadata } from "next";
import { requireUser } from "@/lib/auth/session";
import { db } from "@/db/knex";
import { listAudit } from "@/db/audit";
import { formatDateTime } from "@/lib/format";
import { Card, PageTitle } from "@/components/ui/card";

export const metadata: Metadata = { title: "Audit log" };

export default async function AuditPage({ searchParams }: { searchParams: Promise<{ page?: string }> }) {
  const user = await requireUser("audit.read");
  const page = Math.max(1, Number((await searchParams).page ?? 1) || 1);
  const pageSize = 50;
  const { rows, total } = await listAudit(db(), { teamId: user.teamId, limit: pageSize, offset: (page - 1) * pageSize });
  return (
    <>
      <PageTitle title="Audit log" subtitle={`Every change, newest first. ${total} entries.`} />
      <Card>
        <table className="w-full text-left text-sm">
          <thead><tr><th className="py-2">When</th><th>Who</th><th>What</th><th>Record</th></tr></thead>
          <tbody>
            {rows.map((r) => (
              <tr key={r.id} className="border-t border-line align-top">
                <td className="whitespace-nowrap py-2">{formatDateTime(r.at)}</td>
                <td>{r.actor_name ?? "system"}</td>
                <td className="figures">{r.action}</td>
                <td className="figures text-xs text-ink-soft">{r.entity} {r.entity_id?.slice(0, 8)}</td>
              </tr>
            ))}
          </tbody>
        </table>
        <nav className="mt-3 flex gap-4 text-sm" aria-label="Pages">
          {page > 1 ? <a className="underline" href={`?page=${page - 1}`}>Newer</a> : null}
          {page * pageSize < total ? <a className="underline" href={`?page=${page + 1}`}>Older</a> : null}
        </nav>
      </Card>
    </>
  );
}
