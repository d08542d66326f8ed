// Calendar files (.ics, RFC 5545) for bookings, built with the `ics` package. Times are written in
// UTC (DTSTART:...Z) so every calendar shows them in its own zone correctly.
import { createEvent } from "ics";

export interface BookingEvent {
  bookingId: string;
  /** The booking's version: a moved or cancelled booking replaces the earlier entry (same UID, higher SEQUENCE). */
  version: number;
  scheduledAt: Date;
  durationMinutes: number;
  title: string;
  location: string;
  description: string;
  cancelled: boolean;
}

export const bookingUid = (bookingId: string) => `booking-${bookingId}@rimwatch`;

export function bookingIcs(e: BookingEvent): string {
  const { error, value } = createEvent({
    productId: "rimwatch/follow-up-diary",
    method: "PUBLISH",
    uid: bookingUid(e.bookingId),
    sequence: e.version,
    start: e.scheduledAt.getTime(),
    startInputType: "utc",
    startOutputType: "utc",
    duration: { minutes: e.durationMinutes },
    title: e.title,
    location: e.location,
    description: e.description,
    status: e.cancelled ? "CANCELLED" : "CONFIRMED",
    busyStatus: e.cancelled ? "FREE" : "BUSY",
  });
  if (error || !value) throw new Error(`Could not build the calendar file: ${error?.message ?? "no output"}`);
  return value;
}
