// Bookings of the follow-up diary: book (usually from a proposal), move, cancel, mark attended or
// missed, always within the caller's team and against the version the nurse saw. Each change
// records the patient's message (queued or skipped with the reason) in the same transaction and is
// audited; a missed film re-runs the deviation rules so the overdue flag can be raised.
import "server-only";
import type { Knex } from "knex";
import { AppError, notFound } from "@/lib/errors";
import { addDays, CLINIC_TIME_ZONE, clinicDate, clinicWallTimeToUtc } from "@/lib/clinic-time";
import { evaluateEpisodeFlags, type EvaluationResult } from "@/lib/followup/evaluate";
import { BOOKING_RULES, LIVE_STATES } from "@/lib/followup/rules";
import { loadEpisodeSeries } from "@/lib/followup/series";
import { predictionFromSeries } from "@/lib/followup/trend";
import { DEFAULT_PROPOSAL_SETTINGS, proposeBookings, type Proposal, type ProposalInputs } from "@/lib/followup/proposals";
import { recordBookingMessage } from "@/lib/mail/outbox";
import { getProtocols, readDeviationSettings, readDiarySettings } from "@/lib/settings-registry";
import type { BookingCreate, BookingPatch, BookingState } from "@/lib/validation/bookings";
import { writeAudit } from "./audit";
import { getEpisode } from "./episodes";
import type { Trx } from "./knex";
import { latestMessageByBooking, type MessageRow } from "./messages";
import type { Actor } from "./types";

export interface BookingRow {
  id: string;
  episode_id: string;
  team_id: string;
  kind: "repeat-film" | "clinic";
  source: "protocol" | "flag" | "manual";
  flag_id: string | null;
  reason: string | null;
  due_on: string | null;
  scheduled_at: Date;
  location: string | null;
  state: BookingState;
  version: number;
  created_by: string | null;
  created_at: Date;
  updated_at: Date;
}

export const BOOKING_COLUMNS = [
  "id", "episode_id", "team_id", "kind", "source", "flag_id", "reason", "due_on", "scheduled_at", "location", "state",
  "version", "created_by", "created_at", "updated_at",
] as const;

/** Appointments are booked up to a year ahead. */
const MAX_AHEAD_MS = 366 * 86_400_000;
/** A time a few minutes ago still counts as now (the form was open for a while). */
const PAST_SLACK_MS = 5 * 60_000;

export async function getBooking(trx: Trx, teamId: string, id: string, opts: { lock?: boolean } = {}): Promise<BookingRow> {
  const q = trx("bookings").select(BOOKING_COLUMNS).where({ id, team_id: teamId });
  if (opts.lock) q.forUpdate();
  const row = (await q.first()) as BookingRow | undefined;
  if (!row) throw notFound("That booking");
  return row;
}

export async function listEpisodeBookings(trx: Trx, teamId: string, episodeId: string): Promise<BookingRow[]> {
  return (await trx("bookings").select(BOOKING_COLUMNS).where({ team_id: teamId, episode_id: episodeId }).orderBy("scheduled_at", "desc")) as BookingRow[];
}

function checkTime(field: string, at: Date, now: Date): void {
  if (at.getTime() < now.getTime() - PAST_SLACK_MS) {
    throw new AppError("invalid", "That time has already passed; choose a time ahead.", { fields: { [field]: "Choose a time in the future" } });
  }
  if (at.getTime() > now.getTime() + MAX_AHEAD_MS) {
    throw new AppError("invalid", "Bookings can be made up to a year ahead.", { fields: { [field]: "At most a year ahead" } });
  }
}

export interface BookingChange {
  booking: BookingRow;
  /** The patient message this change recorded (queued or skipped), or null. */
  message: MessageRow | null;
  /** For a missed film: what the deviation rules did. */
  flags: EvaluationResult | null;
}

/**
 * Books one appointment for an episode of the actor's team. Refuses a second repeat film ahead of
 * one already booked (move that one instead), and a time in the past.
 */
