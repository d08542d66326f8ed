import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("bookings", (t) => {
    t.uuid("id").primary().defaultTo(knex.raw("gen_random_uuid()"));
    t.uuid("episode_id").notNullable().references("episodes.id");
    t.uuid("team_id").notNullable().references("teams.id");
    t.text("kind").notNullable().defaultTo("repeat-film").checkIn(["repeat-film", "clinic"]);
    t.text("source").notNullable().defaultTo("manual").checkIn(["protocol", "flag", "manual"]);
    t.uuid("flag_id").references("flags.id");
    t.text("reason");
    t.date("due_on");
    t.timestamp("scheduled_at", { useTz: true }).notNullable();
    t.text("location");
    t.text("state").notNullable().defaultTo("booked").checkIn(["booked", "attended", "missed", "cancelled"]);
    t.integer("version").notNullable().defaultTo(1);
    t.uuid("created_by").references("users.id");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("updated_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(["team_id", "state", "scheduled_at"]);
    t.index(["episode_id"]);
  });

  await knex.schema.createTable("messages", (t) => {
    t.uuid("id").primary().defaultTo(knex.raw("gen_random_uuid()"));
    t.uuid("team_id").notNullable().references("teams.id");
    t.uuid("episode_id").references("episodes.id");
    t.uuid("booking_id").references("bookings.id");
    t.text("recipient").notNullable();
    t.text("template").notNullable();
    t.text("subject").notNullable();
    t.text("status").notNullable().defaultTo("queued").checkIn(["queued", "sent", "failed", "skipped"]);
    t.integer("attempts").notNullable().defaultTo(0);
    t.text("last_error");
    t.text("dedupe_key").notNullable().unique();
    t.timestamp("send_after", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("sent_at", { useTz: true });
    t.index(["team_id", "created_at"]);
  });

  await knex.schema.createTable("drains", (t) => {
    t.uuid("id").primary().defaultTo(knex.raw("gen_random_uuid()"));
    t.uuid("episode_id").notNullable().references("episodes.id");
    t.uuid("team_id").notNullable().references("teams.id");
    t.timestamp("inserted_at", { useTz: true }).notNullable();
    t.text("inserted_by").notNullable();
    t.integer("size_fr").notNullable();
    t.text("site").notNullable();
    t.text("technique").notNullable().checkIn(["seldinger", "blunt-dissection"]);
    t.text("indication").notNullable().defaultTo("air").checkIn(["air", "blood", "fluid"]);
    t.text("drainage").notNullable().checkIn(["underwater-seal", "flutter-valve"]);
    t.boolean("suction_on").notNullable().defaultTo(false);
    t.decimal("suction_kpa", 5, 1);
    t.timestamp("removed_at", { useTz: true });
    t.text("removal_reason");
    t.uuid("created_by").references("users.id");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(["episode_id"]);
  });

  await knex.schema.createTable("drain_observations", (t) => {
    t.uuid("id").primary().defaultTo(knex.raw("gen_random_uuid()"));
    t.uuid("drain_id").notNullable().references("drains.id").onDelete("CASCADE");
    t.timestamp("observed_at", { useTz: true }).notNullable();
    t.boolean("swinging").notNullable();
    t.text("bubbling").notNullable().checkIn(["none", "on-coughing", "on-expiration", "continuous"]);
    t.integer("fluid_ml");
    t.text("note");
    t.uuid("recorded_by").references("users.id");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(["drain_id", "observed_at"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("drain_observations");
  await knex.schema.dropTableIfExists("drains");
  await knex.schema.dropTableIfExists("messages");
  await knex.schema.dropTableIfExists("bookings");
}
