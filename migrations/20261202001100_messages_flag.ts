import type { Knex } from "knex";

// A consultant's flag notice refers to the flag it announces; the send log keeps the link.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("messages", (t) => {
    t.uuid("flag_id").references("flags.id");
    t.index(["status", "send_after"]);
    t.index(["booking_id"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("messages", (t) => {
    t.dropIndex(["booking_id"]);
    t.dropIndex(["status", "send_after"]);
    t.dropColumn("flag_id");
  });
}
