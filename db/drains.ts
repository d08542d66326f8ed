// Chest drains and their observations, always within the caller's team. Every change writes an audit
// row in the same transaction; a drain whose bubbling has gone on past the threshold raises (or updates)
// the episode's live 'persistent-air-leak' flag in that same transaction.
import "server-only";
import { AppError, notFound } from "@/lib/errors";
import { clinicDate } from "@/lib/clinic-time";
import { ADVICE_RANK, assessDrain, lungStateFrom, type DrainAssessment, type FilmFigures, type LungState } from "@/lib/drains/assess";
import type { DrainSettings } from "@/lib/drains/settings";
import { readDrainSettings } from "@/lib/settings-registry";
import type { Bubbling, Drainage, DrainInsert, DrainObservationInput, DrainUpdate, Indication, Technique } from "@/lib/validation/drains";
import { writeAudit } from "./audit";
import { getEpisode } from "./episodes";
import { liveFlagsOfEpisode, raiseFlag, resolvedFlagsOfEpisode, supersedeFlag } from "./flags";
import type { Trx } from "./knex";
import type { Actor } from "./types";

export const AIR_LEAK_RULE = "persistent-air-leak";

export interface DrainRow {
  id: string;
  episode_id: string;
  team_id: string;
  inserted_at: Date;
  inserted_by: string;
  size_fr: number;
  site: string;
  technique: Technique;
  indication: Indication;
  drainage: Drainage;
  suction_on: boolean;
  suction_kpa: number | null;
  removed_at: Date | null;
  removal_reason: string | null;
  created_by: string | null;
  created_at: Date;
}

export interface DrainObservationRow {
  id: string;
  drain_id: string;
  observed_at: Date;
  swinging: boolean;
  bubbling: Bubbling;
  fluid_ml: number | null;
  note: string | null;
  recorded_by: string | null;
  recorded_by_name?: string | null;
  created_at: Date;
}

export interface DrainWithObservations extends DrainRow {
  observations: DrainObservationRow[];
  assessment: DrainAssessment;
}

const DRAIN_COLUMNS = [
  "id", "episode_id", "team_id", "inserted_at", "inserted_by", "size_fr", "site", "technique", "indication", "drainage",
  "suction_on", "suction_kpa", "removed_at", "removal_reason", "created_by", "created_at",
] as const;
const OBSERVATION_COLUMNS = ["id", "drain_id", "observed_at", "swinging", "bubbling", "fluid_ml", "note", "recorded_by", "created_at"] as const;

/** A few minutes' grace for clocks that disagree between the ward PC and the server. */
const FUTURE_GRACE_MS = 5 * 60_000;

function notInFuture(at: string, now: Date, field: string, what: string) {
  if (new Date(at).getTime() > now.getTime() + FUTURE_GRACE_MS) {
    throw new AppError("invalid", `${what} cannot be in the future.`, { fields: { [field]: "In the future" } });
  }
}

/** One drain of the caller's team (404 when missing or of another team). */
export async function getDrain(trx: Trx, teamId: string, id: string, opts: { forUpdate?: boolean } = {}): Promise<DrainRow> {
  const q = trx("drains").select(DRAIN_COLUMNS).where({ id, team_id: teamId });
  if (opts.forUpdate) q.forUpdate();
  const row = (await q.first()) as DrainRow | undefined;
  if (!row) throw notFound("That drain");
  return row;
}

async function observationsOf(trx: Trx, drainIds: readonly string[]): Promise<DrainObservationRow[]> {
  if (drainIds.length === 0) return [];
  return (await trx("drain_observations as o")
    .leftJoin("users as u", "u.id", "o.recorded_by")
    .whereIn("o.drain_id", drainIds)
    .select(...OBSERVATION_COLUMNS.map((c) => `o.${c}`), "u.name as recorded_by_name")
    .orderBy([{ column: "o.observed_at" }, { column: "o.created_at" }])) as DrainObservationRow[];
}

/**
 * Figures of the latest film taken at or after `since` that has a current measurement (the signed-off
 * one when there is one, else the newest). Reads the films and measurements tables directly.
 */
async function latestMeasuredFilmSince(trx: Trx, episodeId: string, since: Date): Promise<FilmFigures | null> {
  const row = (await trx("films as f")
    .join("measurements as m", "m.film_id", "f.id")
    .where({ "f.episode_id": episodeId })
    .whereNull("f.deleted_at")
    .whereNull("m.superseded_at")
    .where("f.taken_at", ">=", since)
    .select("f.taken_at", "m.light_percent", "m.hilum_cm", "m.apex_cm", "m.aid_cm")
    .orderBy([{ column: "f.taken_at", order: "desc" }, { column: "m.signed_off_at", order: "desc", nulls: "last" }, { column: "m.created_at", order: "desc" }])
    .first()) as { taken_at: Date; light_percent: number | null; hilum_cm: number | null; apex_cm: number | null; aid_cm: number | null } | undefined;
  if (!row) return null;
  return { takenAt: row.taken_at, lightPercent: row.light_percent, hilumCm: row.hilum_cm, apexCm: row.apex_cm, aidCm: row.aid_cm };
}

