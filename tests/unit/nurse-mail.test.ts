// Reminders due at a given time, who may be e-mailed, what the messages say (and do not say), the
// calendar file, and clinic wall-clock time.
import { describe, expect, it } from "vitest";
import { dueReminders, reminderTime, type ReminderCandidate } from "@/lib/jobs/reminders";
import { decideRecipient, decideStaffRecipient } from "@/lib/mail/recipient";
import { renderAppointment, renderFlagNotice, TEMPLATES } from "@/lib/mail/templates";
import { bookingIcs } from "@/lib/mail/ics";
import { addDays, clinicDate, clinicTime, clinicWallTimeToUtc } from "@/lib/clinic-time";

const at = (iso: string) => new Date(iso);

describe("reminders due", () => {
  const c = (id: string, scheduled: string, confirmed: string, state: ReminderCandidate["state"] = "booked"): ReminderCandidate => ({
    bookingId: id,
    state,
    scheduledAt: at(scheduled),
    confirmedAt: at(confirmed),
  });
  const lead = 48; // hours: common practice, about two days ahead (a setting)

  it("is due from 48 hours before the appointment until it starts", () => {
    const list = [c("b1", "2026-12-10T09:30:00Z", "2026-12-01T10:00:00Z")];
    expect(reminderTime(at("2026-12-10T09:30:00Z"), lead).toISOString()).toBe("2026-12-08T09:30:00.000Z");
    expect(dueReminders(list, at("2026-12-08T09:29:00Z"), lead)).toEqual([]);
    expect(dueReminders(list, at("2026-12-08T09:30:00Z"), lead).map((r) => r.bookingId)).toEqual(["b1"]);
    expect(dueReminders(list, at("2026-12-10T09:29:00Z"), lead).map((r) => r.bookingId)).toEqual(["b1"]);
    expect(dueReminders(list, at("2026-12-10T09:30:00Z"), lead)).toEqual([]);
  });

  it("skips bookings no longer booked, and those booked or moved inside the lead window", () => {
    // common practice: a confirmation sent the day before is reminder enough
    const now = at("2026-12-09T08:00:00Z");
    const list = [
      c("cancelled", "2026-12-10T09:30:00Z", "2026-12-01T10:00:00Z", "cancelled"),
      c("late-booked", "2026-12-10T10:00:00Z", "2026-12-09T07:00:00Z"),
      c("due-later", "2026-12-10T14:00:00Z", "2026-12-02T10:00:00Z"),
      c("due-first", "2026-12-10T09:00:00Z", "2026-12-02T10:00:00Z"),
    ];
    expect(dueReminders(list, now, lead).map((r) => r.bookingId)).toEqual(["due-first", "due-later"]);
  });

  it("refuses a lead time that is not a positive number of hours", () => {
    expect(() => dueReminders([], at("2026-12-01T00:00:00Z"), 0)).toThrow(RangeError);
  });
});

describe("who may be e-mailed", () => {
  it("needs an address, consent, a valid address and e-mail switched on", () => {
    expect(decideRecipient({ email: " Mateo.OR@example.org ", emailConsent: true, mailEnabled: true })).toEqual({ send: true, recipient: "mateo.or@example.org" });
    expect(decideRecipient({ email: "a@example.org", emailConsent: false, mailEnabled: true })).toMatchObject({ send: false, reason: expect.stringMatching(/not consented/) });
    expect(decideRecipient({ email: null, emailConsent: true, mailEnabled: true })).toMatchObject({ send: false, recipient: "(none)", reason: expect.stringMatching(/No e-mail address/) });
    expect(decideRecipient({ email: "not-an-address", emailConsent: true, mailEnabled: true })).toMatchObject({ send: false, reason: expect.stringMatching(/not valid/) });
    expect(decideRecipient({ email: "a@example.org", emailConsent: true, mailEnabled: false })).toMatchObject({ send: false, reason: expect.stringMatching(/switched off/) });
    expect(decideStaffRecipient("consultant@larkmoor.example", true)).toEqual({ send: true, recipient: "consultant@larkmoor.example" });
  });
});

