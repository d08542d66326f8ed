// Deviation flags: raised by the follow-up engine (lib/followup/evaluate.ts) or by other rules
// (raiseFlag), listed for the deviation board, acknowledged and resolved by consultants. Every change
// is audited in the same transaction; every query a person can reach is scoped to their team.
import "server-only";
import { AppError, notFound } from "@/lib/errors";
import { LIVE_STATES, type FlagPlan, type FlagState } from "@/lib/followup/rules";
import { queueFlagNotice } from "@/lib/mail/outbox";
import { writeAudit } from "./audit";
import type { Trx } from "./knex";
import type { Actor } from "./types";

export interface FlagRow {
  id: string;
  episode_id: string;
  team_id: string;
  film_id: string | null;
  measurement_id: string | null;
  rule: string;
  state: FlagState;
  figures: Record<string, unknown>;
  reason: string;
  raised_at: Date;
  updated_at: Date;
  acknowledged_by: string | null;
  acknowledged_at: Date | null;
  resolved_by: string | null;
  resolved_at: Date | null;
  resolution_note: string | null;
  plan: FlagPlan | null;
}

export const FLAG_COLUMNS = [
  "id", "episode_id", "team_id", "film_id", "measurement_id", "rule", "state", "figures", "reason", "raised_at", "updated_at",
  "acknowledged_by", "acknowledged_at", "resolved_by", "resolved_at", "resolution_note", "plan",
] as const;
const prefixed = (alias: string) => FLAG_COLUMNS.map((c) => `${alias}.${c}`);

export interface NewFlag {
  teamId: string;
  episodeId: string;
  rule: string;
  filmId: string | null;
  measurementId: string | null;
  figures: Record<string, unknown>;
  reason: string;
}

/** The episode's open and acknowledged flags (no team check: the engine's own use). */
export async function liveFlagsOfEpisode(trx: Trx, episodeId: string): Promise<FlagRow[]> {
  return (await trx("flags").select(FLAG_COLUMNS).where({ episode_id: episodeId }).whereIn("state", LIVE_STATES).orderBy("raised_at")) as FlagRow[];
}

/** The episode's resolved flags, newest first (no team check: the engine's own use). */
export async function resolvedFlagsOfEpisode(trx: Trx, episodeId: string): Promise<FlagRow[]> {
  return (await trx("flags").select(FLAG_COLUMNS).where({ episode_id: episodeId, state: "resolved" }).orderBy("resolved_at", "desc")) as FlagRow[];
}

export async function insertFlag(trx: Trx, actor: Actor | null, f: NewFlag): Promise<FlagRow> {
  const [row] = await trx("flags")
    .insert({
      episode_id: f.episodeId,
      team_id: f.teamId,
      rule: f.rule,
      film_id: f.filmId,
      measurement_id: f.measurementId,
      figures: JSON.stringify(f.figures),
      reason: f.reason,
      state: "open",
    })
    .returning(FLAG_COLUMNS);
  const flag = row as FlagRow;
  await writeAudit(trx, { actorId: actor?.id ?? null, teamId: f.teamId, action: "flag.raise", entity: "flag", entityId: flag.id, after: flag });
  await queueFlagNotice(trx, flag); // e-mail to the episode's consultant if they opted in (users.notify_on_flag)
  return flag;
}

export async function updateFlagFigures(
  trx: Trx,
  actor: Actor | null,
  before: FlagRow,
  next: { filmId: string | null; measurementId: string | null; figures: Record<string, unknown>; reason: string },
): Promise<FlagRow> {
  const [row] = await trx("flags")
    .where({ id: before.id })
    .update({ film_id: next.filmId, measurement_id: next.measurementId, figures: JSON.stringify(next.figures), reason: next.reason, updated_at: trx.fn.now() })
    .returning(FLAG_COLUMNS);
  const flag = row as FlagRow;
  await writeAudit(trx, { actorId: actor?.id ?? null, teamId: before.team_id, action: "flag.update", entity: "flag", entityId: before.id, before, after: flag });
  return flag;
}

/** A live flag whose rule no longer fires (e.g. after a corrected measurement) is superseded, never deleted. */
export async function supersedeFlag(trx: Trx, actor: Actor | null, before: FlagRow): Promise<FlagRow> {
  const [row] = await trx("flags").where({ id: before.id }).whereIn("state", LIVE_STATES).update({ state: "superseded", updated_at: trx.fn.now() }).returning(FLAG_COLUMNS);
  const flag = (row as FlagRow | undefined) ?? before;
  await writeAudit(trx, { actorId: actor?.id ?? null, teamId: before.team_id, action: "flag.supersede", entity: "flag", entityId: before.id, before, after: flag });
  return flag;
}

/**
 * For rules outside the deviation engine (e.g. a drain's persistent air leak): raises the flag, or updates
 * the figures of the live flag of the same rule (one live flag per rule per episode). Audited.
 */
export async function raiseFlag(trx: Trx, actor: Actor | null, f: NewFlag): Promise<{ flag: FlagRow; raised: boolean }> {
  const episode: unknown = await trx("episodes").where({ id: f.episodeId, team_id: f.teamId }).forUpdate().first("id");
  if (!episode) throw notFound("That episode");
  const live = (await trx("flags").select(FLAG_COLUMNS).where({ episode_id: f.episodeId, rule: f.rule }).whereIn("state", LIVE_STATES).first()) as FlagRow | undefined;
  if (live) return { flag: await updateFlagFigures(trx, actor, live, f), raised: false };
  return { flag: await insertFlag(trx, actor, f), raised: true };
}

// ---- what people reach, always within their team ----