export async function createBooking(trx: Trx, actor: Actor, input: BookingCreate, now: Date): Promise<BookingChange> {
  const episode = await getEpisode(trx, actor.teamId, input.episodeId);
  // One booking at a time per episode: serialise against a concurrent booking of the same episode.
  await trx("episodes").where({ id: episode.id }).forUpdate().first("id");
  if (episode.status !== "active") {
    throw new AppError("conflict", `This episode is ${episode.status}; nothing more can be booked for it.`);
  }
  const at = new Date(input.scheduledAt);
  checkTime("scheduledAt", at, now);
  if (input.flagId) {
    const flag = await trx("flags").where({ id: input.flagId, episode_id: episode.id, team_id: actor.teamId }).first<{ id: string } | undefined>("id");
    if (!flag) throw new AppError("invalid", "That flag does not belong to this episode.", { fields: { flagId: "Not a flag of this episode" } });
  }
  const ahead = (await trx("bookings")
    .select(BOOKING_COLUMNS)
    .where({ episode_id: episode.id, kind: input.kind, state: "booked" })
    .where("scheduled_at", ">=", clinicWallTimeToUtc(clinicDate(now), "00:00"))
    .orderBy("scheduled_at")
    .first()) as BookingRow | undefined;
  if (ahead) {
    throw new AppError("conflict", `This episode already has a booking on ${clinicDate(ahead.scheduled_at)}. Move that booking instead of adding a second one.`, {
      details: { bookingId: ahead.id, version: ahead.version },
    });
  }
  const [row] = await trx("bookings")
    .insert({
      episode_id: episode.id,
      team_id: actor.teamId,
      kind: input.kind,
      source: input.source,
      flag_id: input.flagId ?? null,
      reason: input.reason ?? null,
      due_on: input.dueOn ?? null,
      scheduled_at: at,
      location: input.location,
      state: "booked",
      created_by: actor.id,
    })
    .returning<BookingRow[]>(BOOKING_COLUMNS);
  if (!row) throw new Error("booking not inserted");
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "booking.create", entity: "booking", entityId: row.id, after: row });
  const message = await recordBookingMessage(trx, actor.id, row.id, "booking-confirmation", now);
  return { booking: row, message, flags: null };
}

const STALE = "Someone else changed this booking while you were looking at it. Reload the diary and try again.";

/** Moves, cancels, or marks a booking attended or missed, against the version the nurse saw. */
export async function changeBooking(trx: Trx, actor: Actor, id: string, patch: BookingPatch, now: Date): Promise<BookingChange> {
  const before = await getBooking(trx, actor.teamId, id, { lock: true });
  if (before.version !== patch.version) throw new AppError("conflict", STALE, { details: { version: before.version } });
  if (before.state !== "booked") {
    throw new AppError("conflict", `This booking is already ${before.state}; only a booked appointment can be changed.`);
  }
  const today = clinicDate(now);
  const base = { version: before.version + 1, updated_at: trx.fn.now() };
  let update: Record<string, unknown>;
  switch (patch.action) {
    case "move": {
      const at = new Date(patch.scheduledAt);
      checkTime("scheduledAt", at, now);
      if (at.getTime() === before.scheduled_at.getTime() && (patch.location ?? before.location) === before.location) {
        throw new AppError("invalid", "The new time and place are the same as before.", { fields: { scheduledAt: "Choose a different time or place" } });
      }
      update = { ...base, scheduled_at: at, location: patch.location ?? before.location };
      break;
    }
    case "cancel":
      update = { ...base, state: "cancelled" };
      break;
    case "attended":
    case "missed":
      if (clinicDate(before.scheduled_at) > today) {
        throw new AppError("invalid", `This appointment is on ${clinicDate(before.scheduled_at)}, still ahead: it can be marked ${patch.action} from that day.`);
      }
      update = { ...base, state: patch.action };
      break;
  }
  const [row] = await trx("bookings").where({ id, team_id: actor.teamId, version: patch.version }).update(update).returning<BookingRow[]>(BOOKING_COLUMNS);
  if (!row) throw new AppError("conflict", STALE);
  await writeAudit(trx, {
    actorId: actor.id,
    teamId: actor.teamId,
    action: `booking.${patch.action}`,
    entity: "booking",
    entityId: id,
    before,
    after: patch.action === "cancel" && patch.reason ? { ...row, cancelReason: patch.reason } : row,
  });
  let message: MessageRow | null = null;
  if (patch.action === "move") message = await recordBookingMessage(trx, actor.id, id, "booking-moved", now);
  if (patch.action === "cancel") message = await recordBookingMessage(trx, actor.id, id, "booking-cancelled", now);
  const flags = patch.action === "missed" || patch.action === "attended" ? await evaluateEpisodeFlags(trx, row.episode_id, now, actor) : null;
  return { booking: row, message, flags };
}

// ---------------------------------------------------------------------------------------------
// The diary's worklist

