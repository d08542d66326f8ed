// The messages Rimwatch sends, in its own plain words. Pure: data in, subject and text out.
// Patient messages carry only what the patient needs (first name, the appointment's date, time and
// place); never a diagnosis, a size or a finding. Staff notices carry a link, not patient details.
import { appointmentWords, shortDayWords, clinicTime } from "@/lib/clinic-time";

export const TEMPLATES = ["booking-confirmation", "booking-moved", "booking-cancelled", "booking-reminder", "flag-notice"] as const;
export type Template = (typeof TEMPLATES)[number];

export const TEMPLATE_LABELS: Record<Template, string> = {
  "booking-confirmation": "Booking confirmation",
  "booking-moved": "Booking moved",
  "booking-cancelled": "Booking cancelled",
  "booking-reminder": "Reminder",
  "flag-notice": "Flag notice to consultant",
};

export const isTemplate = (v: string): v is Template => (TEMPLATES as readonly string[]).includes(v);
export const PATIENT_TEMPLATES: readonly Template[] = ["booking-confirmation", "booking-moved", "booking-cancelled", "booking-reminder"];

export interface AppointmentData {
  firstName: string;
  kind: "repeat-film" | "clinic";
  scheduledAt: Date;
  location: string;
  hospital: string;
  teamName: string;
}

export interface FlagNoticeData {
  ruleLabel: string;
  episodeUrl: string;
  hospital: string;
}

export interface Rendered {
  subject: string;
  text: string;
}

const WHAT: Record<AppointmentData["kind"], string> = {
  "repeat-film": "follow-up chest X-ray",
  clinic: "follow-up clinic appointment",
};

function signOff(d: AppointmentData): string {
  return [
    "",
    `${d.teamName}`,
    `${d.hospital}`,
    "",
    "This message was sent automatically; replies are not read. To change or cancel, please telephone the clinic on the number in your appointment letter.",
  ].join("\n");
}

const SAFETY =
  "If you feel more breathless, or have new chest pain, before then, do not wait for this appointment: go to your nearest emergency department or call 999.";

export function renderAppointment(template: Exclude<Template, "flag-notice">, d: AppointmentData): Rendered {
  const what = WHAT[d.kind];
  const when = appointmentWords(d.scheduledAt);
  const short = `${shortDayWords(d.scheduledAt)} at ${clinicTime(d.scheduledAt)}`;
  const hello = `Dear ${d.firstName},`;
  switch (template) {
    case "booking-confirmation":
      return {
        subject: `Your ${what}: ${short}`,
        text: [hello, "", `Your ${what} is booked for ${when}.`, `Please go to: ${d.location}.`, "", "A calendar entry is attached.", "", SAFETY, signOff(d)].join("\n"),
      };
    case "booking-moved":
      return {
        subject: `New time for your ${what}: ${short}`,
        text: [hello, "", `Your ${what} has a new time: ${when}.`, `Please go to: ${d.location}.`, "", "The attached calendar entry replaces the earlier one.", "", SAFETY, signOff(d)].join("\n"),
      };
    case "booking-cancelled":
      return {
        subject: `Cancelled: your ${what} on ${short}`,
        text: [hello, "", `Your ${what} on ${when} is cancelled.`, "The clinic will contact you about what happens next.", "", SAFETY, signOff(d)].join("\n"),
      };
    case "booking-reminder":
      return {
        subject: `Reminder: ${what} ${short}`,
        text: [hello, "", `This is a reminder of your ${what} on ${when}.`, `Please go to: ${d.location}.`, "", SAFETY, signOff(d)].join("\n"),
      };
  }
}

export function renderFlagNotice(d: FlagNoticeData): Rendered {
  return {
    subject: `Rimwatch: new flag on an episode you lead (${d.ruleLabel})`,
    text: [
      "A new deviation flag was raised on an episode you lead:",
      "",
      `  ${d.ruleLabel}`,
      "",
      `Open the episode in Rimwatch to review it: ${d.episodeUrl}`,
      "",
      "Patient details are not included in e-mail. You receive these notices because flag e-mails are switched on for your account.",
      `Rimwatch, ${d.hospital}`,
    ].join("\n"),
  };
}