export interface FlagListItem extends FlagRow {
  patient_id: string;
  hospital_number: string;
  family_name: string;
  given_name: string;
  side: string;
  episode_status: string;
  primary_method: string;
  acknowledged_by_name: string | null;
  resolved_by_name: string | null;
}

export const FLAG_SORTS = {
  raised: ["f.raised_at"],
  rule: ["f.rule", "f.raised_at"],
  patient: ["p.family_name", "p.given_name", "f.raised_at"],
  state: ["f.state", "f.raised_at"],
} as const;
export type FlagSort = keyof typeof FLAG_SORTS;

export interface FlagListOptions {
  /** 'live' = open or acknowledged. */
  state: FlagState | "live" | "all";
  rules?: readonly string[] | undefined;
  episodeId?: string | undefined;
  /** Only flags raised at least this many days before `now`. */
  minAgeDays?: number | undefined;
  now: Date;
  sort: FlagSort;
  dir: "asc" | "desc";
  page: number;
  pageSize: number;
}

export async function listFlags(trx: Trx, teamId: string, o: FlagListOptions): Promise<{ rows: FlagListItem[]; total: number }> {
  const base = trx("flags as f")
    .join("episodes as e", "e.id", "f.episode_id")
    .join("patients as p", "p.id", "e.patient_id")
    .where("f.team_id", teamId)
    .andWhere("e.team_id", teamId)
    .modify((q) => {
      if (o.state === "live") q.whereIn("f.state", LIVE_STATES);
      else if (o.state !== "all") q.where("f.state", o.state);
      if (o.rules) q.whereIn("f.rule", o.rules);
      if (o.episodeId) q.where("f.episode_id", o.episodeId);
      if (o.minAgeDays !== undefined && o.minAgeDays > 0) q.where("f.raised_at", "<=", new Date(o.now.getTime() - o.minAgeDays * 86_400_000));
    });
  const [{ count } = { count: 0 }] = await base.clone().count<{ count: number }[]>({ count: "*" });
  const rows = await base
    .clone()
    .leftJoin("users as ua", "ua.id", "f.acknowledged_by")
    .leftJoin("users as ur", "ur.id", "f.resolved_by")
    .select(
      ...prefixed("f"),
      "p.id as patient_id", "p.hospital_number", "p.family_name", "p.given_name",
      "e.side", "e.status as episode_status", "e.primary_method",
      "ua.name as acknowledged_by_name", "ur.name as resolved_by_name",
    )
    .orderBy(FLAG_SORTS[o.sort].map((column) => ({ column, order: o.dir })))
    .orderBy("f.id")
    .limit(o.pageSize)
    .offset((o.page - 1) * o.pageSize);
  return { rows: rows as FlagListItem[], total: Number(count) };
}

export async function getFlag(trx: Trx, teamId: string, id: string): Promise<FlagRow> {
  const row = (await trx("flags").select(FLAG_COLUMNS).where({ id, team_id: teamId }).first()) as FlagRow | undefined;
  if (!row) throw notFound("That flag");
  return row;
}

const stateWords: Record<FlagState, string> = {
  open: "open",
  acknowledged: "acknowledged",
  resolved: "already resolved",
  superseded: "superseded by a newer evaluation (the rule no longer fires)",
};

/** Marks an open flag as seen. 409 when it is no longer open. */
export async function acknowledgeFlag(trx: Trx, actor: Actor, id: string): Promise<FlagRow> {
  const before = await getFlag(trx, actor.teamId, id);
  const [row] = await trx("flags")
    .where({ id, team_id: actor.teamId, state: "open" })
    .update({ state: "acknowledged", acknowledged_by: actor.id, acknowledged_at: trx.fn.now(), updated_at: trx.fn.now() })
    .returning(FLAG_COLUMNS);
  if (!row) throw new AppError("conflict", `This flag is ${stateWords[before.state]}, so it cannot be acknowledged. Reload the board to see its state.`);
  const flag = row as FlagRow;
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "flag.acknowledge", entity: "flag", entityId: id, before, after: flag });
  return flag;
}

/** Resolves an open or acknowledged flag with a note and, optionally, a plan. 409 when it is no longer live. */
export async function resolveFlag(trx: Trx, actor: Actor, id: string, input: { note: string; plan?: FlagPlan | undefined }): Promise<FlagRow> {
  const before = await getFlag(trx, actor.teamId, id);
  const [row] = await trx("flags")
    .where({ id, team_id: actor.teamId })
    .whereIn("state", LIVE_STATES)
    .update({
      state: "resolved",
      resolved_by: actor.id,
      resolved_at: trx.fn.now(),
      resolution_note: input.note,
      plan: input.plan ? JSON.stringify(input.plan) : null,
      updated_at: trx.fn.now(),
    })
    .returning(FLAG_COLUMNS);
  if (!row) throw new AppError("conflict", `This flag is ${stateWords[before.state]}, so it cannot be resolved again. Reload to see its state.`);
  const flag = row as FlagRow;
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "flag.resolve", entity: "flag", entityId: id, before, after: flag });
  return flag;
}

/** Live flags per rule in the team (start page). */
export async function countLiveFlagsByRule(trx: Trx, teamId: string): Promise<{ rule: string; count: number }[]> {
  const rows = await trx("flags as f")
    .join("episodes as e", "e.id", "f.episode_id")
    .where({ "f.team_id": teamId, "e.team_id": teamId })
    .whereIn("f.state", LIVE_STATES)
    .groupBy("f.rule")
    .select("f.rule")
    .count<{ rule: string; count: number }[]>({ count: "*" });
  return rows.map((r) => ({ rule: r.rule, count: Number(r.count) }));
}