describe("message wording", () => {
  const d = {
    firstName: "Mateo",
    kind: "repeat-film" as const,
    scheduledAt: at("2026-12-15T09:30:00Z"),
    location: "X-ray department, Larkmoor General Hospital",
    hospital: "Larkmoor General Hospital",
    teamName: "Larkmoor respiratory team",
  };

  it("gives the first name, date, time and place, in clinic time", () => {
    const r = renderAppointment("booking-reminder", d);
    // 2026-12-15 is a Tuesday; London is on GMT in December (UTC+0)
    expect(r.subject).toBe("Reminder: follow-up chest X-ray Tue 15 Dec at 09:30");
    expect(r.text).toContain("Dear Mateo,");
    expect(r.text).toContain("Tuesday 15 December 2026 at 09:30");
    expect(r.text).toContain("X-ray department, Larkmoor General Hospital");
  });

  it("never names the diagnosis or a size in a patient message", () => {
    for (const t of TEMPLATES) {
      if (t === "flag-notice") continue;
      const r = renderAppointment(t, d);
      expect(`${r.subject}\n${r.text}`).not.toMatch(/pneumothorax|collapsed|lung|%|Light|Collins|Rhea/i);
    }
  });

  it("sends consultants a link and the rule, not the patient", () => {
    const r = renderFlagNotice({ ruleLabel: "Shrinking slower than expected", episodeUrl: "http://127.0.0.1:3000/episodes/abc", hospital: "Larkmoor General Hospital" });
    expect(r.text).toContain("http://127.0.0.1:3000/episodes/abc");
    expect(r.subject).toContain("Shrinking slower than expected");
  });
});

describe("calendar file", () => {
  it("is a VCALENDAR with the booking's start in UTC, its UID and version", () => {
    const ics = bookingIcs({
      bookingId: "4f1c",
      version: 3,
      scheduledAt: at("2026-06-15T08:30:00Z"),
      durationMinutes: 30,
      title: "Follow-up chest X-ray",
      location: "X-ray, Larkmoor",
      description: "Larkmoor respiratory team",
      cancelled: false,
    });
    // RFC 5545: DTSTART in UTC form ends in Z; SEQUENCE increases with each change
    expect(ics).toMatch(/^BEGIN:VCALENDAR/);
    expect(ics).toMatch(/\r?\nDTSTART:20260615T083000Z\r?\n/);
    expect(ics).toMatch(/\r?\nUID:booking-4f1c@rimwatch\r?\n/);
    expect(ics).toMatch(/\r?\nSEQUENCE:3\r?\n/);
    expect(ics).toMatch(/\r?\nSTATUS:CONFIRMED\r?\n/);
    expect(ics).toMatch(/END:VCALENDAR\s*$/);
  });

  it("marks a cancelled booking CANCELLED", () => {
    const ics = bookingIcs({ bookingId: "x", version: 2, scheduledAt: at("2026-06-15T08:30:00Z"), durationMinutes: 30, title: "t", location: "l", description: "d", cancelled: true });
    // RFC 5545 STATUS for VEVENT: CANCELLED
    expect(ics).toMatch(/\r?\nSTATUS:CANCELLED\r?\n/);
  });
});

describe("clinic time (Europe/London)", () => {
  it("reads 09:30 in summer as 08:30 UTC and in winter as 09:30 UTC", () => {
    // British Summer Time is UTC+1 from the last Sunday of March to the last Sunday of October (Summer Time Order 2002, from memory)
    expect(clinicWallTimeToUtc("2026-06-15", "09:30").toISOString()).toBe("2026-06-15T08:30:00.000Z");
    expect(clinicWallTimeToUtc("2026-12-15", "09:30").toISOString()).toBe("2026-12-15T09:30:00.000Z");
  });

  it("gives the clinic's date and time for an instant", () => {
    // 23:30 UTC on 30 June is 00:30 on 1 July in BST (UTC+1)
    expect(clinicDate(at("2026-06-30T23:30:00Z"))).toBe("2026-07-01");
    expect(clinicTime(at("2026-06-30T23:30:00Z"))).toBe("00:30");
    expect(addDays("2026-12-28", 7)).toBe("2027-01-04");
  });
});
