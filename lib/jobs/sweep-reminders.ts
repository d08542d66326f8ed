// The reminders sweep (queue reminders.sweep, every few minutes): records the reminders due at
// `now` and queues them; re-queues messages whose queue job was lost. Idempotent: a second sweep
// finds each reminder's dedupe key taken and records nothing.
import "server-only";
import { db } from "@/db/knex";
import { untriedQueuedMessages } from "@/db/messages";
import { recordBookingMessage } from "@/lib/mail/outbox";
import { MAX_REMINDER_LEAD_HOURS } from "@/lib/mail/settings";
import { readDiarySettings } from "@/lib/settings-registry";
import { enqueueMail } from "./queue";
import { dueReminders, type ReminderCandidate } from "./reminders";

export interface SweepResult {
  due: number;
  queued: string[];
  skipped: number;
  alreadyRecorded: number;
  requeued: number;
}

/** Untried queued messages older than this are queued again (their job may have been lost). */
const LOST_JOB_MINUTES = 10;

export async function sweepReminders(now: Date, opts: { enqueue?: (ids: readonly string[]) => Promise<boolean> } = {}): Promise<SweepResult> {
  const enqueue = opts.enqueue ?? ((ids: readonly string[]) => enqueueMail(ids));
  const k = db();
  // Each team's own lead time: candidates are read up to the longest lead any team may set,
  // then each booking is judged with its team's setting.
  const rows = await k("bookings")
    .where({ state: "booked" })
    .where("scheduled_at", ">", now)
    .where("scheduled_at", "<=", new Date(now.getTime() + MAX_REMINDER_LEAD_HOURS * 3_600_000))
    .select<{ id: string; team_id: string; state: ReminderCandidate["state"]; scheduled_at: Date; updated_at: Date }[]>("id", "team_id", "state", "scheduled_at", "updated_at");
  const due: ReturnType<typeof dueReminders> = [];
  for (const teamId of new Set(rows.map((r) => r.team_id))) {
    const { reminderLeadHours } = await readDiarySettings(k, teamId);
    const own = rows.filter((r) => r.team_id === teamId);
    due.push(...dueReminders(own.map((r) => ({ bookingId: r.id, state: r.state, scheduledAt: r.scheduled_at, confirmedAt: r.updated_at })), now, reminderLeadHours));
  }
  const result: SweepResult = { due: due.length, queued: [], skipped: 0, alreadyRecorded: 0, requeued: 0 };
  for (const c of due) {
    const row = await k.transaction((trx) => recordBookingMessage(trx, null, c.bookingId, "booking-reminder", now));
    if (!row) result.alreadyRecorded += 1;
    else if (row.status === "queued") result.queued.push(row.id);
    else result.skipped += 1;
  }
  if (result.queued.length > 0) await enqueue(result.queued);

  const lost = await untriedQueuedMessages(k, new Date(now.getTime() - LOST_JOB_MINUTES * 60_000));
  const fresh = lost.filter((id) => !result.queued.includes(id));
  if (fresh.length > 0) {
    // One extra job per message per hour at most: the queue's singleton slot keeps repeats out.
    await enqueueMail(fresh, { singletonHours: 1 });
    result.requeued = fresh.length;
  }
  return result;
}