async function lungStateFor(trx: Trx, settings: DrainSettings, episode: { id: string; status: string }, drain: DrainRow): Promise<LungState> {
  const latest = await latestMeasuredFilmSince(trx, episode.id, drain.inserted_at);
  return lungStateFrom({ episodeResolved: episode.status !== "active", latest }, settings);
}

async function assess(trx: Trx, settings: DrainSettings, episode: { id: string; status: string }, drain: DrainRow, observations: DrainObservationRow[]): Promise<DrainAssessment> {
  const lung = await lungStateFor(trx, settings, episode, drain);
  return assessDrain(
    { insertedAt: drain.inserted_at, removedAt: drain.removed_at, sizeFr: drain.size_fr, indication: drain.indication },
    observations.map((o) => ({ observedAt: o.observed_at, swinging: o.swinging, bubbling: o.bubbling })),
    lung,
    { specialistAfterHours: settings.specialistAfterHours, surgicalOpinionAfterHours: settings.surgicalOpinionAfterHours },
  );
}

/**
 * The episode's drains, newest first, each with its observation log (oldest first) and the rules'
 * verdicts under the team's drain settings (read here unless the caller already has them).
 */
export async function listEpisodeDrains(trx: Trx, teamId: string, episodeId: string, known?: DrainSettings): Promise<DrainWithObservations[]> {
  const episode = await getEpisode(trx, teamId, episodeId);
  const drains = (await trx("drains").select(DRAIN_COLUMNS).where({ episode_id: episodeId, team_id: teamId }).orderBy("inserted_at", "desc")) as DrainRow[];
  const observations = await observationsOf(trx, drains.map((d) => d.id));
  const settings = known ?? (await readDrainSettings(trx, teamId));
  const out: DrainWithObservations[] = [];
  for (const d of drains) {
    const own = observations.filter((o) => o.drain_id === d.id);
    out.push({ ...d, observations: own, assessment: await assess(trx, settings, episode, d, own) });
  }
  return out;
}

export async function insertDrain(trx: Trx, actor: Actor, episodeId: string, input: DrainInsert, now: Date): Promise<DrainRow> {
  const episode = await getEpisode(trx, actor.teamId, episodeId);
  notInFuture(input.insertedAt, now, "insertedAt", "The insertion time");
  if (clinicDate(new Date(input.insertedAt)) < episode.presented_on) {
    throw new AppError("invalid", `The drain cannot go in before the episode presented (${episode.presented_on}).`, { fields: { insertedAt: "Before presentation" } });
  }
  if (episode.status === "closed") {
    throw new AppError("conflict", "This episode is closed; reopen it before recording a drain.");
  }
  const [row] = await trx("drains")
    .insert({
      episode_id: episodeId,
      team_id: actor.teamId,
      inserted_at: input.insertedAt,
      inserted_by: input.insertedBy,
      size_fr: input.sizeFr,
      site: input.site,
      technique: input.technique,
      indication: input.indication,
      drainage: input.drainage,
      suction_on: input.suctionOn,
      suction_kpa: input.suctionOn ? (input.suctionKpa ?? null) : null,
      created_by: actor.id,
    })
    .returning<DrainRow[]>([...DRAIN_COLUMNS]);
  if (!row) throw new Error("drain insert returned no row");
  const drain = row;
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "drain.insert", entity: "drain", entityId: drain.id, after: drain });
  return drain;
}

/** Removes the drain (time and reason) or changes its suction. 409 on a drain already removed. */
export async function updateDrain(trx: Trx, actor: Actor, id: string, input: DrainUpdate, now: Date): Promise<DrainRow> {
  const before = await getDrain(trx, actor.teamId, id, { forUpdate: true });
  if (before.removed_at !== null) {
    throw new AppError("conflict", `This drain was already removed (${before.removed_at.toISOString()}); reload to see its record.`);
  }
  let patch: Record<string, unknown>;
  let action: string;
  if (input.action === "remove") {
    notInFuture(input.removedAt, now, "removedAt", "The removal time");
    const removedAt = new Date(input.removedAt);
    if (removedAt < before.inserted_at) {
      throw new AppError("invalid", "A drain cannot come out before it went in.", { fields: { removedAt: "Before insertion" } });
    }
    const lastObs = (await trx("drain_observations").where({ drain_id: id }).max<{ max: Date | null }[]>({ max: "observed_at" }))[0]?.max ?? null;
    if (lastObs !== null && removedAt < new Date(lastObs)) {
      throw new AppError("invalid", "The removal time is before the last observation of this drain.", { fields: { removedAt: "Before the last observation" } });
    }
    patch = { removed_at: input.removedAt, removal_reason: input.removalReason };
    action = "drain.remove";
  } else {
    patch = { suction_on: input.suctionOn, suction_kpa: input.suctionOn ? (input.suctionKpa ?? null) : null };
    action = "drain.suction";
  }
  const [row] = await trx("drains").where({ id, team_id: actor.teamId }).whereNull("removed_at").update(patch).returning<DrainRow[]>([...DRAIN_COLUMNS]);
  if (!row) throw new AppError("conflict", "This drain was changed while you were editing; reload and try again.");
  const drain = row;
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action, entity: "drain", entityId: id, before, after: drain });
  if (input.action === "remove") await reconcileAirLeakFlag(trx, actor, drain.episode_id);
  return drain;
}