export interface WorklistPatient {
  id: string;
  name: string;
  hospitalNumber: string;
  /** Whether the patient can be e-mailed (address and consent). */
  mailable: boolean;
}

export interface WorklistBooking {
  id: string;
  episodeId: string;
  patient: WorklistPatient;
  kind: BookingRow["kind"];
  source: BookingRow["source"];
  reason: string | null;
  dueOn: string | null;
  scheduledAt: string;
  location: string | null;
  state: BookingState;
  version: number;
  /** Past and never marked attended or missed. */
  unmarked: boolean;
  lastMessage: { template: string; status: string; lastError: string | null } | null;
}

export interface WorklistProposal extends Proposal {
  /** Clinic default time on the proposed date, ISO. */
  proposedAt: string;
}

export interface WorklistEpisode {
  episodeId: string;
  patient: WorklistPatient;
  side: string;
  management: string;
  presentedOn: string;
  proposals: WorklistProposal[];
}

export interface Worklist {
  today: string;
  /** The clinic's time zone: dates and times in the diary are read and written in it. */
  timeZone: string;
  defaultLocation: string;
  defaultTime: string;
  needing: WorklistEpisode[];
  /** Set when the team has more active episodes than one call checks for proposals (the oldest are checked). */
  needingChecked: { checked: number; active: number } | null;
  coming: WorklistBooking[];
  missed: WorklistBooking[];
}

/** How many active episodes one worklist call checks for proposals, oldest first. */
export const WORKLIST_ACTIVE_LIMIT = 300;

const DEFAULT_TIME = "09:30";

interface PatientFacts { id: string; given_name: string; family_name: string; hospital_number: string; email: string | null; email_consent: boolean }

const patientOf = (p: PatientFacts): WorklistPatient => ({
  id: p.id,
  name: `${p.family_name}, ${p.given_name}`,
  hospitalNumber: p.hospital_number,
  mailable: !!p.email && p.email_consent,
});

/** The place new bookings default to: the team's last used location, else the hospital's X-ray department. */
export async function defaultLocation(trx: Trx, teamId: string): Promise<string> {
  const last = await trx("bookings").where({ team_id: teamId }).whereNotNull("location").orderBy("created_at", "desc").first<{ location: string } | undefined>("location");
  if (last) return last.location;
  const team = await trx("teams").where({ id: teamId }).first<{ hospital: string } | undefined>("hospital");
  return `X-ray department, ${team?.hospital ?? "main hospital"}`;
}

