// Pneumothorax episodes with their oxygen periods and procedures, always within the caller's team.
import "server-only";
import type { AETIOLOGIES, EpisodeInput, EpisodeUpdate, MANAGEMENTS } from "@/lib/validation/episodes";
import { AppError, notFound } from "@/lib/errors";
import { writeAudit } from "./audit";
import type { Trx } from "./knex";
import { getPatient } from "./patients";
import type { Actor } from "./types";

export interface EpisodeRow {
  id: string;
  patient_id: string;
  team_id: string;
  side: "left" | "right";
  onset_on: string | null;
  presented_on: string;
  aetiology: (typeof AETIOLOGIES)[number];
  underlying_disease: string | null;
  procedure: string | null;
  management: (typeof MANAGEMENTS)[number];
  status: "active" | "resolved" | "closed";
  primary_method: "collins" | "light" | "rhea";
  follow_up_protocol: string | null;
  consultant_id: string | null;
  registrar_id: string | null;
  discharged_on: string | null;
  resolved_on: string | null;
  notes: string | null;
  version: number;
  created_at: Date;
  updated_at: Date;
}

export const EPISODE_COLUMNS = [
  "id", "patient_id", "team_id", "side", "onset_on", "presented_on", "aetiology", "underlying_disease", "procedure",
  "management", "status", "primary_method", "follow_up_protocol", "consultant_id", "registrar_id", "discharged_on",
  "resolved_on", "notes", "version", "created_at", "updated_at",
] as const;

export interface OxygenPeriodRow {
  id: string;
  episode_id: string;
  started_at: Date;
  ended_at: Date | null;
  flow_l_min: number | null;
  device: string | null;
}

export interface ProcedureRow {
  id: string;
  episode_id: string;
  kind: string;
  performed_at: Date;
  volume_ml: number | null;
  notes: string | null;
}

export async function getEpisode(trx: Trx, teamId: string, id: string): Promise<EpisodeRow> {
  const row = (await trx("episodes").select(EPISODE_COLUMNS).where({ id, team_id: teamId }).first()) as EpisodeRow | undefined;
  if (!row) throw notFound("That episode");
  return row;
}

export async function listPatientEpisodes(trx: Trx, teamId: string, patientId: string): Promise<EpisodeRow[]> {
  return (await trx("episodes").select(EPISODE_COLUMNS).where({ patient_id: patientId, team_id: teamId }).orderBy("presented_on", "desc")) as EpisodeRow[];
}

async function assertTeamClinician(trx: Trx, teamId: string, userId: string | null | undefined, role: string, field: string) {
  if (!userId) return;
  const u = await trx("users").where({ id: userId, team_id: teamId, role }).whereNull("disabled_at").first("id");
  if (!u) throw new AppError("invalid", `Choose a ${role} from your team.`, { fields: { [field]: `Not a ${role} of your team` } });
}

function toRow(input: EpisodeInput) {
  return {
    side: input.side,
    onset_on: input.onsetOn ?? null,
    presented_on: input.presentedOn,
    aetiology: input.aetiology,
    underlying_disease: input.aetiology === "secondary-spontaneous" ? (input.underlyingDisease ?? null) : (input.underlyingDisease ?? null),
    procedure: input.procedure ?? null,
    management: input.management,
    primary_method: input.primaryMethod,
    follow_up_protocol: input.followUpProtocol ?? null,
    consultant_id: input.consultantId ?? null,
    registrar_id: input.registrarId ?? null,
    notes: input.notes ?? null,
  };
}

export async function createEpisode(trx: Trx, actor: Actor, patientId: string, input: EpisodeInput): Promise<EpisodeRow> {
  await getPatient(trx, actor.teamId, patientId);
  await assertTeamClinician(trx, actor.teamId, input.consultantId, "consultant", "consultantId");
  await assertTeamClinician(trx, actor.teamId, input.registrarId, "registrar", "registrarId");
  const [row] = await trx("episodes")
    .insert({ ...toRow(input), patient_id: patientId, team_id: actor.teamId, created_by: actor.id })
    .returning(EPISODE_COLUMNS);
  const episode = row as EpisodeRow;
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "episode.create", entity: "episode", entityId: episode.id, after: episode });
  return episode;
}