export async function addObservation(trx: Trx, actor: Actor, drainId: string, input: DrainObservationInput, now: Date): Promise<DrainObservationRow> {
  const drain = await getDrain(trx, actor.teamId, drainId, { forUpdate: true });
  notInFuture(input.observedAt, now, "observedAt", "The observation time");
  const at = new Date(input.observedAt);
  if (at < drain.inserted_at) {
    throw new AppError("invalid", "An observation cannot come before the drain went in.", { fields: { observedAt: "Before insertion" } });
  }
  if (drain.removed_at !== null && at > drain.removed_at) {
    throw new AppError("conflict", "This drain has been removed; observations after its removal cannot be recorded.", { fields: { observedAt: "After removal" } });
  }
  const [row] = await trx("drain_observations")
    .insert({
      drain_id: drainId,
      observed_at: input.observedAt,
      swinging: input.swinging,
      bubbling: input.bubbling,
      fluid_ml: input.fluidMl ?? null,
      note: input.note ?? null,
      recorded_by: actor.id,
    })
    .returning<DrainObservationRow[]>([...OBSERVATION_COLUMNS]);
  if (!row) throw new Error("observation insert returned no row");
  const obs = row;
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "drain.observe", entity: "drain", entityId: drainId, after: obs });
  await reconcileAirLeakFlag(trx, actor, drain.episode_id);
  return obs;
}

interface LeakFinding {
  drain: DrainRow;
  assessment: DrainAssessment;
}

/**
 * Keeps the episode's 'persistent-air-leak' flag in step with its drains still in place: raises or
 * updates it while a drain has bubbled past the threshold (the longest leak leads), supersedes it when
 * none does. A leak a consultant already resolved at the same or a higher level is not raised again;
 * an escalation (specialist -> thoracic surgical opinion) is.
 */
export async function reconcileAirLeakFlag(trx: Trx, actor: Actor | null, episodeId: string): Promise<void> {
  const episode = (await trx("episodes").select("id", "team_id", "status").where({ id: episodeId }).first()) as { id: string; team_id: string; status: string } | undefined;
  if (!episode) throw notFound("That episode");
  const drains = (await trx("drains").select(DRAIN_COLUMNS).where({ episode_id: episodeId }).whereNull("removed_at")) as DrainRow[];
  const observations = await observationsOf(trx, drains.map((d) => d.id));
  const settings = await readDrainSettings(trx, episode.team_id);
  const findings: LeakFinding[] = [];
  for (const d of drains) {
    const assessment = await assess(trx, settings, episode, d, observations.filter((o) => o.drain_id === d.id));
    if (assessment.airLeak.persistent) findings.push({ drain: d, assessment });
  }
  findings.sort((a, b) => (b.assessment.airLeak.bubblingForHours ?? 0) - (a.assessment.airLeak.bubblingForHours ?? 0));
  const lead = findings[0];
  const live = (await liveFlagsOfEpisode(trx, episodeId)).filter((f) => f.rule === AIR_LEAK_RULE);

  if (lead === undefined) {
    for (const f of live) await supersedeFlag(trx, actor, f);
    return;
  }
  const leak = lead.assessment.airLeak;
  const figures = {
    drainId: lead.drain.id,
    bubblingForHours: leak.bubblingForHours,
    advice: leak.advice,
    lastObservedAt: lead.assessment.lastObservedAt?.toISOString() ?? null,
    sizeFr: lead.drain.size_fr,
    source: leak.source,
  };
  if (live.length === 0) {
    const resolved = (await resolvedFlagsOfEpisode(trx, episodeId)).filter((f) => f.rule === AIR_LEAK_RULE && f.figures.drainId === lead.drain.id);
    const rankOf = (v: unknown) => (typeof v === "string" && v in ADVICE_RANK ? ADVICE_RANK[v as keyof typeof ADVICE_RANK] : 0);
    const decidedRank = Math.max(-1, ...resolved.map((f) => rankOf(f.figures.advice)));
    if (decidedRank >= ADVICE_RANK[leak.advice]) return;
  }
  await raiseFlag(trx, actor, { teamId: episode.team_id, episodeId, rule: AIR_LEAK_RULE, filmId: null, measurementId: null, figures, reason: leak.reason });
}
