// Mail through the job queue and the real SMTP fake: a booking's confirmation with its calendar
// file, the reminder sweep (time passed in), a refused relay retried then failed, and no mail
// without consent. The app under test runs the mail.send workers; this process runs the sweep.
import { randomUUID } from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeTestDb, testDb } from "../support/db";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { signIn, type Client } from "../support/http";
import { icsEvent, mailsTo, refuseMail, waitFor } from "../support/eml";
import { sweepReminders } from "@/lib/jobs/sweep-reminders";
import { stopBoss } from "@/lib/jobs/boss";
import { db } from "@/db/knex";

let team: TestTeam;
let nurse: Client;
const DAY = 86_400_000;

/** A whole minute some days ahead (the form books in minutes). */
function ahead(days: number): Date {
  const d = new Date(Date.now() + days * DAY);
  d.setUTCSeconds(0, 0);
  return d;
}

async function patientWithEpisode(opts: { consent: boolean; given?: string }): Promise<{ episodeId: string; email: string }> {
  const email = `pat.${randomUUID().slice(0, 8)}@example.org`;
  const p = await makePatient(team, { given_name: opts.given ?? "Orla", email, email_consent: opts.consent, email_consent_at: opts.consent ? new Date() : null });
  const e = await makeEpisode(team, p.id);
  return { episodeId: e.id, email };
}

interface Booked { booking: { id: string; scheduled_at: string; state: string; version: number }; message: { id: string; status: string; recipient: string; reason: string | null } | null }

async function book(episodeId: string, at: Date): Promise<Booked> {
  const res = await nurse.send("POST", "/api/bookings", { episodeId, source: "protocol", scheduledAt: at.toISOString(), location: "X-ray department, Test Hospital" });
  expect(res.status).toBe(201);
  return (await res.json()) as Booked;
}

const messageRow = (id: string) =>
  testDb()("messages").where({ id }).first<{ status: string; attempts: number; last_error: string | null; sent_at: Date | null; template: string } | undefined>();

beforeAll(async () => {
  team = await makeTeam("mail");
  nurse = await signIn(team.users.nurse.email, TEST_PASSWORD);
});

afterAll(async () => {
  refuseMail(false);
  await stopBoss();
  await db().destroy();
  await closeTestDb();
});

describe("booking confirmation", () => {
  it("goes through the queue and the SMTP fake with a calendar file whose DTSTART is the booking's time", async () => {
    const { episodeId, email } = await patientWithEpisode({ consent: true, given: "Orla" });
    const at = ahead(6);
    const { booking, message } = await book(episodeId, at);
    expect(message).toMatchObject({ status: "queued", recipient: email });

    const [mail] = await waitFor("the confirmation in the SMTP fake", () => {
      const m = mailsTo(email);
      return m.length > 0 ? m : null;
    });
    expect(mail!.subject).toMatch(/^Your follow-up chest X-ray:/);
    const text = mail!.parts.find((p) => (p.headers["content-type"] ?? "").startsWith("text/plain"));
    expect(text?.body).toContain("Dear Orla,");
    expect(text?.body).not.toMatch(/pneumothorax/i);

    const cal = mail!.parts.find((p) => (p.headers["content-type"] ?? "").startsWith("text/calendar"));
    expect(cal, "a text/calendar part").toBeDefined();
    // RFC 5545: a calendar object is wrapped in BEGIN:VCALENDAR ... END:VCALENDAR with one VEVENT
    expect(cal!.body).toMatch(/^BEGIN:VCALENDAR\r?\n/);
    expect(cal!.body.trimEnd()).toMatch(/END:VCALENDAR$/);
    const ev = icsEvent(cal!.body);
    // DTSTART in UTC form (RFC 5545 3.3.5): yyyymmddThhmmssZ of the booking's time
    const expected = new Date(booking.scheduled_at).toISOString().replace(/[-:]/g, "").replace(/\.\d{3}/, "");
    expect(ev.DTSTART).toBe(expected);
    expect(new Date(booking.scheduled_at).getTime()).toBe(at.getTime());
    expect(ev.UID).toBe(`booking-${booking.id}@rimwatch`);
    expect(ev.DURATION).toBe("PT30M");

    const row = await waitFor("the send log to say sent", async () => {
      const r = await messageRow(message!.id);
      return r?.status === "sent" ? r : null;
    });
    expect(row.attempts).toBe(1);
    expect(row.sent_at).not.toBeNull();
    const audit = await testDb()("audit_log").where({ entity: "message", entity_id: message!.id }).pluck("action");
    expect(audit).toEqual(expect.arrayContaining(["message.queue", "message.sent"]));
  });
});