export async function updateEpisode(trx: Trx, actor: Actor, id: string, input: EpisodeUpdate): Promise<EpisodeRow> {
  const before = await getEpisode(trx, actor.teamId, id);
  if (before.version !== input.version) {
    throw new AppError("conflict", "Someone else changed this episode while you were editing. Reload to see their changes, then edit again.");
  }
  await assertTeamClinician(trx, actor.teamId, input.consultantId, "consultant", "consultantId");
  await assertTeamClinician(trx, actor.teamId, input.registrarId, "registrar", "registrarId");
  const [row] = await trx("episodes")
    .where({ id, team_id: actor.teamId, version: input.version })
    .update({
      ...toRow(input),
      status: input.status,
      resolved_on: input.resolvedOn ?? null,
      discharged_on: input.dischargedOn ?? null,
      version: input.version + 1,
      updated_at: trx.fn.now(),
    })
    .returning(EPISODE_COLUMNS);
  if (!row) throw new AppError("conflict", "Someone else changed this episode while you were editing. Reload and edit again.");
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "episode.update", entity: "episode", entityId: id, before, after: row });
  return row as EpisodeRow;
}

export async function listOxygenPeriods(trx: Trx, episodeId: string): Promise<OxygenPeriodRow[]> {
  return trx("oxygen_periods").select("id", "episode_id", "started_at", "ended_at", "flow_l_min", "device").where({ episode_id: episodeId }).orderBy("started_at");
}

export async function startOxygen(trx: Trx, actor: Actor, episodeId: string, input: { startedAt: string; flowLMin?: number | null | undefined; device?: string | null | undefined }): Promise<OxygenPeriodRow> {
  await getEpisode(trx, actor.teamId, episodeId);
  const open = await trx("oxygen_periods").where({ episode_id: episodeId }).whereNull("ended_at").first("id");
  if (open) throw new AppError("conflict", "Oxygen is already recorded as running for this episode; record when it stopped first.");
  const [row] = await trx("oxygen_periods")
    .insert({ episode_id: episodeId, started_at: input.startedAt, flow_l_min: input.flowLMin ?? null, device: input.device ?? null, created_by: actor.id })
    .returning(["id", "episode_id", "started_at", "ended_at", "flow_l_min", "device"]);
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "oxygen.start", entity: "episode", entityId: episodeId, after: row });
  return row as OxygenPeriodRow;
}

export async function stopOxygen(trx: Trx, actor: Actor, episodeId: string, periodId: string, endedAt: string): Promise<OxygenPeriodRow> {
  await getEpisode(trx, actor.teamId, episodeId);
  const before = await trx<OxygenPeriodRow>("oxygen_periods").where({ id: periodId, episode_id: episodeId }).first();
  if (!before) throw notFound("That oxygen period");
  if (new Date(endedAt) < new Date(before.started_at)) throw new AppError("invalid", "Oxygen cannot stop before it started.", { fields: { endedAt: "Before the start" } });
  const [row] = await trx("oxygen_periods").where({ id: periodId }).update({ ended_at: endedAt }).returning(["id", "episode_id", "started_at", "ended_at", "flow_l_min", "device"]);
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "oxygen.stop", entity: "episode", entityId: episodeId, before, after: row });
  return row as OxygenPeriodRow;
}

export async function listProcedures(trx: Trx, episodeId: string): Promise<ProcedureRow[]> {
  return trx("procedures").select("id", "episode_id", "kind", "performed_at", "volume_ml", "notes").where({ episode_id: episodeId }).orderBy("performed_at");
}

export async function addProcedure(
  trx: Trx,
  actor: Actor,
  episodeId: string,
  input: { kind: string; performedAt: string; volumeMl?: number | null | undefined; notes?: string | null | undefined },
): Promise<ProcedureRow> {
  await getEpisode(trx, actor.teamId, episodeId);
  const [row] = await trx("procedures")
    .insert({ episode_id: episodeId, kind: input.kind, performed_at: input.performedAt, volume_ml: input.volumeMl ?? null, notes: input.notes ?? null, created_by: actor.id })
    .returning(["id", "episode_id", "kind", "performed_at", "volume_ml", "notes"]);
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "procedure.add", entity: "episode", entityId: episodeId, after: row });
  return row as ProcedureRow;
}

export interface EpisodeListItem {
  id: string;
  patient_id: string;
  hospital_number: string;
  family_name: string;
  given_name: string;
  side: string;
  aetiology: (typeof AETIOLOGIES)[number];
  management: (typeof MANAGEMENTS)[number];
  status: string;
  presented_on: string;
}

export async function listActiveEpisodes(trx: Trx, teamId: string, opts: { registrarId?: string; limit?: number } = {}): Promise<EpisodeListItem[]> {
  return trx("episodes as e")
    .join("patients as p", "p.id", "e.patient_id")
    .where({ "e.team_id": teamId, "e.status": "active" })
    .modify((q) => { if (opts.registrarId) q.where("e.registrar_id", opts.registrarId); })
    .select("e.id", "e.patient_id", "p.hospital_number", "p.family_name", "p.given_name", "e.side", "e.aetiology", "e.management", "e.status", "e.presented_on")
    .orderBy("e.presented_on", "desc")
    .limit(opts.limit ?? 50);
}
