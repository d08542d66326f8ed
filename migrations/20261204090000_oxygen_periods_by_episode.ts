import type { Knex } from "knex";

// Oxygen periods are always read by episode (the chart, flag evaluation, the diary's predictions); without
// this index PostgreSQL scanned the whole table for each read (seen in bench/queues.ts with BENCH_EXPLAIN=1).
export async function up(knex: Knex): Promise<void> {
  await knex.raw("create index if not exists oxygen_periods_episode on oxygen_periods (episode_id, started_at)");
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw("drop index if exists oxygen_periods_episode");
}
