// Settings of the follow-up diary and its e-mail: a group of the settings registry, with sources.
// Read them with readDiarySettings (lib/settings-registry.ts); this file only defines the group.
import { z } from "zod";
import type { SettingGroup } from "@/lib/settings-registry";

/** The longest reminder lead time a team may set. */
export const MAX_REMINDER_LEAD_HOURS = 336;

const schema = z
  .object({
    mailEnabled: z.boolean({ message: "Switch e-mail on or off" }),
    reminderLeadHours: z.number({ message: "Reminder lead time: enter a number" }).int("Reminder lead time: whole hours").min(1, "Reminder lead time: at least 1 hour").max(MAX_REMINDER_LEAD_HOURS, `Reminder lead time: at most ${MAX_REMINDER_LEAD_HOURS} hours (14 days)`),
    earlierFilmWithinDays: z.number({ message: "Earlier film: enter a number" }).int("Earlier film: whole days").min(0, "Earlier film: at least 0 days").max(14, "Earlier film: at most 14 days"),
  })
  .strict();
export type DiarySettings = z.output<typeof schema>;

export const diaryGroup: SettingGroup<typeof schema> = {
  key: "diaryMail",
  title: "Follow-up diary and e-mail",
  description:
    "Confirmations, reminders and consultant flag notices. Patients receive e-mail only with consent recorded on their details; with e-mail off every message is kept in the send log as skipped.",
  schema,
  defaults: { mailEnabled: true, reminderLeadHours: 48, earlierFilmWithinDays: 2 },
  fields: {
    mailEnabled: { label: "Send e-mail", source: "common practice: on; switch off while the hospital's mail relay is unavailable", basis: "common practice" },
    reminderLeadHours: { label: "Send the reminder this long before the appointment", unit: "hours", step: 1, source: "common practice: about two days ahead", basis: "common practice" },
    earlierFilmWithinDays: {
      label: "Propose an earlier film within (slower than expected, unresolved)",
      unit: "days",
      step: 1,
      source: "common practice: a slower course is reviewed on a film within a couple of days",
      basis: "common practice",
    },
  },
};
