// The consultant's start-page panel: open flags by rule, active episodes, films waiting for sign-off — each a count that links.
import Link from "next/link";
import { db } from "@/db/knex";
import { countLiveFlagsByRule } from "@/db/flags";
import type { CurrentUser } from "@/lib/auth/session";
import { ENGINE_RULES, ruleLabel } from "@/lib/followup/rules";
import { formatDate } from "@/lib/format";
import { Card } from "@/components/ui/card";

// A film with a current measurement and no signed-off current one.
const WAITING_FOR_SIGN_OFF =
  "exists (select 1 from measurements m where m.film_id = f.id and m.superseded_at is null) and not exists (select 1 from measurements m where m.film_id = f.id and m.superseded_at is null and m.signed_off_at is not null)";

interface WaitingFilm { film_id: string; episode_id: string; family_name: string; given_name: string; taken_at: Date | null }

export async function ConsultantPanel({ user }: { user: CurrentUser }) {
  if (user.role !== "consultant") return null;
  const k = db();
  const [byRule, activeRow, waiting, waitingCountRow] = await Promise.all([
    countLiveFlagsByRule(k, user.teamId),
    k("episodes").where({ team_id: user.teamId, status: "active" }).count<{ count: number }[]>({ count: "*" }).first(),
    k("films as f")
      .join("episodes as e", "e.id", "f.episode_id")
      .join("patients as p", "p.id", "e.patient_id")
      .where({ "f.team_id": user.teamId })
      .whereNull("f.deleted_at")
      .whereRaw(WAITING_FOR_SIGN_OFF)
      .select("f.id as film_id", "f.episode_id", "p.family_name", "p.given_name", "f.taken_at")
      .orderBy("f.taken_at", "asc")
      .limit(5) as Promise<WaitingFilm[]>,
    k("films as f")
      .where({ "f.team_id": user.teamId })
      .whereNull("f.deleted_at")
      .whereRaw(WAITING_FOR_SIGN_OFF)
      .count<{ count: number }[]>({ count: "*" })
      .first(),
  ]);
  const order = new Map<string, number>(ENGINE_RULES.map((r, i) => [r, i]));
  const rules = [...byRule].sort((a, b) => (order.get(a.rule) ?? 99) - (order.get(b.rule) ?? 99));
  const totalFlags = rules.reduce((s, r) => s + r.count, 0);
  const active = Number(activeRow?.count ?? 0);
  const waitingCount = Number(waitingCountRow?.count ?? 0);
  return (
    <Card title="For your review">
      <div className="grid gap-6 md:grid-cols-3">
        <div>
          <h3 className="text-sm font-bold text-estuary-900">Open flags</h3>
          <Link href="/board" className="figures text-figure font-bold text-estuary-700 underline-offset-2 hover:underline">{totalFlags}</Link>
          {rules.length > 0 ? (
            <ul className="mt-1 text-sm">
              {rules.map((r) => (
                <li key={r.rule}>
                  <Link href={`/board?rule=${encodeURIComponent(r.rule)}`} className="text-estuary-700 underline-offset-2 hover:underline">
                    <span className="figures font-bold">{r.count}</span> {ruleLabel(r.rule).toLowerCase()}
                  </Link>
                </li>
              ))}
            </ul>
          ) : (
            <p className="text-sm text-ink-soft">Nothing waiting on the deviation board.</p>
          )}
        </div>
        <div>
          <h3 className="text-sm font-bold text-estuary-900">Active episodes</h3>
          <Link href="/patients" className="figures text-figure font-bold text-estuary-700 underline-offset-2 hover:underline">{active}</Link>
          <p className="text-sm text-ink-soft">Listed below, newest first.</p>
        </div>
        <div>
          <h3 className="text-sm font-bold text-estuary-900">Films waiting for sign-off</h3>
          <span className="figures text-figure font-bold">{waitingCount}</span>
          {waiting.length > 0 ? (
            <ul className="mt-1 text-sm">
              {waiting.map((w) => (
                <li key={w.film_id}>
                  <Link href={`/films/${w.film_id}`} className="text-estuary-700 underline-offset-2 hover:underline">
                    {w.family_name}, {w.given_name} · {formatDate(w.taken_at)}
                  </Link>
                </li>
              ))}
            </ul>
          ) : (
            <p className="text-sm text-ink-soft">No measurement waiting.</p>
          )}
        </div>
      </div>
    </Card>
  );
}
