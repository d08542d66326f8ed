// The send log: one row per message Rimwatch means to send, with its fate (queued, sent, failed,
// skipped with the reason). The unique dedupe key makes a second sweep or a retry record nothing new.
import "server-only";
import type { MessageListQuery, MessageStatus } from "@/lib/validation/bookings";
import type { Template } from "@/lib/mail/templates";
import { writeAudit } from "./audit";
import type { Trx } from "./knex";

export interface MessageRow {
  id: string;
  team_id: string;
  episode_id: string | null;
  booking_id: string | null;
  flag_id: string | null;
  recipient: string;
  template: Template;
  subject: string;
  status: MessageStatus;
  attempts: number;
  last_error: string | null;
  dedupe_key: string;
  send_after: Date;
  created_at: Date;
  sent_at: Date | null;
}

export const MESSAGE_COLUMNS = [
  "id", "team_id", "episode_id", "booking_id", "flag_id", "recipient", "template", "subject", "status",
  "attempts", "last_error", "dedupe_key", "send_after", "created_at", "sent_at",
] as const;

export interface NewMessage {
  teamId: string;
  episodeId: string | null;
  bookingId: string | null;
  flagId: string | null;
  recipient: string;
  template: Template;
  subject: string;
  status: "queued" | "skipped";
  lastError: string | null;
  dedupeKey: string;
  sendAfter: Date;
}

/** Dedupe keys: one confirmation per booking version, one reminder per appointment time, one notice per flag. */
export const dedupeKeys = {
  confirmation: (bookingId: string) => `booking:${bookingId}:confirmation`,
  moved: (bookingId: string, version: number) => `booking:${bookingId}:moved:v${version}`,
  cancelled: (bookingId: string) => `booking:${bookingId}:cancelled`,
  reminder: (bookingId: string, scheduledAt: Date) => `booking:${bookingId}:reminder:${scheduledAt.toISOString()}`,
  flagNotice: (flagId: string, recipientUserId: string) => `flag:${flagId}:notice:${recipientUserId}`,
};

/**
 * Records a message, audited, unless one with the same dedupe key exists (then returns null and
 * changes nothing). Runs inside the caller's transaction, so the message stands or falls with the
 * change that caused it.
 */
export async function recordMessage(trx: Trx, actorId: string | null, m: NewMessage): Promise<MessageRow | null> {
  const [row] = await trx("messages")
    .insert({
      team_id: m.teamId,
      episode_id: m.episodeId,
      booking_id: m.bookingId,
      flag_id: m.flagId,
      recipient: m.recipient,
      template: m.template,
      subject: m.subject,
      status: m.status,
      last_error: m.lastError,
      dedupe_key: m.dedupeKey,
      send_after: m.sendAfter,
    })
    .onConflict("dedupe_key")
    .ignore()
    .returning<MessageRow[]>(MESSAGE_COLUMNS);
  if (!row) return null;
  await writeAudit(trx, {
    actorId,
    teamId: m.teamId,
    action: m.status === "queued" ? "message.queue" : "message.skip",
    entity: "message",
    entityId: row.id,
    after: { template: row.template, recipient: row.recipient, status: row.status, reason: row.last_error, bookingId: row.booking_id, flagId: row.flag_id },
  });
  return row;
}

/** Locks one queued message for sending; null when it is not queued or another worker holds it. */
export async function lockQueuedMessage(trx: Trx, id: string): Promise<MessageRow | null> {
  const row = (await trx("messages").select(MESSAGE_COLUMNS).where({ id, status: "queued" }).forUpdate().skipLocked().first()) as MessageRow | undefined;
  return row ?? null;
}

export type MessageOutcome =
  | { status: "sent"; at: Date; recipient: string; subject: string }
  | { status: "skipped"; reason: string }
  | { status: "failed"; error: string }
  | { status: "queued"; error: string };

