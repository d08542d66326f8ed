// Creates an isolated team with one user per role, so tests never depend on each other or on demo data.
import { randomUUID } from "node:crypto";
import bcrypt from "bcryptjs";
import { testDb } from "./db";

export const TEST_PASSWORD = "test-password-42";
export type Role = "registrar" | "consultant" | "nurse" | "admin";
export interface TestUser { id: string; email: string; role: Role; teamId: string }
export interface TestTeam { id: string; users: Record<Role, TestUser> }

let hash: string | null = null;

export async function makeTeam(label = "team"): Promise<TestTeam> {
  const k = testDb();
  hash ??= await bcrypt.hash(TEST_PASSWORD, 4);
  const tag = `${label}-${randomUUID().slice(0, 8)}`;
  const [team] = await k("teams").insert({ name: `Test ${tag}`, hospital: "Test Hospital" }).returning<{ id: string }[]>("id");
  if (!team) throw new Error("team not created");
  const users = {} as Record<Role, TestUser>;
  for (const role of ["registrar", "consultant", "nurse", "admin"] as const) {
    const email = `${role}.${tag}@test.example`;
    const [u] = await k("users").insert({ team_id: team.id, email, name: `${role} ${tag}`, role, password_hash: hash }).returning<{ id: string }[]>("id");
    if (!u) throw new Error("user not created");
    users[role] = { id: u.id, email, role, teamId: team.id };
  }
  return { id: team.id, users };
}

let hnCounter = 0;
export async function makePatient(team: TestTeam, overrides: Record<string, unknown> = {}): Promise<{ id: string; hospitalNumber: string }> {
  hnCounter += 1;
  const hospitalNumber = `T${randomUUID().slice(0, 8).toUpperCase()}${hnCounter}`;
  const [p] = await testDb()("patients")
    .insert({ team_id: team.id, hospital_number: hospitalNumber, family_name: "Testperson", given_name: "Alex", date_of_birth: "1990-05-05", sex: "unknown", ...overrides })
    .returning<{ id: string }[]>("id");
  if (!p) throw new Error("patient not created");
  return { id: p.id, hospitalNumber };
}

export async function makeEpisode(team: TestTeam, patientId: string, overrides: Record<string, unknown> = {}): Promise<{ id: string }> {
  const [e] = await testDb()("episodes")
    .insert({
      patient_id: patientId,
      team_id: team.id,
      side: "right",
      presented_on: "2026-11-01",
      aetiology: "primary-spontaneous",
      management: "observation",
      consultant_id: team.users.consultant.id,
      registrar_id: team.users.registrar.id,
      ...overrides,
    })
    .returning<{ id: string }[]>("id");
  if (!e) throw new Error("episode not created");
  return { id: e.id };
}
