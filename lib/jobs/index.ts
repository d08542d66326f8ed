// Starts Rimwatch's job workers in this process: mail.send (with retry and backoff),
// reminders.sweep (every few minutes), flags.sweep (nightly) and films.cleanup (nightly).
// Called once from instrumentation.ts; RIMWATCH_JOBS=off leaves this process without workers
// (another app server, or a separate worker process, then does the work).
import "server-only";
import { deliverMessage } from "@/lib/mail/deliver";
import { getBoss, stopBoss } from "./boss";
import { QUEUES, readJobEnv } from "./config";
import type { MailJob } from "./queue";
import { sweepReminders } from "./sweep-reminders";
import { NIGHTLY_JOBS } from "./nightly";

const g = globalThis as unknown as { rimwatchJobs?: Promise<boolean> };

async function start(): Promise<boolean> {
  const env = readJobEnv();
  if (env.RIMWATCH_JOBS === "off") return false;
  const boss = await getBoss();

  await boss.work<MailJob>(
    QUEUES.mailSend,
    { includeMetadata: true, batchSize: 1, pollingIntervalSeconds: env.JOBS_POLL_SECONDS },
    async (jobs) => {
      for (const job of jobs) {
        const result = await deliverMessage(job.data.messageId, { now: new Date(), finalAttempt: job.retryCount >= job.retryLimit });
        // Throwing hands the job back to pg-boss, which retries it after its backoff delay.
        if (result.outcome === "retry") throw new Error(`Temporary failure, will retry: ${result.detail}`);
      }
    },
  );

  await boss.work(QUEUES.remindersSweep, { pollingIntervalSeconds: Math.max(env.JOBS_POLL_SECONDS, 5) }, async () => {
    const r = await sweepReminders(new Date());
    if (r.queued.length || r.requeued || r.skipped) console.log(`[jobs] reminders: ${r.queued.length} queued, ${r.skipped} skipped, ${r.requeued} re-queued`);
  });
  await boss.schedule(QUEUES.remindersSweep, env.REMINDERS_CRON, {}, { tz: env.CRON_TIME_ZONE });

  for (const job of NIGHTLY_JOBS) {
    await boss.work(job.queue, { pollingIntervalSeconds: 30 }, async () => {
      const summary = await job.run(new Date());
      console.log(`[jobs] ${job.queue}: ${summary}`);
    });
    await boss.schedule(job.queue, job.cron(env), {}, { tz: env.CRON_TIME_ZONE });
  }
  console.log("[jobs] workers started: mail.send, reminders.sweep, " + NIGHTLY_JOBS.map((j) => j.queue).join(", "));
  return true;
}

/** Starts the workers once per process; resolves false when jobs are switched off. */
export function startJobs(): Promise<boolean> {
  g.rimwatchJobs ??= start().catch((err: unknown) => {
    g.rimwatchJobs = undefined;
    throw err;
  });
  return g.rimwatchJobs;
}

/**
 * For instrumentation: starts the workers without holding up the server, trying again every 15 s
 * (up to 20 times) while the database is not reachable yet.
 */
export function startJobsInBackground(attempt = 1): void {
  startJobs().catch((err: unknown) => {
    console.error(`[jobs] workers did not start (attempt ${attempt}):`, err instanceof Error ? err.message : "unknown error");
    if (attempt < 20) setTimeout(() => startJobsInBackground(attempt + 1), 15_000).unref();
  });
}

export async function stopJobs(): Promise<void> {
  g.rimwatchJobs = undefined;
  await stopBoss();
}
