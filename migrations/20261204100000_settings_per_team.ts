import type { Knex } from "knex";

// Settings belong to a team: one team's administrator changes the rules of that team only. A row with
// no team (what was stored before this migration) is the starting point every team reads until it
// saves its own values; nothing writes such rows any more.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("settings", (t) => {
    t.dropPrimary();
    t.uuid("team_id").references("teams.id").onDelete("CASCADE");
  });
  await knex.raw("create unique index settings_team_key on settings (team_id, key)");
  await knex.raw("create unique index settings_shared_key on settings (key) where team_id is null");
}

export async function down(knex: Knex): Promise<void> {
  await knex("settings").whereNotNull("team_id").delete();
  await knex.raw("drop index if exists settings_shared_key");
  await knex.raw("drop index if exists settings_team_key");
  await knex.schema.alterTable("settings", (t) => {
    t.dropColumn("team_id");
    t.primary(["key"]);
  });
}
