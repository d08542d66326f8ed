// Queue names and the job settings read from the environment once (validated with zod).
import { z } from "zod";

export const QUEUES = {
  mailSend: "mail.send",
  remindersSweep: "reminders.sweep",
  flagsSweep: "flags.sweep",
  filmsCleanup: "films.cleanup",
} as const;
export type QueueName = (typeof QUEUES)[keyof typeof QUEUES];

const cron = z.string().regex(/^\S+( \S+){4}$/, "five cron fields");
const jobEnv = z.object({
  RIMWATCH_JOBS: z.enum(["on", "off"]).default("on"),
  /** Attempts after the first one; pg-boss retries with exponential backoff and jitter. */
  MAIL_RETRY_LIMIT: z.coerce.number().int().min(0).max(20).default(5),
  /** First retry delay in seconds; each retry doubles it (retryBackoff). */
  MAIL_RETRY_DELAY_SECONDS: z.coerce.number().int().min(1).max(3600).default(60),
  JOBS_POLL_SECONDS: z.coerce.number().min(0.5).max(60).default(2),
  REMINDERS_CRON: cron.default("*/5 * * * *"),
  FLAGS_CRON: cron.default("30 2 * * *"),
  FILMS_CLEANUP_CRON: cron.default("15 3 * * *"),
  CRON_TIME_ZONE: z.string().default("Europe/London"),
});
export type JobEnv = z.output<typeof jobEnv>;

export function readJobEnv(env: NodeJS.ProcessEnv = process.env): JobEnv {
  return jobEnv.parse(env);
}
