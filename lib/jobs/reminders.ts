// What is due for a reminder at `now`. Pure: no clock, no database; the sweep passes rows and time in.

export interface ReminderCandidate {
  bookingId: string;
  state: "booked" | "attended" | "missed" | "cancelled";
  scheduledAt: Date;
  /** When the patient last heard about this time: booked, or last moved (the booking's updated_at). */
  confirmedAt: Date;
}

const HOUR_MS = 3_600_000;

/** The moment a reminder becomes due: the lead time before the appointment. */
export function reminderTime(scheduledAt: Date, leadHours: number): Date {
  return new Date(scheduledAt.getTime() - leadHours * HOUR_MS);
}

/**
 * Bookings whose reminder is due at `now`: still booked, appointment still ahead, the lead time
 * reached, and the patient not told about this time inside the lead window already (a booking made
 * or moved after the reminder time has just had its confirmation). Earliest appointment first.
 */
export function dueReminders(candidates: readonly ReminderCandidate[], now: Date, leadHours: number): ReminderCandidate[] {
  if (!Number.isFinite(leadHours) || leadHours <= 0) throw new RangeError("leadHours must be a positive number of hours");
  const t = now.getTime();
  return candidates
    .filter((c) => {
      if (c.state !== "booked") return false;
      const at = c.scheduledAt.getTime();
      const due = reminderTime(c.scheduledAt, leadHours).getTime();
      return at > t && due <= t && c.confirmedAt.getTime() < due;
    })
    .sort((a, b) => a.scheduledAt.getTime() - b.scheduledAt.getTime());
}