/** Booking proposals of the given episodes (of the caller's team), gathered in a few queries. */
export async function proposalsFor(trx: Trx, teamId: string, episodeIds: readonly string[], now: Date): Promise<Map<string, WorklistProposal[]>> {
  const out = new Map<string, WorklistProposal[]>();
  if (episodeIds.length === 0) return out;
  const today = clinicDate(now);
  const [episodes, protocols, diary, deviation, aspirations, drains, films, flags, bookings, series] = await Promise.all([
    trx("episodes")
      .where("team_id", teamId)
      .whereIn("id", episodeIds)
      .select("id", "status", "management", "presented_on", "discharged_on", "follow_up_protocol") as Promise<
      { id: string; status: ProposalInputs["episode"]["status"]; management: ProposalInputs["episode"]["management"]; presented_on: string; discharged_on: string | null; follow_up_protocol: string | null }[]
    >,
    getProtocols(trx, teamId),
    readDiarySettings(trx, teamId),
    readDeviationSettings(trx, teamId),
    trx("procedures").whereIn("episode_id", episodeIds).where("kind", "needle-aspiration").groupBy("episode_id").select("episode_id", trx.raw("max(performed_at) as at")) as Promise<{ episode_id: string; at: Date }[]>,
    trx("drains")
      .where("team_id", teamId)
      .whereIn("episode_id", episodeIds)
      .groupBy("episode_id")
      .select("episode_id", trx.raw("max(removed_at) as removed_at"), trx.raw("bool_or(removed_at is null) as in_place")) as Promise<{ episode_id: string; removed_at: Date | null; in_place: boolean }[]>,
    trx("films").where("team_id", teamId).whereIn("episode_id", episodeIds).whereNull("deleted_at").groupBy("episode_id").select("episode_id", trx.raw("max(coalesce(taken_at, created_at)) as at")) as Promise<{ episode_id: string; at: Date }[]>,
    trx("flags").where("team_id", teamId).whereIn("episode_id", episodeIds).whereIn("state", LIVE_STATES).whereIn("rule", BOOKING_RULES).select("id", "episode_id", "rule") as Promise<{ id: string; episode_id: string; rule: string }[]>,
    trx("bookings").where("team_id", teamId).whereIn("episode_id", episodeIds).select("id", "episode_id", "kind", "source", "state", "scheduled_at", "version") as Promise<
      { id: string; episode_id: string; kind: BookingRow["kind"]; source: BookingRow["source"]; state: BookingState; scheduled_at: Date; version: number }[]
    >,
    loadEpisodeSeries(trx, episodeIds),
  ]);
  const by = <T extends { episode_id: string }>(rows: T[]) => {
    const m = new Map<string, T[]>();
    for (const r of rows) m.set(r.episode_id, [...(m.get(r.episode_id) ?? []), r]);
    return m;
  };
  const asp = new Map(aspirations.map((a) => [a.episode_id, clinicDate(a.at)]));
  const drn = new Map(drains.map((d) => [d.episode_id, d]));
  const lastFilm = new Map(films.map((f) => [f.episode_id, clinicDate(f.at)]));
  const flagsBy = by(flags);
  const bookingsBy = by(bookings);
  const settings = { ...DEFAULT_PROPOSAL_SETTINGS, earlierFilmWithinDays: diary.earlierFilmWithinDays };
  for (const e of episodes) {
    const data = series.get(e.id);
    const prediction = data ? predictionFromSeries(data, deviation) : null;
    const d = drn.get(e.id);
    const proposals = proposeBookings(
      {
        episode: { id: e.id, status: e.status, management: e.management, presentedOn: e.presented_on, dischargedOn: e.discharged_on, followUpProtocol: e.follow_up_protocol },
        protocols,
        aspirationOn: asp.get(e.id) ?? null,
        drainRemovedOn: d?.removed_at ? clinicDate(d.removed_at) : null,
        drainInPlace: d?.in_place ?? false,
        lastFilmOn: lastFilm.get(e.id) ?? null,
        predictedResolutionOn: prediction ? clinicDate(new Date(prediction.resolutionDate)) : null,
        openFlags: (flagsBy.get(e.id) ?? []).map((f) => ({ id: f.id, rule: f.rule })),
        bookings: (bookingsBy.get(e.id) ?? []).map((b) => ({ id: b.id, kind: b.kind, source: b.source, state: b.state, scheduledOn: clinicDate(b.scheduled_at), version: b.version })),
        today,
      },
      settings,
    );
    out.set(
      e.id,
      proposals.map((p) => ({ ...p, proposedAt: clinicWallTimeToUtc(p.proposedOn, DEFAULT_TIME).toISOString() })),
    );
  }
  return out;
}

type BookingJoined = BookingRow & PatientFacts & { patient_id: string };

function toWorklistBooking(b: BookingJoined, messages: Awaited<ReturnType<typeof latestMessageByBooking>>, startOfToday: Date): WorklistBooking {
  const m = messages.get(b.id);
  return {
    id: b.id,
    episodeId: b.episode_id,
    patient: patientOf({ ...b, id: b.patient_id }),
    kind: b.kind,
    source: b.source,
    reason: b.reason,
    dueOn: b.due_on,
    scheduledAt: b.scheduled_at.toISOString(),
    location: b.location,
    state: b.state,
    version: b.version,
    unmarked: b.state === "booked" && b.scheduled_at < startOfToday,
    lastMessage: m ? { template: m.template, status: m.status, lastError: m.last_error } : null,
  };
}

async function bookingsWithPatients(trx: Trx, teamId: string, where: (q: Knex.QueryBuilder) => void, order: "asc" | "desc", limit: number): Promise<BookingJoined[]> {
  const q = trx("bookings as b")
    .join("episodes as e", "e.id", "b.episode_id")
    .join("patients as p", "p.id", "e.patient_id")
    .where("b.team_id", teamId)
    .where("e.team_id", teamId) // the same team, said of the episode too: the planner then reads only this team's episodes
    .select(
      ...BOOKING_COLUMNS.map((c) => `b.${c}`),
      "p.id as patient_id", "p.given_name", "p.family_name", "p.hospital_number", "p.email", "p.email_consent",
    )
    .orderBy("b.scheduled_at", order)
    .limit(limit);
  where(q);
  return (await q) as BookingJoined[];
}

/**
 * The diary for today: episodes needing a booking (with proposals), the bookings of the coming
 * days, and missed films (marked missed and not rebooked, or past and never marked).
 */
