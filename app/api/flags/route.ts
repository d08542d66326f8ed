// GET: one page of the team's flags (filters: state, rule, episode, age; sort). A nurse sees the flags that need a booking.
import { apiRoute, parseQuery } from "@/lib/api";
import { db } from "@/db/knex";
import { listFlags } from "@/db/flags";
import { sparklinesFor } from "@/lib/followup/trend";
import { BOOKING_RULES, ruleLabel } from "@/lib/followup/rules";
import { flagListQuery } from "@/lib/validation/flags";

export const GET = apiRoute("flag.read", async ({ req, user }) => {
  const q = parseQuery(req, flagListQuery);
  const now = new Date();
  let rules: string[] | undefined = q.rule ? [q.rule] : undefined;
  if (user.role === "nurse") rules = (rules ?? [...BOOKING_RULES]).filter((r) => (BOOKING_RULES as readonly string[]).includes(r));
  const page = await listFlags(db(), user.teamId, {
    state: q.state,
    rules,
    episodeId: q.episode,
    minAgeDays: q.minAgeDays,
    now,
    sort: q.sort,
    dir: q.dir,
    page: q.page,
    pageSize: q.pageSize,
  });
  const sparks = await sparklinesFor(db(), user.teamId, page.rows.map((r) => r.episode_id), now);
  return {
    total: page.total,
    page: q.page,
    pageSize: q.pageSize,
    rows: page.rows.map((r) => ({
      id: r.id,
      episodeId: r.episode_id,
      patient: { id: r.patient_id, name: `${r.family_name}, ${r.given_name}`, hospitalNumber: r.hospital_number },
      side: r.side,
      rule: r.rule,
      ruleLabel: ruleLabel(r.rule),
      state: r.state,
      figures: r.figures,
      reason: r.reason,
      filmId: r.film_id,
      raisedAt: r.raised_at.toISOString(),
      ageDays: Math.floor((now.getTime() - r.raised_at.getTime()) / 86_400_000),
      acknowledgedBy: r.acknowledged_by_name,
      acknowledgedAt: r.acknowledged_at?.toISOString() ?? null,
      resolvedBy: r.resolved_by_name,
      resolvedAt: r.resolved_at?.toISOString() ?? null,
      resolutionNote: r.resolution_note,
      plan: r.plan,
      spark: sparks.get(r.episode_id) ?? null,
    })),
  };
});
