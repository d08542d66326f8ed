// The append-only audit log: every change writes one row in the same transaction as the change.
import "server-only";
import type { Trx } from "./knex";

export interface AuditEntry {
  actorId: string | null;
  teamId: string | null;
  action: string;
  entity: string;
  entityId: string | null;
  before?: unknown;
  after?: unknown;
}

export async function writeAudit(trx: Trx, entry: AuditEntry): Promise<void> {
  await trx("audit_log").insert({
    actor_id: entry.actorId,
    team_id: entry.teamId,
    action: entry.action,
    entity: entry.entity,
    entity_id: entry.entityId,
    before: entry.before === undefined ? null : JSON.stringify(entry.before),
    after: entry.after === undefined ? null : JSON.stringify(entry.after),
  });
}

export interface AuditRow {
  id: number;
  at: Date;
  actor_id: string | null;
  actor_name: string | null;
  action: string;
  entity: string;
  entity_id: string | null;
  before: unknown;
  after: unknown;
}

export async function listAudit(trx: Trx, opts: { teamId: string; entity?: string | undefined; entityId?: string | undefined; limit: number; offset: number }): Promise<{ rows: AuditRow[]; total: number }> {
  const base = trx("audit_log as a").where("a.team_id", opts.teamId).modify((q) => {
    if (opts.entity) q.where("a.entity", opts.entity);
    if (opts.entityId) q.where("a.entity_id", opts.entityId);
  });
  const [{ count } = { count: 0 }] = await base.clone().count<{ count: number }[]>({ count: "*" });
  const rows = await base
    .clone()
    .leftJoin("users as u", "u.id", "a.actor_id")
    .select("a.id", "a.at", "a.actor_id", "u.name as actor_name", "a.action", "a.entity", "a.entity_id", "a.before", "a.after")
    .orderBy("a.id", "desc")
    .limit(opts.limit)
    .offset(opts.offset);
  return { rows: rows as AuditRow[], total: Number(count) };
}
