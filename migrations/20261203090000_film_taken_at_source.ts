import type { Knex } from "knex";

// Where a film's taken_at came from: the DICOM header, the upload time (not yet confirmed by a person),
// or entered by a person. A film dated only by its upload can sit on the wrong day of a resorption chart,
// so the episode page says so until someone confirms the date.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("films", (t) => {
    t.text("taken_at_source").checkIn(["dicom", "upload", "entered"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("films", (t) => {
    t.dropColumn("taken_at_source");
  });
}
