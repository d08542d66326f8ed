// Flag evaluation for one episode, and the nightly sweep over all active episodes.
// Builds the episode's series (lib/followup/series.ts), runs measure/'s deviation rules with the
// settings in force, and reconciles the findings with the flags table (lib/followup/reconcile.ts):
// raise new flags, update the figures of live ones, supersede those whose rule no longer fires, and
// never raise again a finding a consultant has already resolved. Call it inside the transaction of
// the change that prompted it (a saved or signed-off measurement, a missed booking, ...).
import "server-only";
import type { Knex } from "knex";
import { MeasureInputError, deviations } from "@/measure";
import { db, type Trx } from "@/db/knex";
import { insertFlag, liveFlagsOfEpisode, resolvedFlagsOfEpisode, supersedeFlag, updateFlagFigures, type FlagRow } from "@/db/flags";
import type { Actor } from "@/db/types";
import { notFound } from "@/lib/errors";
import { readDeviationSettings } from "@/lib/settings-registry";
import { draftsFromDeviations, reconcile, type StoredLiveFlag } from "./reconcile";
import { ENGINE_RULES, LIVE_STATES } from "./rules";
import { loadEpisodeSeries, toPlan, toSeries } from "./series";

export interface EvaluationResult {
  episodeId: string;
  raised: FlagRow[];
  updated: FlagRow[];
  superseded: FlagRow[];
  unchanged: number;
  /** Findings not raised again because a consultant already resolved a flag resting on the same evidence. */
  alreadyDecided: number;
  /** Set when the episode's record could not be evaluated (e.g. inconsistent oxygen times); flags are left as they were. */
  skipped: string | null;
}

export async function evaluateEpisodeFlags(trx: Trx, episodeId: string, now: Date, actor: Actor | null): Promise<EvaluationResult> {
  // Serialise evaluations of one episode (a measurement save and the nightly sweep may meet): the row lock
  // keeps two transactions from raising the same rule at once.
  const locked = await trx("episodes").where({ id: episodeId }).forUpdate().first<{ team_id: string } | undefined>("team_id");
  if (!locked) throw notFound("That episode");
  const result: EvaluationResult = { episodeId, raised: [], updated: [], superseded: [], unchanged: 0, alreadyDecided: 0, skipped: null };

  const settings = await readDeviationSettings(trx, locked.team_id);
  const seriesMap = await loadEpisodeSeries(trx, [episodeId]);
  const live = await liveFlagsOfEpisode(trx, episodeId);
  const resolved = await resolvedFlagsOfEpisode(trx, episodeId);
  const data = seriesMap.get(episodeId);
  if (!data) throw notFound("That episode");

  let found;
  try {
    found = deviations(toSeries(data), toPlan(data, now), settings);
  } catch (err) {
    if (err instanceof MeasureInputError) {
      result.skipped = err.message;
      return result;
    }
    throw err;
  }

  const steps = reconcile(
    draftsFromDeviations(found),
    live.map((f): StoredLiveFlag => ({ id: f.id, rule: f.rule, state: f.state as StoredLiveFlag["state"], filmId: f.film_id, figures: f.figures, reason: f.reason })),
    resolved.map((f) => ({ id: f.id, rule: f.rule, evidence: typeof f.figures.evidence === "string" ? f.figures.evidence : null })),
  );
  const liveById = new Map(live.map((f) => [f.id, f]));
  const measurementOf = (filmId: string | null) => (filmId ? (data.films.find((p) => p.filmId === filmId)?.measurementId ?? null) : null);

  for (const step of steps) {
    switch (step.op) {
      case "raise":
        result.raised.push(
          await insertFlag(trx, actor, {
            teamId: data.teamId,
            episodeId,
            rule: step.draft.rule,
            filmId: step.draft.filmId,
            measurementId: measurementOf(step.draft.filmId),
            figures: step.draft.figures,
            reason: step.draft.reason,
          }),
        );
        break;
      case "update": {
        const before = liveById.get(step.id);
        if (!before) break;
        result.updated.push(
          await updateFlagFigures(trx, actor, before, {
            filmId: step.draft.filmId,
            measurementId: measurementOf(step.draft.filmId),
            figures: step.draft.figures,
            reason: step.draft.reason,
          }),
        );
        break;
      }
      case "supersede": {
        const before = liveById.get(step.id);
        if (before) result.superseded.push(await supersedeFlag(trx, actor, before));
        break;
      }
      case "keep":
        result.unchanged += 1;
        break;
      case "already-decided":
        result.alreadyDecided += 1;
        break;
    }
  }
  return result;
}

export interface SweepSummary {
  episodes: number;
  raised: number;
  updated: number;
  superseded: number;
  failed: { episodeId: string; message: string }[];
}

/**
 * The nightly run: evaluates every active episode (and any other with a live flag), each in its own transaction so that one bad record
 * does not stop the rest. Idempotent: a second run at the same `now` changes nothing.
 */
export async function sweepFlags(now: Date, opts: { knex?: Knex; teamId?: string } = {}): Promise<SweepSummary> {
  const knex = opts.knex ?? db();
  // Active episodes, and any other episode that still has a live flag of the engine's rules (a resolved or
  // closed episode's findings are then superseded, not left on the board).
  const ids = (await knex("episodes as e")
    .where((w) => {
      void w.where("e.status", "active").orWhereExists(
        knex("flags as f").select(knex.raw("1")).whereRaw("f.episode_id = e.id").whereIn("f.state", LIVE_STATES).whereIn("f.rule", ENGINE_RULES),
      );
    })
    .modify((q) => {
      if (opts.teamId) void q.where("e.team_id", opts.teamId);
    })
    .orderBy("e.id")
    .pluck("e.id")) as string[];
  const summary: SweepSummary = { episodes: ids.length, raised: 0, updated: 0, superseded: 0, failed: [] };
  for (const id of ids) {
    try {
      const r = await knex.transaction((trx) => evaluateEpisodeFlags(trx, id, now, null));
      summary.raised += r.raised.length;
      summary.updated += r.updated.length;
      summary.superseded += r.superseded.length;
      if (r.skipped) summary.failed.push({ episodeId: id, message: r.skipped });
    } catch (err) {
      summary.failed.push({ episodeId: id, message: err instanceof Error ? err.message : "unknown error" });
    }
  }
  return summary;
}
