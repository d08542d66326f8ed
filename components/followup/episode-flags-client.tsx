"use client";
// The episode page's live flags: the same acknowledge / resolve actions as the deviation board; the page refreshes after each.
import Link from "next/link";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { formatDateTime } from "@/lib/format";
import { Tag } from "@/components/ui/card";
import { FlagActions } from "./flag-actions";

interface F { id: string; rule: string; label: string; state: string; summary: string; reason: string; raisedAt: string; needsBooking: boolean }

export function EpisodeFlagsClient({ episodeId, flags, canResolve, showDiaryLink }: { episodeId: string; flags: F[]; canResolve: boolean; showDiaryLink: boolean }) {
  const router = useRouter();
  const [notice, setNotice] = useState<string | null>(null);
  return (
    <div>
      <p aria-live="polite" className="min-h-5 text-sm font-bold text-moss-ink">{notice}</p>
      {flags.length === 0 ? (
        <p className="text-sm text-ink-soft">No open flag on this episode.</p>
      ) : (
        <ul className="divide-y divide-line">
          {flags.map((f) => (
            <li key={f.id} className="flex flex-wrap items-start justify-between gap-3 py-3" data-flag-id={f.id}>
              <div className="min-w-0 max-w-xl">
                <div className="flex items-center gap-2">
                  <Tag tone={f.state === "open" ? "alarm" : "watch"}>{f.state}</Tag>
                  <span className="font-bold">{f.label}</span>
                </div>
                <p className="figures mt-1 text-sm">{f.summary}</p>
                <p className="mt-1 text-sm text-ink-soft">{f.reason}</p>
                <p className="mt-1 text-xs text-ink-soft">Raised {formatDateTime(f.raisedAt)}</p>
              </div>
              <div className="space-y-2">
                {canResolve ? (
                  <FlagActions
                    flagId={f.id}
                    state={f.state}
                    label={f.label}
                    onDone={(m) => {
                      setNotice(m);
                      router.refresh();
                    }}
                  />
                ) : null}
                {showDiaryLink && f.needsBooking ? (
                  <Link href={`/diary?episode=${episodeId}`} className="text-sm font-bold text-estuary-700 underline">Book in the follow-up diary</Link>
                ) : null}
              </div>
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}
