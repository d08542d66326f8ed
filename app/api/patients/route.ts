// GET: one page of the team's patients (search, sort). POST: register a patient.
import { apiRoute, parseJson, parseQuery } from "@/lib/api";
import { db } from "@/db/knex";
import { createPatient, listPatients } from "@/db/patients";
import { patientInput, patientListQuery } from "@/lib/validation/patients";

export const GET = apiRoute("patient.read", async ({ req, user }) => {
  const q = parseQuery(req, patientListQuery);
  return listPatients(db(), user.teamId, q);
});

export const POST = apiRoute("patient.write", async ({ req, user }) => {
  const input = await parseJson(req, patientInput);
  const patient = await db().transaction((trx) => createPatient(trx, user, input));
  return Response.json({ patient }, { status: 201 });
});
