// Loads the demo scenario into the database named by DATABASE_URL. Safe to run again: it only adds what is missing.
import { createKnex } from "../knex";
import { hashPassword } from "../users";
import { DEMO_PASSWORD, DEMO_TEAMS, DEMO_USERS } from "./users";
import { loadDemoClinical } from "./clinical";

async function main() {
  const knex = createKnex();
  try {
    const teamIds = new Map<string, string>();
    for (const t of DEMO_TEAMS) {
      await knex("teams").insert({ name: t.name, hospital: t.hospital }).onConflict("name").ignore();
      const row = await knex("teams").where({ name: t.name }).first<{ id: string }>("id");
      if (!row) throw new Error(`team ${t.name} missing`);
      teamIds.set(t.key, row.id);
    }
    const hash = await hashPassword(DEMO_PASSWORD);
    for (const u of DEMO_USERS) {
      await knex("users")
        .insert({ team_id: teamIds.get(u.team), email: u.email, name: u.name, role: u.role, password_hash: hash, notify_on_flag: u.role === "consultant" })
        .onConflict("email")
        .ignore();
    }
    await loadDemoClinical(knex, teamIds);
    console.log(`[rimwatch] demo data ready (${DEMO_USERS.length} users)`);
  } finally {
    await knex.destroy();
  }
}

// Exit when done: the object store's kept-alive sockets would otherwise hold the process open.
main().then(() => process.exit(0), (err: unknown) => {
  console.error("[rimwatch] demo data failed:", err);
  process.exit(1);
});
