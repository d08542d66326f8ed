"use client";
// One proposal of the follow-up diary, booked in one action: the date, time and place are filled in
// from the proposal and can be changed before confirming.
import { useState, useTransition } from "react";
import type { WorklistProposal } from "@/db/bookings";
import { ApiError, fetchJson } from "@/lib/client/api";
import { clinicTime, clinicWallTimeToUtc, appointmentWords } from "@/lib/clinic-time";
import { formatDate } from "@/lib/format";
import { Button } from "@/components/ui/button";
import { Tag } from "@/components/ui/card";
import { WhenFields, type WhenValue } from "./when-fields";

export interface BookedResult {
  message: { status: string; recipient: string; reason: string | null } | null;
}

export function mailWords(r: BookedResult): string {
  if (!r.message) return "No e-mail for this change.";
  if (r.message.status === "queued") return `An e-mail to ${r.message.recipient} is on its way.`;
  return `Not e-mailed: ${r.message.reason ?? "no reason given"} Tell the patient by phone or letter.`;
}

/** Reads the clinic date and time of the form as an instant; null when incomplete. */
export function toInstant(v: WhenValue, timeZone: string): string | null {
  try {
    return clinicWallTimeToUtc(v.date, v.time, timeZone).toISOString();
  } catch {
    return null;
  }
}

export function ProposalBooker({
  proposal,
  episodeId,
  patientName,
  defaultLocation,
  timeZone,
  onDone,
}: {
  proposal: WorklistProposal;
  episodeId: string;
  patientName: string;
  defaultLocation: string;
  timeZone: string;
  onDone: (announcement: string) => void;
}) {
  const [open, setOpen] = useState(false);
  const [value, setValue] = useState<WhenValue>({ date: proposal.proposedOn, time: clinicTime(new Date(proposal.proposedAt), timeZone), location: defaultLocation });
  const [errors, setErrors] = useState<Record<string, string>>({});
  const [problem, setProblem] = useState<string | null>(null);
  const [pending, start] = useTransition();
  const id = `p-${episodeId.slice(0, 8)}-${proposal.key.replace(/[^a-z0-9]/gi, "-")}`;

  const confirm = () =>
    start(async () => {
      setErrors({});
      setProblem(null);
      const scheduledAt = toInstant(value, timeZone);
      if (!scheduledAt) {
        setErrors({ scheduledAt: "Choose a date and a time" });
        return;
      }
      try {
        const result = proposal.moves
          ? await fetchJson<BookedResult>(`/api/bookings/${proposal.moves.bookingId}`, {
              method: "PATCH",
              json: { action: "move", version: proposal.moves.version, scheduledAt, location: value.location },
            })
          : await fetchJson<BookedResult>("/api/bookings", {
              method: "POST",
              json: {
                episodeId,
                kind: proposal.bookingKind,
                source: proposal.source,
                flagId: proposal.flagId,
                reason: proposal.reason.slice(0, 300),
                dueOn: proposal.dueOn,
                scheduledAt,
                location: value.location,
              },
            });
        setOpen(false);
        onDone(`${proposal.moves ? "Moved" : "Booked"}: ${patientName}, ${appointmentWords(new Date(scheduledAt), timeZone)}. ${mailWords(result)}`);
      } catch (err) {
        if (err instanceof ApiError) {
          setErrors(err.fields);
          setProblem(err.message);
        } else setProblem("Rimwatch could not reach the server. Nothing was booked; try again.");
      }
    });

  return (
    <div className="rounded-md border border-line bg-paper p-3" data-testid="proposal">
      <div className="flex flex-wrap items-start justify-between gap-3">
        <div className="min-w-0 space-y-1">
          <p className="font-bold">
            {proposal.kind === "resolution-check" ? "Film to confirm resolution" : proposal.kind === "rebook-missed" ? "Rebook the missed film" : "Repeat film"}
            {" · "}
            <span className="figures">due {formatDate(proposal.dueOn)}</span>{" "}
            {proposal.late ? <Tag tone="alarm">late</Tag> : null} {proposal.kind === "flag" ? <Tag tone="watch">asked for by a flag</Tag> : null}
          </p>
          <p className="text-sm">{proposal.reason}</p>
          <p className="text-xs text-ink-soft">Basis: {proposal.basis}</p>
        </div>
        {!open ? (
          <Button onClick={() => setOpen(true)} aria-expanded={false}>
            {proposal.moves ? `Move the ${formatDate(proposal.moves.scheduledOn)} booking` : "Book this film"}
          </Button>
        ) : null}
      </div>
      {open ? (
        <form
          id={id}
          className="mt-3 space-y-3 border-t border-line pt-3"
          noValidate
          onSubmit={(e) => {
            e.preventDefault();
            confirm();
          }}
        >
          <WhenFields idPrefix={id} value={value} onChange={setValue} errors={errors} />
          {problem ? <p role="alert" className="rounded-md bg-rust-wash px-3 py-2 text-sm font-bold text-rust-ink">{problem}</p> : null}
          <div className="flex flex-wrap gap-2">
            <Button type="submit" disabled={pending}>{pending ? "Booking…" : proposal.moves ? "Confirm the new time" : "Confirm booking"}</Button>
            <Button tone="quiet" disabled={pending} onClick={() => setOpen(false)}>Not now</Button>
          </div>
        </form>
      ) : null}
    </div>
  );
}
