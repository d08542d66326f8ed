"use client";
// What a nurse can do with a booked appointment: move it, cancel it, or (from its day on) mark it
// attended or missed. Every change is sent with the version the nurse saw.
import { useState, useTransition } from "react";
import type { WorklistBooking } from "@/db/bookings";
import { ApiError, fetchJson } from "@/lib/client/api";
import { appointmentWords, clinicDate, clinicTime } from "@/lib/clinic-time";
import { Button } from "@/components/ui/button";
import { Field, TextInput } from "@/components/ui/field";
import { WhenFields, type WhenValue } from "./when-fields";
import { mailWords, toInstant, type BookedResult } from "./proposal-booker";

type Mode = null | "move" | "cancel";

export function BookingActions({
  booking,
  today,
  timeZone,
  onDone,
}: {
  booking: Pick<WorklistBooking, "id" | "version" | "scheduledAt" | "location" | "state"> & { patient: { name: string } };
  today: string;
  timeZone: string;
  onDone: (announcement: string) => void;
}) {
  const at = new Date(booking.scheduledAt);
  const [mode, setMode] = useState<Mode>(null);
  const [value, setValue] = useState<WhenValue>({ date: clinicDate(at, timeZone), time: clinicTime(at, timeZone), location: booking.location ?? "" });
  const [reason, setReason] = useState("");
  const [errors, setErrors] = useState<Record<string, string>>({});
  const [problem, setProblem] = useState<string | null>(null);
  const [pending, start] = useTransition();
  if (booking.state !== "booked") return null;
  const dayReached = clinicDate(at, timeZone) <= today;
  const id = `b-${booking.id.slice(0, 8)}`;
  const who = booking.patient.name;

  const send = (json: Record<string, unknown>, words: (r: BookedResult) => string) =>
    start(async () => {
      setErrors({});
      setProblem(null);
      try {
        const r = await fetchJson<BookedResult>(`/api/bookings/${booking.id}`, { method: "PATCH", json: { version: booking.version, ...json } });
        setMode(null);
        onDone(words(r));
      } catch (err) {
        if (err instanceof ApiError) {
          setErrors(err.fields);
          setProblem(err.message);
        } else setProblem("Rimwatch could not reach the server. Nothing was changed; try again.");
      }
    });

  const move = () => {
    const scheduledAt = toInstant(value, timeZone);
    if (!scheduledAt) return setErrors({ scheduledAt: "Choose a date and a time" });
    send({ action: "move", scheduledAt, location: value.location }, (r) => `Moved: ${who}, now ${appointmentWords(new Date(scheduledAt), timeZone)}. ${mailWords(r)}`);
  };

  return (
    <div className="space-y-2">
      <div className="flex flex-wrap gap-2">
        <Button tone="quiet" className="px-3 py-1" disabled={pending} onClick={() => setMode(mode === "move" ? null : "move")} aria-expanded={mode === "move"}>
          Move
        </Button>
        <Button tone="quiet" className="px-3 py-1" disabled={pending} onClick={() => setMode(mode === "cancel" ? null : "cancel")} aria-expanded={mode === "cancel"}>
          Cancel
        </Button>
        <Button
          tone="quiet"
          className="px-3 py-1"
          disabled={pending || !dayReached}
          title={dayReached ? undefined : "From the day of the appointment"}
          onClick={() => send({ action: "attended" }, () => `Marked attended: ${who}.`)}
        >
          Attended
        </Button>
        <Button
          tone="quiet"
          className="px-3 py-1"
          disabled={pending || !dayReached}
          title={dayReached ? undefined : "From the day of the appointment"}
          onClick={() => send({ action: "missed" }, () => `Marked missed: ${who}. The episode now needs a new booking.`)}
        >
          Missed
        </Button>
        <a className="self-center text-sm text-estuary-700 underline" href={`/api/bookings/${booking.id}/calendar`}>
          Calendar file
        </a>
      </div>
      {mode === "move" ? (
        <form id={`${id}-move`} className="space-y-3 rounded-md border border-line bg-paper p-3" noValidate onSubmit={(e) => { e.preventDefault(); move(); }}>
          <WhenFields idPrefix={`${id}-move`} value={value} onChange={setValue} errors={errors} />
          <Button type="submit" disabled={pending}>Confirm the new time</Button>
        </form>
      ) : null}
      {mode === "cancel" ? (
        <form
          className="space-y-3 rounded-md border border-line bg-paper p-3"
          noValidate
          onSubmit={(e) => {
            e.preventDefault();
            send({ action: "cancel", reason }, (r) => `Cancelled: ${who}. ${mailWords(r)}`);
          }}
        >
          <Field id={`${id}-reason`} label="Why is it cancelled? (kept in the audit log)" error={errors.reason}>
            <TextInput id={`${id}-reason`} maxLength={300} value={reason} onChange={(e) => setReason(e.target.value)} />
          </Field>
          <Button type="submit" tone="danger" disabled={pending}>Cancel this appointment</Button>
        </form>
      ) : null}
      {problem ? <p role="alert" className="rounded-md bg-rust-wash px-3 py-2 text-sm font-bold text-rust-ink">{problem}</p> : null}
    </div>
  );
}
