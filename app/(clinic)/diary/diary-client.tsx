"use client";
// The follow-up diary: three lists kept fresh with TanStack Query; every action reloads them and is
// announced in the live region.
import Link from "next/link";
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import type { Worklist, WorklistBooking } from "@/db/bookings";
import { fetchJson } from "@/lib/client/api";
import { clinicDate, clinicTime, shortDayWords } from "@/lib/clinic-time";
import { formatDate, sideLabel } from "@/lib/format";
import { MANAGEMENT_LABELS, type MANAGEMENTS } from "@/lib/validation/episodes";
import { Card, Empty, Tag } from "@/components/ui/card";
import { BookingActions } from "@/components/diary/booking-actions";
import { MessageTag } from "@/components/diary/message-tag";
import { ProposalBooker } from "@/components/diary/proposal-booker";

const SOURCE_WORDS: Record<string, string> = { protocol: "protocol", flag: "flag", manual: "by hand" };

function PatientLine({ b }: { b: { episodeId: string; patient: { name: string; hospitalNumber: string; mailable: boolean } } }) {
  return (
    <span className="flex flex-wrap items-baseline gap-x-2">
      <Link href={`/episodes/${b.episodeId}`} className="font-bold text-estuary-700 underline-offset-2 hover:underline">{b.patient.name}</Link>
      <span className="figures text-sm text-ink-soft">{b.patient.hospitalNumber}</span>
      {b.patient.mailable ? null : <Tag tone="watch">no e-mail: phone or letter</Tag>}
    </span>
  );
}

function BookingRow({ b, list, canWrite, onDone }: { b: WorklistBooking; list: Worklist; canWrite: boolean; onDone: (s: string) => void }) {
  const at = new Date(b.scheduledAt);
  return (
    <li className="grid gap-2 py-3 md:grid-cols-[7rem_1fr_14rem]" data-testid="booking">
      <div className="figures font-bold">
        {clinicTime(at, list.timeZone)}
        {b.unmarked ? <div className="mt-1"><Tag tone="alarm">not marked</Tag></div> : null}
        {b.state === "missed" ? <div className="mt-1"><Tag tone="alarm">missed</Tag></div> : null}
      </div>
      <div className="min-w-0 space-y-1">
        <PatientLine b={b} />
        <p className="text-sm">
          {b.kind === "repeat-film" ? "Repeat film" : "Clinic visit"} · {b.location ?? "place not set"} <span className="text-ink-soft">· booked from {SOURCE_WORDS[b.source]}</span>
        </p>
        {b.reason ? <p className="text-xs text-ink-soft">{b.reason}</p> : null}
        {canWrite && b.state === "booked" ? <BookingActions booking={b} today={list.today} timeZone={list.timeZone} onDone={onDone} /> : null}
        {b.state === "missed" ? <p className="text-sm">A new booking is proposed under “Needing a booking”.</p> : null}
      </div>
      <div><MessageTag message={b.lastMessage} /></div>
    </li>
  );
}

/** Bookings grouped under one heading per clinic day. */
function ByDay({ items, list, canWrite, onDone, label }: { items: WorklistBooking[]; list: Worklist; canWrite: boolean; onDone: (s: string) => void; label: string }) {
  const days = new Map<string, WorklistBooking[]>();
  for (const b of items) {
    const d = clinicDate(new Date(b.scheduledAt), list.timeZone);
    days.set(d, [...(days.get(d) ?? []), b]);
  }
  return (
    <div className="space-y-4">
      {[...days].map(([day, rows]) => (
        <section key={day} aria-label={`${label} ${day}`}>
          <h3 className="border-b-2 border-estuary-600 pb-1 font-bold text-estuary-900">
            {day === list.today ? "Today, " : ""}
            {shortDayWords(new Date(rows[0]!.scheduledAt), list.timeZone)} {day.slice(0, 4)}
          </h3>
          <ul className="divide-y divide-line">{rows.map((b) => <BookingRow key={b.id} b={b} list={list} canWrite={canWrite} onDone={onDone} />)}</ul>
        </section>
      ))}
    </div>
  );
}

export function DiaryClient({ initial, canWrite }: { initial: Worklist; canWrite: boolean }) {
  const client = useQueryClient();
  const [announcement, setAnnouncement] = useState("");
  const q = useQuery({ queryKey: ["worklist"], queryFn: () => fetchJson<Worklist>("/api/bookings"), initialData: initial, refetchInterval: 60_000 });
  const list = q.data;
  const onDone = (text: string) => {
    setAnnouncement(text);
    void client.invalidateQueries({ queryKey: ["worklist"] });
  };

  return (
    <div className="space-y-6">
      <p aria-live="polite" role="status" className="min-h-6 rounded-md text-sm font-bold text-moss-ink">{announcement}</p>
      {q.isError ? <p role="alert" className="font-bold text-rust-ink">The diary could not be refreshed: {q.error.message}</p> : null}

      <Card title={<>Needing a booking <span className="figures text-base font-normal text-ink-soft">({list.needing.length})</span></>}>
        {list.needingChecked ? (
          <p role="alert" className="mb-3 text-sm font-bold text-rust-ink" data-testid="needing-checked">
            The team has {list.needingChecked.active} active episodes; this list checks the {list.needingChecked.checked} that presented first. Close or resolve
            finished episodes so that none is left unchecked.
          </p>
        ) : null}
        {list.needing.length === 0 ? (
          <Empty>Every active episode has its next film booked, or needs none yet.</Empty>
        ) : (
          <ul className="space-y-5">
            {list.needing.map((e) => (
              <li key={e.episodeId} className="space-y-2" data-testid="needing">
                <div className="flex flex-wrap items-baseline justify-between gap-2">
                  <PatientLine b={e} />
                  <span className="text-sm text-ink-soft">
                    {sideLabel(e.side)} · {MANAGEMENT_LABELS[e.management as (typeof MANAGEMENTS)[number]] ?? e.management} · presented {formatDate(e.presentedOn)}
                  </span>
                </div>
                {e.proposals.map((p) =>
                  canWrite ? (
                    <ProposalBooker key={p.key} proposal={p} episodeId={e.episodeId} patientName={e.patient.name} defaultLocation={list.defaultLocation} timeZone={list.timeZone} onDone={onDone} />
                  ) : (
                    <p key={p.key} className="text-sm">{p.reason} (due {formatDate(p.dueOn)})</p>
                  ),
                )}
              </li>
            ))}
          </ul>
        )}
      </Card>

      <Card title={<>Coming days <span className="figures text-base font-normal text-ink-soft">({list.coming.length})</span></>}>
        {list.coming.length === 0 ? <Empty>No film is booked from today on.</Empty> : <ByDay items={list.coming} list={list} canWrite={canWrite} onDone={onDone} label="Bookings on" />}
      </Card>

      <Card title={<>Missed <span className="figures text-base font-normal text-ink-soft">({list.missed.length})</span></>}>
        <p className="mb-3 text-sm text-ink-soft">Films marked missed and not yet rebooked, and past appointments nobody has marked attended or missed.</p>
        {list.missed.length === 0 ? <Empty>Nothing missed.</Empty> : <ByDay items={list.missed} list={list} canWrite={canWrite} onDone={onDone} label="Missed on" />}
      </Card>
    </div>
  );
}
