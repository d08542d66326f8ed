// Whether a patient message may go out, and to which address. Pure: the same answer at queue time
// and again just before sending (consent can be withdrawn in between).
import { z } from "zod";

const address = z.email();

export type RecipientDecision =
  | { send: true; recipient: string }
  | { send: false; recipient: string; reason: string };

export interface RecipientFacts {
  email: string | null;
  emailConsent: boolean;
  mailEnabled: boolean;
}

/**
 * No message without recorded e-mail consent, none to an address that fails validation, none while
 * mail is switched off in the settings. The reason is kept in the send log.
 */
export function decideRecipient(f: RecipientFacts): RecipientDecision {
  const recipient = (f.email ?? "").trim().toLowerCase();
  if (!f.mailEnabled) return { send: false, recipient: recipient || "(none)", reason: "E-mail is switched off in the settings." };
  if (!recipient) return { send: false, recipient: "(none)", reason: "No e-mail address on the patient's record." };
  if (!f.emailConsent) return { send: false, recipient, reason: "The patient has not consented to e-mail." };
  if (!address.safeParse(recipient).success) return { send: false, recipient, reason: "The e-mail address on the record is not valid; correct it on the patient's details." };
  return { send: true, recipient };
}

/** The same checks for a staff address (no consent needed: notices are an opt-in setting of the user). */
export function decideStaffRecipient(email: string, mailEnabled: boolean): RecipientDecision {
  const recipient = email.trim().toLowerCase();
  if (!mailEnabled) return { send: false, recipient, reason: "E-mail is switched off in the settings." };
  if (!address.safeParse(recipient).success) return { send: false, recipient, reason: "The user's e-mail address is not valid." };
  return { send: true, recipient };
}