describe("no consent", () => {
  it("records the message as skipped with the reason, and nothing reaches the fake", async () => {
    const { episodeId, email } = await patientWithEpisode({ consent: false });
    const { message } = await book(episodeId, ahead(8));
    expect(message).toMatchObject({ status: "skipped" });
    expect(message!.reason).toMatch(/not consented/);
    const row = await messageRow(message!.id);
    expect(row).toMatchObject({ status: "skipped", attempts: 0 });
    // give a worker time to do anything it (wrongly) might
    await new Promise((r) => setTimeout(r, 5000));
    expect(mailsTo(email)).toHaveLength(0);
    expect((await messageRow(message!.id))?.status).toBe("skipped");
    const log = (await (await nurse.get("/api/messages?status=skipped")).json()) as { rows: { id: string; last_error: string }[] };
    expect(log.rows.find((r) => r.id === message!.id)?.last_error).toMatch(/not consented/);
  });
});

describe("reminder sweep", () => {
  it("sends a reminder once it is due, and a second sweep sends nothing more", async () => {
    const { episodeId, email } = await patientWithEpisode({ consent: true, given: "Tamsin" });
    const at = ahead(5);
    const { booking } = await book(episodeId, at);
    await waitFor("the confirmation", () => (mailsTo(email).length === 1 ? true : null));

    // 48 h lead time (common practice, the default setting): due from at - 48 h; sweep as if 24 h before
    // (other tests' bookings share the database, so only this booking's messages are looked at)
    await sweepReminders(new Date(at.getTime() - 72 * 3_600_000));
    const reminders = () => testDb()("messages").where({ booking_id: booking.id, template: "booking-reminder" }).select<{ id: string; status: string }[]>("id", "status");
    expect(await reminders()).toHaveLength(0);

    const now = new Date(at.getTime() - 24 * 3_600_000);
    const first = await sweepReminders(now);
    const rows = await reminders();
    expect(rows).toHaveLength(1);
    expect(first.queued).toContain(rows[0]!.id);

    const mail = await waitFor("the reminder in the SMTP fake", () => mailsTo(email).find((m) => m.subject.startsWith("Reminder:")) ?? null);
    expect(mail.subject).toMatch(/^Reminder: follow-up chest X-ray/);

    const second = await sweepReminders(now);
    const third = await sweepReminders(new Date(now.getTime() + 3_600_000));
    expect(second.queued).not.toContain(rows[0]!.id);
    expect(third.queued).not.toContain(rows[0]!.id);
    expect(await reminders()).toHaveLength(1);
    await new Promise((r) => setTimeout(r, 4000));
    expect(mailsTo(email).filter((m) => m.subject.startsWith("Reminder:"))).toHaveLength(1);
    await waitFor("the reminder marked sent", async () => ((await messageRow(rows[0]!.id))?.status === "sent" ? true : null));
  });
});

describe("a relay that refuses", () => {
  it("is retried with backoff, then shown as failed in the send log; the booking stays booked", { timeout: 120_000 }, async () => {
    const { episodeId, email } = await patientWithEpisode({ consent: true });
    refuseMail(true);
    try {
      const { booking, message } = await book(episodeId, ahead(9));
      expect(message?.status).toBe("queued");
      const row = await waitFor(
        "the message to fail after its retries",
        async () => {
          const r = await messageRow(message!.id);
          return r?.status === "failed" ? r : null;
        },
        100_000,
      );
      // MAIL_RETRY_LIMIT retries after the first attempt (scripts/test.sh sets it for a quick run)
      expect(row.attempts).toBe(Number(process.env.MAIL_RETRY_LIMIT ?? 5) + 1);
      expect(row.last_error).toMatch(/451/);
      expect(mailsTo(email)).toHaveLength(0);
      const b = await testDb()("bookings").where({ id: booking.id }).first<{ state: string; version: number }>();
      expect(b).toMatchObject({ state: "booked", version: 1 });
      const audit = await testDb()("audit_log").where({ entity: "message", entity_id: message!.id }).pluck("action");
      expect(audit.filter((a) => a === "message.retry")).toHaveLength(Number(process.env.MAIL_RETRY_LIMIT ?? 5));
      expect(audit).toContain("message.failed");
      const log = (await (await nurse.get("/api/messages?status=failed")).json()) as { rows: { id: string; attempts: number; last_error: string }[] };
      expect(log.rows.find((r) => r.id === message!.id)).toMatchObject({ attempts: row.attempts });
    } finally {
      refuseMail(false);
    }
  });
});
