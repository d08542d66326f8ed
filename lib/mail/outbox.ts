// Recording the messages a change causes, inside that change's transaction: a booking's
// confirmation, move and cancellation notes, its reminder, and a consultant's flag notice.
import "server-only";
import type { Trx } from "@/db/knex";
import { dedupeKeys, recordMessage, type MessageRow } from "@/db/messages";
import { ruleLabel } from "@/lib/followup/rules";
import { enqueueMailAfterCommit } from "@/lib/jobs/queue";
import { decideRecipient, decideStaffRecipient } from "./recipient";
import { readDiarySettings } from "@/lib/settings-registry";
import { renderAppointment, renderFlagNotice, type AppointmentData, type Template } from "./templates";

export type BookingTemplate = Exclude<Template, "flag-notice">;

export interface BookingMailFacts {
  bookingId: string;
  teamId: string;
  episodeId: string;
  kind: "repeat-film" | "clinic";
  state: "booked" | "attended" | "missed" | "cancelled";
  scheduledAt: Date;
  location: string;
  version: number;
  updatedAt: Date;
  givenName: string;
  email: string | null;
  emailConsent: boolean;
  teamName: string;
  hospital: string;
}

/** Everything a booking message needs, read in one query. */
export async function loadBookingMailFacts(trx: Trx, bookingId: string): Promise<BookingMailFacts | null> {
  type Facts = {
    id: string; team_id: string; episode_id: string; kind: BookingMailFacts["kind"]; state: BookingMailFacts["state"]; scheduled_at: Date;
    location: string | null; version: number; updated_at: Date; given_name: string; email: string | null; email_consent: boolean; team_name: string; hospital: string;
  };
  const row = await trx("bookings as b")
    .join("episodes as e", "e.id", "b.episode_id")
    .join("patients as p", "p.id", "e.patient_id")
    .join("teams as t", "t.id", "b.team_id")
    .where("b.id", bookingId)
    .first<Facts | undefined>(
      "b.id", "b.team_id", "b.episode_id", "b.kind", "b.state", "b.scheduled_at", "b.location", "b.version", "b.updated_at",
      "p.given_name", "p.email", "p.email_consent", "t.name as team_name", "t.hospital",
    );
  if (!row) return null;
  return {
    bookingId: row.id,
    teamId: row.team_id,
    episodeId: row.episode_id,
    kind: row.kind,
    state: row.state,
    scheduledAt: row.scheduled_at,
    location: row.location ?? row.hospital,
    version: row.version,
    updatedAt: row.updated_at,
    givenName: row.given_name,
    email: row.email,
    emailConsent: row.email_consent,
    teamName: row.team_name,
    hospital: row.hospital,
  };
}

export const appointmentData = (f: BookingMailFacts): AppointmentData => ({
  firstName: f.givenName,
  kind: f.kind,
  scheduledAt: f.scheduledAt,
  location: f.location,
  hospital: f.hospital,
  teamName: f.teamName,
});

function keyFor(template: BookingTemplate, f: BookingMailFacts): string {
  switch (template) {
    case "booking-confirmation":
      return dedupeKeys.confirmation(f.bookingId);
    case "booking-moved":
      return dedupeKeys.moved(f.bookingId, f.version);
    case "booking-cancelled":
      return dedupeKeys.cancelled(f.bookingId);
    case "booking-reminder":
      return dedupeKeys.reminder(f.bookingId, f.scheduledAt);
  }
}

/**
 * Records one patient message about a booking: queued when it may go out, otherwise skipped with
 * the reason (no consent, no or invalid address, e-mail off). Null when the same message exists.
 * The caller queues the returned id after commit (or passes `enqueue: true`).
 */
export async function recordBookingMessage(
  trx: Trx,
  actorId: string | null,
  bookingId: string,
  template: BookingTemplate,
  now: Date,
  opts: { enqueue?: boolean } = {},
): Promise<MessageRow | null> {
  const f = await loadBookingMailFacts(trx, bookingId);
  if (!f) return null;
  const settings = await readDiarySettings(trx, f.teamId);
  const decision = decideRecipient({ email: f.email, emailConsent: f.emailConsent, mailEnabled: settings.mailEnabled });
  const rendered = renderAppointment(template, appointmentData(f));
  const row = await recordMessage(trx, actorId, {
    teamId: f.teamId,
    episodeId: f.episodeId,
    bookingId: f.bookingId,
    flagId: null,
    recipient: decision.recipient,
    template,
    subject: rendered.subject,
    status: decision.send ? "queued" : "skipped",
    lastError: decision.send ? null : decision.reason,
    dedupeKey: keyFor(template, f),
    sendAfter: now,
  });
  if (row && row.status === "queued" && opts.enqueue) enqueueMailAfterCommit(trx, [row.id]);
  return row;
}

export interface FlagForNotice {
  id: string;
  episode_id: string;
  team_id: string;
  rule: string;
}

/** The address flag notices link to. */
export function publicBaseUrl(): string {
  return (process.env.RIMWATCH_PUBLIC_URL ?? process.env.NEXTAUTH_URL ?? "http://127.0.0.1:3000").replace(/\/+$/, "");
}

/**
 * When a new flag is raised: a notice to the episode's consultant if they switched flag e-mails on
 * (users.notify_on_flag). Recorded in the caller's transaction and queued after it commits. Returns
 * null when the consultant has not opted in, is disabled, or was already told about this flag.
 */
export async function queueFlagNotice(trx: Trx, flag: FlagForNotice): Promise<MessageRow | null> {
  const consultant = await trx("episodes as e")
    .join("users as u", "u.id", "e.consultant_id")
    .join("teams as t", "t.id", "e.team_id")
    .where({ "e.id": flag.episode_id, "e.team_id": flag.team_id, "u.notify_on_flag": true })
    .whereNull("u.disabled_at")
    .first<{ id: string; email: string; hospital: string } | undefined>("u.id", "u.email", "t.hospital");
  if (!consultant) return null;
  const settings = await readDiarySettings(trx, flag.team_id);
  const decision = decideStaffRecipient(consultant.email, settings.mailEnabled);
  const rendered = renderFlagNotice({ ruleLabel: ruleLabel(flag.rule), episodeUrl: `${publicBaseUrl()}/episodes/${flag.episode_id}`, hospital: consultant.hospital });
  const row = await recordMessage(trx, null, {
    teamId: flag.team_id,
    episodeId: flag.episode_id,
    bookingId: null,
    flagId: flag.id,
    recipient: decision.recipient,
    template: "flag-notice",
    subject: rendered.subject,
    status: decision.send ? "queued" : "skipped",
    lastError: decision.send ? null : decision.reason,
    dedupeKey: dedupeKeys.flagNotice(flag.id, consultant.id),
    sendAfter: new Date(),
  });
  if (row?.status === "queued") enqueueMailAfterCommit(trx, [row.id]);
  return row;
}
