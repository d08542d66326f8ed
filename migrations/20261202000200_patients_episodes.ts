import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("patients", (t) => {
    t.uuid("id").primary().defaultTo(knex.raw("gen_random_uuid()"));
    t.uuid("team_id").notNullable().references("teams.id");
    t.text("hospital_number").notNullable().unique();
    t.text("family_name").notNullable();
    t.text("given_name").notNullable();
    t.date("date_of_birth").notNullable();
    t.text("sex").notNullable().checkIn(["female", "male", "other", "unknown"]);
    t.text("email");
    t.text("phone");
    t.boolean("email_consent").notNullable().defaultTo(false);
    t.timestamp("email_consent_at", { useTz: true });
    t.integer("version").notNullable().defaultTo(1);
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("updated_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(["team_id", "family_name", "given_name"]);
  });

  await knex.schema.createTable("episodes", (t) => {
    t.uuid("id").primary().defaultTo(knex.raw("gen_random_uuid()"));
    t.uuid("patient_id").notNullable().references("patients.id");
    t.uuid("team_id").notNullable().references("teams.id");
    t.text("side").notNullable().checkIn(["left", "right"]);
    t.date("onset_on");
    t.date("presented_on").notNullable();
    t.text("aetiology").notNullable().checkIn(["primary-spontaneous", "secondary-spontaneous", "iatrogenic", "traumatic"]);
    t.text("underlying_disease");
    t.text("procedure");
    t.text("management").notNullable().checkIn(["observation", "needle-aspiration", "chest-drain", "ambulatory-valve", "surgery"]);
    t.text("status").notNullable().defaultTo("active").checkIn(["active", "resolved", "closed"]);
    t.text("primary_method").notNullable().defaultTo("collins").checkIn(["collins", "light", "rhea"]);
    t.text("follow_up_protocol");
    t.uuid("consultant_id").references("users.id");
    t.uuid("registrar_id").references("users.id");
    t.date("discharged_on");
    t.date("resolved_on");
    t.text("notes");
    t.integer("version").notNullable().defaultTo(1);
    t.uuid("created_by").references("users.id");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("updated_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(["team_id", "status"]);
    t.index(["patient_id"]);
  });

  await knex.schema.createTable("oxygen_periods", (t) => {
    t.uuid("id").primary().defaultTo(knex.raw("gen_random_uuid()"));
    t.uuid("episode_id").notNullable().references("episodes.id").onDelete("CASCADE");
    t.timestamp("started_at", { useTz: true }).notNullable();
    t.timestamp("ended_at", { useTz: true });
    t.decimal("flow_l_min", 5, 1);
    t.text("device");
    t.uuid("created_by").references("users.id");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(["episode_id"]);
  });

  await knex.schema.createTable("procedures", (t) => {
    t.uuid("id").primary().defaultTo(knex.raw("gen_random_uuid()"));
    t.uuid("episode_id").notNullable().references("episodes.id").onDelete("CASCADE");
    t.text("kind").notNullable().checkIn(["needle-aspiration", "ambulatory-valve", "surgery", "other"]);
    t.timestamp("performed_at", { useTz: true }).notNullable();
    t.integer("volume_ml");
    t.text("notes");
    t.uuid("created_by").references("users.id");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(["episode_id"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("procedures");
  await knex.schema.dropTableIfExists("oxygen_periods");
  await knex.schema.dropTableIfExists("episodes");
  await knex.schema.dropTableIfExists("patients");
}
