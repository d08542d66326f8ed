// The one pg-boss instance of a process (kept on globalThis: Next bundles instrumentation and route
// handlers apart, and they must share it). Queues live in PostgreSQL (schema pgboss), so several
// app servers share them; pg-boss takes jobs with SKIP LOCKED.
import "server-only";
import PgBoss from "pg-boss";
import { QUEUES, readJobEnv } from "./config";

const g = globalThis as unknown as { rimwatchBoss?: Promise<PgBoss> };

async function createBoss(): Promise<PgBoss> {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error("DATABASE_URL is not set");
  const env = readJobEnv();
  const boss = new PgBoss({ connectionString: url, max: 4, application_name: "rimwatch-jobs" });
  boss.on("error", (err) => console.error("[jobs] pg-boss:", err instanceof Error ? err.message : err));
  await boss.start();
  const mailRetry = { retryLimit: env.MAIL_RETRY_LIMIT, retryDelay: env.MAIL_RETRY_DELAY_SECONDS, retryBackoff: true };
  await boss.createQueue(QUEUES.mailSend, { name: QUEUES.mailSend, ...mailRetry, expireInSeconds: 120 });
  await boss.updateQueue(QUEUES.mailSend, { name: QUEUES.mailSend, ...mailRetry, expireInSeconds: 120 });
  // Sweeps: one at a time; a second one waiting behind a running one is enough.
  for (const name of [QUEUES.remindersSweep, QUEUES.flagsSweep, QUEUES.filmsCleanup]) {
    await boss.createQueue(name, { name, policy: "singleton", retryLimit: 1, retryDelay: 60, expireInSeconds: 15 * 60 });
  }
  return boss;
}

/** The started pg-boss of this process, with the queues created. */
export function getBoss(): Promise<PgBoss> {
  g.rimwatchBoss ??= createBoss().catch((err: unknown) => {
    g.rimwatchBoss = undefined;
    throw err;
  });
  return g.rimwatchBoss;
}

/** Stops this process's pg-boss (tests, shutdown). */
export async function stopBoss(): Promise<void> {
  const pending = g.rimwatchBoss;
  g.rimwatchBoss = undefined;
  if (!pending) return;
  const boss = await pending.catch(() => null);
  await boss?.stop({ graceful: true, wait: true, timeout: 10_000 });
}
