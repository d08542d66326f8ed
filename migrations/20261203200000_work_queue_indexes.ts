import type { Knex } from "knex";

// Indexes the two work queues need at scale (measured by bench/queues.ts on 100,000 episodes and
// 1,000,000 measurements):
// - the follow-up diary lists a team's active episodes oldest first (limit 300): with (team_id, status,
//   presented_on) PostgreSQL reads them in order and stops, instead of collecting and sorting them all
//   (the same index serves the missed-films list, which joins a team's active episodes).
// The deviation board needed none: flags (team_id, state, raised_at) already serves it.
export async function up(knex: Knex): Promise<void> {
  await knex.raw("create index episodes_team_status_presented on episodes (team_id, status, presented_on)");
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw("drop index if exists episodes_team_status_presented");
}
