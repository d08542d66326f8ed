import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("flags", (t) => {
    t.uuid("id").primary().defaultTo(knex.raw("gen_random_uuid()"));
    t.uuid("episode_id").notNullable().references("episodes.id");
    t.uuid("team_id").notNullable().references("teams.id");
    t.uuid("film_id").references("films.id");
    t.uuid("measurement_id").references("measurements.id");
    t.text("rule").notNullable();
    t.text("state").notNullable().defaultTo("open").checkIn(["open", "acknowledged", "resolved", "superseded"]);
    t.jsonb("figures").notNullable().defaultTo("{}");
    t.text("reason").notNullable();
    t.timestamp("raised_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("updated_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.uuid("acknowledged_by").references("users.id");
    t.timestamp("acknowledged_at", { useTz: true });
    t.uuid("resolved_by").references("users.id");
    t.timestamp("resolved_at", { useTz: true });
    t.text("resolution_note");
    t.jsonb("plan");
    t.index(["team_id", "state", "raised_at"]);
    t.index(["episode_id"]);
  });
  // One live flag per rule and episode: a rule that fires again updates it instead of raising a twin.
  await knex.raw("create unique index flags_one_live_per_rule on flags (episode_id, rule) where state in ('open', 'acknowledged')");

  await knex.schema.createTable("settings", (t) => {
    t.text("key").primary();
    t.jsonb("value").notNullable();
    t.uuid("updated_by").references("users.id");
    t.timestamp("updated_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("settings");
  await knex.schema.dropTableIfExists("flags");
}
