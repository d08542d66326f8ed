// The nightly jobs: flag evaluation over every active episode (the follow-up engine's sweepFlags),
// and removal of stored film objects that never got their row (the films engineer's cleanup).
import "server-only";
import { sweepFlags } from "@/lib/followup/evaluate";
import { cleanupOrphanObjects } from "@/lib/films/store-film";
import { QUEUES, type JobEnv } from "./config";

export interface NightlyJob {
  queue: (typeof QUEUES)["flagsSweep" | "filmsCleanup"];
  cron: (env: JobEnv) => string;
  /** Runs the job at `now` and returns a one-line summary for the log. */
  run: (now: Date) => Promise<string>;
}

export const NIGHTLY_JOBS: readonly NightlyJob[] = [
  {
    queue: QUEUES.flagsSweep,
    cron: (env) => env.FLAGS_CRON,
    run: async (now) => {
      const s = await sweepFlags(now);
      return `${s.episodes} episodes, ${s.raised} raised, ${s.updated} updated, ${s.superseded} superseded, ${s.failed.length} not evaluated`;
    },
  },
  {
    queue: QUEUES.filmsCleanup,
    cron: (env) => env.FILMS_CLEANUP_CRON,
    run: async (now) => {
      const s = await cleanupOrphanObjects({ now });
      return `${s.scanned} objects scanned, ${s.removed.length} orphans removed`;
    },
  },
];
