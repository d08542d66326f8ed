"use client";
// The episode page's bookings: proposals to book, and the episode's appointments with their actions.
import { useRouter } from "next/navigation";
import { useState } from "react";
import type { WorklistBooking, WorklistProposal } from "@/db/bookings";
import { appointmentWords } from "@/lib/clinic-time";
import { Empty, Tag } from "@/components/ui/card";
import { BookingActions } from "./booking-actions";
import { MessageTag } from "./message-tag";
import { ProposalBooker } from "./proposal-booker";

const STATE_TONE = { booked: "info", attended: "good", missed: "alarm", cancelled: "neutral" } as const;

export function EpisodeBookings({
  episodeId,
  patientName,
  proposals,
  bookings,
  today,
  timeZone,
  defaultLocation,
  canWrite,
}: {
  episodeId: string;
  patientName: string;
  proposals: WorklistProposal[];
  bookings: WorklistBooking[];
  today: string;
  timeZone: string;
  defaultLocation: string;
  canWrite: boolean;
}) {
  const router = useRouter();
  const [announcement, setAnnouncement] = useState("");
  const onDone = (text: string) => {
    setAnnouncement(text);
    router.refresh();
  };
  return (
    <div className="space-y-3">
      <p aria-live="polite" role="status" className="text-sm font-bold text-moss-ink empty:hidden">{announcement}</p>
      {canWrite
        ? proposals.map((p) => (
            <ProposalBooker key={p.key} proposal={p} episodeId={episodeId} patientName={patientName} defaultLocation={defaultLocation} timeZone={timeZone} onDone={onDone} />
          ))
        : proposals.map((p) => <p key={p.key} className="text-sm">Proposed: {p.reason}</p>)}
      {bookings.length === 0 ? (
        proposals.length === 0 ? <Empty>No film booked, and none proposed yet.</Empty> : null
      ) : (
        <ul className="divide-y divide-line text-sm">
          {bookings.map((b) => (
            <li key={b.id} className="space-y-1 py-2">
              <div className="flex flex-wrap items-center justify-between gap-2">
                <span className={`font-bold ${b.state === "cancelled" ? "text-ink-soft line-through" : ""}`}>{appointmentWords(new Date(b.scheduledAt), timeZone)}</span>
                <Tag tone={b.unmarked ? "alarm" : STATE_TONE[b.state]}>{b.unmarked ? "not marked" : b.state}</Tag>
              </div>
              <p className="text-ink-soft">{b.location ?? "place not set"}</p>
              <MessageTag message={b.lastMessage} />
              {canWrite && b.state === "booked" ? <BookingActions booking={b} today={today} timeZone={timeZone} onDone={onDone} /> : null}
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}
