// Next.js calls register() once when a server process starts. Rimwatch starts its job workers here
// (pg-boss: mail, reminders, nightly sweeps): only in the Node.js runtime, never during `next build`,
// and not at all with RIMWATCH_JOBS=off. A failure to start is logged and retried; the app still
// serves pages, and queued messages wait in the send log until workers run.
export async function register(): Promise<void> {
  if (process.env.NEXT_RUNTIME !== "nodejs") return;
  if (process.env.NEXT_PHASE === "phase-production-build") return;
  if (process.env.RIMWATCH_JOBS === "off") return;
  const { startJobsInBackground } = await import("./lib/jobs");
  startJobsInBackground();
}
