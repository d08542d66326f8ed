import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("films", (t) => {
    t.uuid("id").primary().defaultTo(knex.raw("gen_random_uuid()"));
    t.uuid("episode_id").notNullable().references("episodes.id");
    t.uuid("team_id").notNullable().references("teams.id");
    t.text("kind").notNullable().checkIn(["dicom", "image"]);
    t.text("original_key").notNullable();
    t.text("display_key").notNullable();
    t.text("thumb_key").notNullable();
    t.text("content_type").notNullable();
    t.text("filename").notNullable();
    t.bigInteger("size_bytes").notNullable();
    t.text("sha256").notNullable();
    t.timestamp("taken_at", { useTz: true });
    t.text("projection");
    t.text("position");
    t.integer("rows").notNullable();
    t.integer("columns").notNullable();
    t.integer("display_width").notNullable();
    t.integer("display_height").notNullable();
    t.double("display_scale").notNullable().defaultTo(1);
    t.jsonb("spacing_attrs");
    t.jsonb("calibration");
    t.jsonb("calibration_override");
    t.jsonb("dicom");
    t.uuid("uploaded_by").references("users.id");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("deleted_at", { useTz: true });
    t.uuid("deleted_by").references("users.id");
    t.text("delete_reason");
    t.index(["episode_id", "taken_at"]);
  });
  await knex.raw("create unique index films_episode_sha256_live on films (episode_id, sha256) where deleted_at is null");

  await knex.schema.createTable("measurements", (t) => {
    t.uuid("id").primary().defaultTo(knex.raw("gen_random_uuid()"));
    t.uuid("film_id").notNullable().references("films.id");
    t.uuid("episode_id").notNullable().references("episodes.id");
    t.uuid("team_id").notNullable().references("teams.id");
    t.uuid("chain_id").notNullable();
    t.integer("version").notNullable();
    t.uuid("reader_id").notNullable().references("users.id");
    t.jsonb("calipers").notNullable();
    t.text("plane").notNullable().checkIn(["film", "patient", "none"]);
    t.text("calibration_source");
    t.jsonb("results").notNullable();
    t.double("light_percent");
    t.double("rhea_percent");
    t.double("collins_percent");
    t.double("hilum_cm");
    t.double("apex_cm");
    t.double("aid_cm");
    t.text("reason");
    t.uuid("created_by").notNullable().references("users.id");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.uuid("signed_off_by").references("users.id");
    t.timestamp("signed_off_at", { useTz: true });
    t.timestamp("superseded_at", { useTz: true });
    t.unique(["chain_id", "version"]);
    t.index(["film_id"]);
    t.index(["episode_id", "created_at"]);
  });
  await knex.raw("create index measurements_current on measurements (episode_id) where superseded_at is null");
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("measurements");
  await knex.schema.dropTableIfExists("films");
}
