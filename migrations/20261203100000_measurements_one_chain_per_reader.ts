import type { Knex } from "knex";

// One reading per reader and film: a reader's later changes are new versions of their chain, never a
// second chain. Enforced here so two first saves at the same moment cannot both land.
export async function up(knex: Knex): Promise<void> {
  await knex.raw("create unique index measurements_one_chain_per_reader on measurements (film_id, reader_id) where version = 1");
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw("drop index if exists measurements_one_chain_per_reader");
}
