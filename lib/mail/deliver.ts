// Delivering one recorded message: lock its row, check again that it may go (consent, booking
// still standing, e-mail on), send over SMTP, record the attempt. Idempotent: a message that is no
// longer queued, or that another worker is sending, is left alone.
import "server-only";
import type { SendMailOptions } from "nodemailer";
import { db, type Trx } from "@/db/knex";
import { dedupeKeys, lockQueuedMessage, recordAttempt, type MessageRow } from "@/db/messages";
import { ruleLabel } from "@/lib/followup/rules";
import { bookingIcs } from "./ics";
import { appointmentData, loadBookingMailFacts, publicBaseUrl } from "./outbox";
import { decideRecipient, decideStaffRecipient } from "./recipient";
import { readDiarySettings } from "@/lib/settings-registry";
import { isTemplate, renderAppointment, renderFlagNotice, type Rendered } from "./templates";
import { describeSmtpError, isPermanentSmtpError, mailTransport } from "./transport";

export type DeliveryResult =
  | { outcome: "sent" | "skipped" | "failed"; messageId: string; detail?: string }
  | { outcome: "retry"; messageId: string; detail: string }
  | { outcome: "not-queued"; messageId: string };

type Prepared = { skip: string } | { to: string; rendered: Rendered; ics: string | null };

const FILM_MINUTES = 30;

async function prepare(trx: Trx, m: MessageRow, now: Date): Promise<Prepared> {
  if (!isTemplate(m.template)) return { skip: `Rimwatch has no message called “${String(m.template)}”.` };
  const settings = await readDiarySettings(trx, m.team_id);
  if (m.template === "flag-notice") {
    if (!m.flag_id) return { skip: "The notice has no flag." };
    type FlagFacts = { rule: string; state: string; episode_id: string; email: string | null; notify_on_flag: boolean | null; disabled_at: Date | null; hospital: string };
    const row = await trx("flags as f")
      .join("episodes as e", "e.id", "f.episode_id")
      .leftJoin("users as u", "u.id", "e.consultant_id")
      .join("teams as t", "t.id", "f.team_id")
      .where("f.id", m.flag_id)
      .first<FlagFacts | undefined>("f.rule", "f.state", "f.episode_id", "u.email", "u.notify_on_flag", "u.disabled_at", "t.hospital");
    if (!row) return { skip: "The flag no longer exists." };
    if (row.state !== "open" && row.state !== "acknowledged") return { skip: "The flag was dealt with before the notice went out." };
    if (!row.email || !row.notify_on_flag || row.disabled_at) return { skip: "The consultant no longer receives flag e-mails." };
    const d = decideStaffRecipient(row.email, settings.mailEnabled);
    if (!d.send) return { skip: d.reason };
    return { to: d.recipient, rendered: renderFlagNotice({ ruleLabel: ruleLabel(row.rule), episodeUrl: `${publicBaseUrl()}/episodes/${row.episode_id}`, hospital: row.hospital }), ics: null };
  }

  if (!m.booking_id) return { skip: "The message has no booking." };
  const f = await loadBookingMailFacts(trx, m.booking_id);
  if (!f) return { skip: "The booking no longer exists." };
  const template = m.template;
  if (template !== "booking-cancelled" && f.state !== "booked") return { skip: `The booking was marked ${f.state} before this message went out.` };
  if (template === "booking-reminder") {
    if (m.dedupe_key !== dedupeKeys.reminder(f.bookingId, f.scheduledAt)) return { skip: "The booking was moved; the reminder follows the new time." };
    if (f.scheduledAt.getTime() <= now.getTime()) return { skip: "The appointment time had passed." };
  }
  if (template === "booking-moved" && m.dedupe_key !== dedupeKeys.moved(f.bookingId, f.version)) {
    return { skip: "The booking changed again; a newer message replaces this one." };
  }
  const d = decideRecipient({ email: f.email, emailConsent: f.emailConsent, mailEnabled: settings.mailEnabled });
  if (!d.send) return { skip: d.reason };
  const rendered = renderAppointment(template, appointmentData(f));
  const ics =
    template === "booking-reminder"
      ? null
      : bookingIcs({
          bookingId: f.bookingId,
          version: f.version,
          scheduledAt: f.scheduledAt,
          durationMinutes: FILM_MINUTES,
          title: f.kind === "repeat-film" ? "Follow-up chest X-ray" : "Follow-up clinic appointment",
          location: f.location,
          description: `${f.teamName}, ${f.hospital}`,
          cancelled: template === "booking-cancelled",
        });
  return { to: d.recipient, rendered, ics };
}

/**
 * Sends one message. `finalAttempt` (from the queue's retry count) turns a temporary failure into
 * `failed`; otherwise it stays queued and the caller lets the queue retry with backoff. A 5xx SMTP
 * answer fails at once (retrying cannot help).
 */
export async function deliverMessage(messageId: string, opts: { now: Date; finalAttempt: boolean }): Promise<DeliveryResult> {
  return db().transaction(async (trx): Promise<DeliveryResult> => {
    const m = await lockQueuedMessage(trx, messageId);
    if (!m) return { outcome: "not-queued", messageId };
    const prepared = await prepare(trx, m, opts.now);
    if ("skip" in prepared) {
      await recordAttempt(trx, m, { status: "skipped", reason: prepared.skip });
      return { outcome: "skipped", messageId, detail: prepared.skip };
    }
    const { transport, from } = mailTransport();
    const mail: SendMailOptions = {
      from,
      to: prepared.to,
      subject: prepared.rendered.subject,
      text: prepared.rendered.text,
      headers: { "X-Rimwatch-Message": m.id },
      ...(prepared.ics
        ? { attachments: [{ filename: "appointment.ics", content: prepared.ics, contentType: "text/calendar; charset=utf-8; method=PUBLISH" }] }
        : {}),
    };
    try {
      await transport.sendMail(mail);
    } catch (err) {
      const error = describeSmtpError(err);
      if (opts.finalAttempt || isPermanentSmtpError(err)) {
        await recordAttempt(trx, m, { status: "failed", error });
        return { outcome: "failed", messageId, detail: error };
      }
      await recordAttempt(trx, m, { status: "queued", error });
      return { outcome: "retry", messageId, detail: error };
    }
    await recordAttempt(trx, m, { status: "sent", at: new Date(), recipient: prepared.to, subject: prepared.rendered.subject });
    return { outcome: "sent", messageId };
  });
}