/** Stores the result of one delivery attempt, audited (the actor is the system: null). */
export async function recordAttempt(trx: Trx, before: MessageRow, outcome: MessageOutcome): Promise<MessageRow> {
  const counted = outcome.status === "skipped" ? before.attempts : before.attempts + 1;
  const patch =
    outcome.status === "sent"
      ? { status: "sent", attempts: counted, sent_at: outcome.at, last_error: null, recipient: outcome.recipient, subject: outcome.subject }
      : outcome.status === "skipped"
        ? { status: "skipped", last_error: outcome.reason }
        : { status: outcome.status, attempts: counted, last_error: outcome.error };
  const [row] = await trx("messages").where({ id: before.id }).update(patch).returning<MessageRow[]>(MESSAGE_COLUMNS);
  if (!row) throw new Error("message vanished while sending");
  await writeAudit(trx, {
    actorId: null,
    teamId: before.team_id,
    action: outcome.status === "queued" ? "message.retry" : `message.${outcome.status}`,
    entity: "message",
    entityId: before.id,
    before: { status: before.status, attempts: before.attempts },
    after: { status: row.status, attempts: row.attempts, error: row.last_error },
  });
  return row;
}

/** Queued messages nobody has tried yet, older than `olderThan`: their queue job may have been lost. */
export async function untriedQueuedMessages(trx: Trx, olderThan: Date, limit = 200): Promise<string[]> {
  const rows = (await trx("messages")
    .select("id")
    .where({ status: "queued", attempts: 0 })
    .where("created_at", "<", olderThan)
    .orderBy("created_at")
    .limit(limit)) as { id: string }[];
  return rows.map((r) => r.id);
}

export interface MessageListItem {
  id: string;
  episode_id: string | null;
  booking_id: string | null;
  recipient: string;
  template: Template;
  subject: string;
  status: MessageStatus;
  attempts: number;
  last_error: string | null;
  created_at: Date;
  sent_at: Date | null;
  patient_name: string | null;
}

/** One page of the team's send log, newest first. */
export async function listMessages(trx: Trx, teamId: string, q: MessageListQuery): Promise<{ rows: MessageListItem[]; total: number }> {
  const base = trx("messages as m")
    .where("m.team_id", teamId)
    .modify((b) => {
      if (q.status) b.where("m.status", q.status);
      if (q.bookingId) b.where("m.booking_id", q.bookingId);
      if (q.episodeId) b.where("m.episode_id", q.episodeId);
    });
  const [{ count } = { count: 0 }] = await base.clone().count<{ count: number }[]>({ count: "*" });
  const rows = (await base
    .clone()
    .leftJoin("episodes as e", "e.id", "m.episode_id")
    .leftJoin("patients as p", "p.id", "e.patient_id")
    .select(
      "m.id", "m.episode_id", "m.booking_id", "m.recipient", "m.template", "m.subject", "m.status", "m.attempts", "m.last_error", "m.created_at", "m.sent_at",
      trx.raw("case when p.id is null then null else p.given_name || ' ' || p.family_name end as patient_name"),
    )
    .orderBy("m.created_at", "desc")
    .orderBy("m.id")
    .limit(q.pageSize)
    .offset((q.page - 1) * q.pageSize)) as MessageListItem[];
  return { rows, total: Number(count) };
}

/** The latest message of each booking (for the diary's "confirmation sent?" column). */
export async function latestMessageByBooking(trx: Trx, teamId: string, bookingIds: readonly string[]): Promise<Map<string, Pick<MessageRow, "template" | "status" | "last_error">>> {
  if (bookingIds.length === 0) return new Map();
  const rows = (await trx("messages")
    .distinctOn("booking_id")
    .where("team_id", teamId)
    .whereIn("booking_id", bookingIds)
    .select("booking_id", "template", "status", "last_error")
    .orderBy("booking_id")
    .orderBy("created_at", "desc")) as (Pick<MessageRow, "template" | "status" | "last_error"> & { booking_id: string })[];
  return new Map(rows.map((r) => [r.booking_id, { template: r.template, status: r.status, last_error: r.last_error }]));
}
