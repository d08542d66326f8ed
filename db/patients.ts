// Patients, always within the caller's team.
import "server-only";
import type { PatientInput } from "@/lib/validation/patients";
import { AppError, notFound } from "@/lib/errors";
import { writeAudit } from "./audit";
import type { Trx } from "./knex";
import type { Actor } from "./types";

export interface PatientRow {
  id: string;
  team_id: string;
  hospital_number: string;
  family_name: string;
  given_name: string;
  date_of_birth: string;
  sex: string;
  email: string | null;
  phone: string | null;
  email_consent: boolean;
  email_consent_at: Date | null;
  version: number;
  created_at: Date;
  updated_at: Date;
}

const COLUMNS = [
  "id", "team_id", "hospital_number", "family_name", "given_name", "date_of_birth", "sex",
  "email", "phone", "email_consent", "email_consent_at", "version", "created_at", "updated_at",
] as const;

function toRow(input: PatientInput) {
  return {
    hospital_number: input.hospitalNumber,
    family_name: input.familyName,
    given_name: input.givenName,
    date_of_birth: input.dateOfBirth,
    sex: input.sex,
    email: input.email,
    phone: input.phone ?? null,
    email_consent: input.emailConsent && !!input.email,
  };
}

export async function getPatient(trx: Trx, teamId: string, id: string): Promise<PatientRow> {
  const row = (await trx("patients").select(COLUMNS).where({ id, team_id: teamId }).first()) as PatientRow | undefined;
  if (!row) throw notFound("That patient");
  return row;
}

export interface PatientListItem {
  id: string;
  hospital_number: string;
  family_name: string;
  given_name: string;
  date_of_birth: string;
  sex: string;
  active_episodes: number;
  updated_at: Date;
}

const SORTS = {
  name: ["p.family_name", "p.given_name"],
  hospitalNumber: ["p.hospital_number"],
  dateOfBirth: ["p.date_of_birth"],
  updated: ["p.updated_at"],
} as const;

export async function listPatients(
  trx: Trx,
  teamId: string,
  opts: { q?: string | undefined; sort: keyof typeof SORTS; dir: "asc" | "desc"; page: number; pageSize: number },
): Promise<{ rows: PatientListItem[]; total: number }> {
  const base = trx("patients as p")
    .where("p.team_id", teamId)
    .modify((q) => {
      if (opts.q) {
        const like = `%${opts.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
        q.where((w) => {
          void w.whereILike("p.family_name", like).orWhereILike("p.given_name", like).orWhereILike("p.hospital_number", like);
        });
      }
    });
  const [{ count } = { count: 0 }] = await base.clone().count<{ count: number }[]>({ count: "*" });
  const rows = await base
    .clone()
    .select(
      "p.id", "p.hospital_number", "p.family_name", "p.given_name", "p.date_of_birth", "p.sex", "p.updated_at",
      trx.raw("(select count(*)::int from episodes e where e.patient_id = p.id and e.status = 'active') as active_episodes"),
    )
    .orderBy(SORTS[opts.sort].map((column) => ({ column, order: opts.dir })))
    .orderBy("p.id")
    .limit(opts.pageSize)
    .offset((opts.page - 1) * opts.pageSize);
  return { rows: rows as PatientListItem[], total: Number(count) };
}

async function assertHospitalNumberFree(trx: Trx, hospitalNumber: string, exceptId?: string) {
  const clash = await trx("patients").where({ hospital_number: hospitalNumber }).modify((q) => { if (exceptId) q.whereNot({ id: exceptId }); }).first("id");
  if (clash) throw new AppError("conflict", "Another patient already has that hospital number.", { fields: { hospitalNumber: "Already registered" } });
}

export async function createPatient(trx: Trx, actor: Actor, input: PatientInput): Promise<PatientRow> {
  await assertHospitalNumberFree(trx, input.hospitalNumber);
  const [row] = await trx("patients")
    .insert({ ...toRow(input), team_id: actor.teamId, email_consent_at: input.emailConsent && input.email ? trx.fn.now() : null })
    .returning(COLUMNS);
  const patient = row as PatientRow;
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "patient.create", entity: "patient", entityId: patient.id, after: patient });
  return patient;
}

export async function updatePatient(trx: Trx, actor: Actor, id: string, input: PatientInput & { version: number }): Promise<PatientRow> {
  const before = await getPatient(trx, actor.teamId, id);
  if (before.version !== input.version) {
    throw new AppError("conflict", "Someone else changed this patient while you were editing. Reload to see their changes, then edit again.");
  }
  await assertHospitalNumberFree(trx, input.hospitalNumber, id);
  const consentChanged = before.email_consent !== (input.emailConsent && !!input.email);
  const [row] = await trx("patients")
    .where({ id, team_id: actor.teamId, version: input.version })
    .update({
      ...toRow(input),
      ...(consentChanged ? { email_consent_at: input.emailConsent && input.email ? trx.fn.now() : null } : {}),
      version: input.version + 1,
      updated_at: trx.fn.now(),
    })
    .returning(COLUMNS);
  if (!row) throw new AppError("conflict", "Someone else changed this patient while you were editing. Reload and edit again.");
  await writeAudit(trx, { actorId: actor.id, teamId: actor.teamId, action: "patient.update", entity: "patient", entityId: id, before, after: row });
  return row as PatientRow;
}