export async function getWorklist(trx: Trx, teamId: string, now: Date): Promise<Worklist> {
  const today = clinicDate(now);
  const startOfToday = clinicWallTimeToUtc(today, "00:00");
  const [active, coming, missed] = await Promise.all([
    trx("episodes as e")
      .join("patients as p", "p.id", "e.patient_id")
      .where({ "e.team_id": teamId, "e.status": "active" })
      .select("e.id", "e.side", "e.management", "e.presented_on", "p.id as patient_id", "p.given_name", "p.family_name", "p.hospital_number", "p.email", "p.email_consent")
      .orderBy("e.presented_on")
      .limit(WORKLIST_ACTIVE_LIMIT) as Promise<(PatientFacts & { id: string; side: string; management: string; presented_on: string; patient_id: string })[]>,
    bookingsWithPatients(trx, teamId, (q) => void q.where("b.state", "booked").where("b.scheduled_at", ">=", startOfToday), "asc", 200),
    bookingsWithPatients(
      trx,
      teamId,
      (q) =>
        void q
          .where((w) => {
            w.where((x) => {
              x.where("b.state", "booked").where("b.scheduled_at", "<", startOfToday);
            }).orWhere("b.state", "missed");
          })
          .where("e.status", "active")
          // a missed film that has since been rebooked (a later booking not cancelled) has been dealt with
          .whereNotExists((s) => {
            s.from("bookings as later")
              .whereRaw("later.episode_id = b.episode_id")
              .whereRaw("later.created_at > b.updated_at")
              .whereIn("later.state", ["booked", "attended"])
              .whereRaw("b.state = 'missed'");
          }),
      "desc",
      200,
    ),
  ]);
  const proposals = await proposalsFor(trx, teamId, active.map((e) => e.id), now);
  // A team past the limit is told so, rather than missing the newest episodes without a word.
  const activeCount =
    active.length < WORKLIST_ACTIVE_LIMIT
      ? active.length
      : Number((await trx("episodes").where({ team_id: teamId, status: "active" }).count<{ n: string }[]>({ n: "*" }))[0]?.n ?? 0);
  const messages = await latestMessageByBooking(trx, teamId, [...coming, ...missed].map((b) => b.id));
  const toItem = (b: BookingJoined) => toWorklistBooking(b, messages, startOfToday);
  return {
    today,
    timeZone: CLINIC_TIME_ZONE,
    defaultLocation: await defaultLocation(trx, teamId),
    defaultTime: DEFAULT_TIME,
    needing: active
      .map((e) => ({
        episodeId: e.id,
        patient: patientOf({ ...e, id: e.patient_id }),
        side: e.side,
        management: e.management,
        presentedOn: e.presented_on,
        proposals: proposals.get(e.id) ?? [],
      }))
      .filter((e) => e.proposals.length > 0)
      .sort((a, b) => ((a.proposals[0]?.proposedOn ?? "") < (b.proposals[0]?.proposedOn ?? "") ? -1 : 1)),
    needingChecked: activeCount > active.length ? { checked: active.length, active: activeCount } : null,
    coming: coming.map(toItem),
    missed: missed.map(toItem),
  };
}

/** One episode's bookings (newest first) and proposals, for the episode page. */
export async function getEpisodeDiary(trx: Trx, teamId: string, episodeId: string, now: Date): Promise<{ bookings: WorklistBooking[]; proposals: WorklistProposal[]; today: string; timeZone: string; defaultLocation: string }> {
  await getEpisode(trx, teamId, episodeId);
  const today = clinicDate(now);
  const startOfToday = clinicWallTimeToUtc(today, "00:00");
  const rows = await bookingsWithPatients(trx, teamId, (q) => void q.where("b.episode_id", episodeId), "desc", 100);
  const [proposals, messages, location] = await Promise.all([
    proposalsFor(trx, teamId, [episodeId], now),
    latestMessageByBooking(trx, teamId, rows.map((r) => r.id)),
    defaultLocation(trx, teamId),
  ]);
  return {
    today,
    timeZone: CLINIC_TIME_ZONE,
    defaultLocation: location,
    proposals: proposals.get(episodeId) ?? [],
    bookings: rows.map((b) => toWorklistBooking(b, messages, startOfToday)),
  };
}

/** The last day shown under "coming days" in the start page's nurse panel. */
export const comingUntil = (today: string, days = 7) => addDays(today, days);
