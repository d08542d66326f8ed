import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.raw('create extension if not exists "pgcrypto"');

  await knex.schema.createTable("teams", (t) => {
    t.uuid("id").primary().defaultTo(knex.raw("gen_random_uuid()"));
    t.text("name").notNullable().unique();
    t.text("hospital").notNullable();
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
  });

  await knex.schema.createTable("users", (t) => {
    t.uuid("id").primary().defaultTo(knex.raw("gen_random_uuid()"));
    t.uuid("team_id").notNullable().references("teams.id");
    t.text("email").notNullable().unique();
    t.text("name").notNullable();
    t.text("role").notNullable().checkIn(["registrar", "consultant", "nurse", "admin"]);
    t.text("password_hash").notNullable();
    t.boolean("notify_on_flag").notNullable().defaultTo(false);
    t.timestamp("disabled_at", { useTz: true });
    t.timestamp("password_changed_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("updated_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
  });

  await knex.schema.createTable("sign_in_attempts", (t) => {
    t.bigIncrements("id");
    t.text("email").notNullable();
    t.text("ip");
    t.boolean("succeeded").notNullable();
    t.timestamp("at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(["email", "at"]);
  });

  await knex.schema.createTable("audit_log", (t) => {
    t.bigIncrements("id");
    t.timestamp("at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.uuid("actor_id").references("users.id");
    t.uuid("team_id").references("teams.id");
    t.text("action").notNullable();
    t.text("entity").notNullable();
    t.text("entity_id");
    t.jsonb("before");
    t.jsonb("after");
    t.index(["entity", "entity_id"]);
    t.index(["at"]);
  });

  // The audit log is append-only: no row may be changed or removed.
  await knex.raw(`
    create function audit_log_append_only() returns trigger language plpgsql as $$
    begin
      raise exception 'audit_log is append-only';
    end $$;
    create trigger audit_log_no_change before update or delete on audit_log
      for each row execute function audit_log_append_only();
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw("drop trigger if exists audit_log_no_change on audit_log");
  await knex.raw("drop function if exists audit_log_append_only()");
  await knex.schema.dropTableIfExists("audit_log");
  await knex.schema.dropTableIfExists("sign_in_attempts");
  await knex.schema.dropTableIfExists("users");
  await knex.schema.dropTableIfExists("teams");
}
