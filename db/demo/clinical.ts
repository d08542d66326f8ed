// Demo patients and episodes. (Films, measurements, flags and bookings are added by the scenario generator.)
import type { Knex } from "knex";
import { loadDemoScenario } from "./scenario";

const PATIENTS = [
  { hn: "LGH-100234", family: "Okonkwo-Reyes", given: "Mateo", dob: "1999-04-17", sex: "male", email: "mateo.or@example.org", consent: true },
  { hn: "LGH-100871", family: "Haldane", given: "Saoirse", dob: "1961-09-02", sex: "female", email: null, consent: false },
  { hn: "LGH-101452", family: "Varga", given: "Jonah", dob: "2003-01-28", sex: "male", email: "jonah.varga@example.org", consent: true },
] as const;

export async function loadDemoClinical(knex: Knex, teamIds: Map<string, string>): Promise<void> {
  const teamId = teamIds.get("larkmoor");
  if (!teamId) return;
  const existing = await knex("patients").where({ team_id: teamId }).whereIn("hospital_number", PATIENTS.map((p) => p.hn)).count<{ count: number }[]>({ count: "*" });
  if (Number(existing[0]?.count ?? 0) === 0) await loadBasePatients(knex, teamId);
  // Serial films, measurements, drains, flags and bookings (db/demo/scenario.ts); skips what is there.
  const started = Date.now();
  const added = await loadDemoScenario(knex, teamId);
  if (added > 0) console.log(`[rimwatch] demo scenario: ${added} episodes with films in ${((Date.now() - started) / 1000).toFixed(1)} s`);
}

async function loadBasePatients(knex: Knex, teamId: string): Promise<void> {
  const consultant = await knex("users").where({ team_id: teamId, role: "consultant" }).first<{ id: string }>("id");
  const registrar = await knex("users").where({ team_id: teamId, role: "registrar" }).first<{ id: string }>("id");
  for (const p of PATIENTS) {
    const [row] = await knex("patients")
      .insert({ team_id: teamId, hospital_number: p.hn, family_name: p.family, given_name: p.given, date_of_birth: p.dob, sex: p.sex, email: p.email, email_consent: p.consent })
      .returning<{ id: string }[]>("id");
    if (!row) continue;
    await knex("episodes").insert({
      patient_id: row.id,
      team_id: teamId,
      side: "right",
      presented_on: "2026-11-20",
      aetiology: "primary-spontaneous",
      management: "observation",
      consultant_id: consultant?.id ?? null,
      registrar_id: registrar?.id ?? null,
    });
  }
}
