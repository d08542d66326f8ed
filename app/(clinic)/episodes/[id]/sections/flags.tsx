import Link from "next/link";
import { db } from "@/db/knex";
import { listFlags } from "@/db/flags";
import { can } from "@/lib/auth/permissions";
import { BOOKING_RULES, figuresSummary, planWords, ruleLabel } from "@/lib/followup/rules";
import { formatDateTime } from "@/lib/format";
import { Card } from "@/components/ui/card";
import { EpisodeFlagsClient } from "@/components/followup/episode-flags-client";
import type { SectionProps } from "./types";

// The episode's live flags with the consultant's actions, and the decisions already taken.
export async function FlagsSection({ episode, user }: SectionProps) {
  if (!can(user.role, "flag.read")) return null;
  const now = new Date();
  const base = { episodeId: episode.id, now, sort: "raised" as const, dir: "desc" as const, page: 1, pageSize: 50 };
  const [live, resolved] = await Promise.all([
    listFlags(db(), user.teamId, { ...base, state: "live" }),
    listFlags(db(), user.teamId, { ...base, state: "resolved", pageSize: 5 }),
  ]);
  if (live.total === 0 && resolved.total === 0) return null;
  return (
    <Card title="Deviation flags" action={<Link href="/board" className="text-sm font-bold text-estuary-700 underline">Deviation board</Link>}>
      <EpisodeFlagsClient
        episodeId={episode.id}
        canResolve={can(user.role, "flag.resolve")}
        showDiaryLink={can(user.role, "booking.write")}
        flags={live.rows.map((f) => ({
          id: f.id,
          rule: f.rule,
          label: ruleLabel(f.rule),
          state: f.state,
          summary: figuresSummary(f.rule, f.figures),
          reason: f.reason,
          raisedAt: f.raised_at.toISOString(),
          needsBooking: (BOOKING_RULES as readonly string[]).includes(f.rule),
        }))}
      />
      {resolved.rows.length > 0 ? (
        <div className="mt-4">
          <h3 className="text-sm font-bold text-estuary-900">Recently resolved</h3>
          <ul className="mt-1 divide-y divide-line text-sm">
            {resolved.rows.map((f) => (
              <li key={f.id} className="py-2">
                <span className="font-bold">{ruleLabel(f.rule)}</span> · {planWords(f.plan)}
                <span className="text-ink-soft"> · {f.resolved_by_name ?? "—"}, {formatDateTime(f.resolved_at)}</span>
                {f.resolution_note ? <p className="text-ink-soft">{f.resolution_note}</p> : null}
              </li>
            ))}
          </ul>
        </div>
      ) : null}
    </Card>
  );
}
