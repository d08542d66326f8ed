// GET: a patient with their episodes. PATCH: edit the patient's details (optimistic version check).
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { getPatient, updatePatient } from "@/db/patients";
import { listPatientEpisodes } from "@/db/episodes";
import { patientUpdate } from "@/lib/validation/patients";
import { uuid } from "@/lib/validation/common";

export const GET = apiRoute<{ id: string }>("patient.read", async ({ user, params }) => {
  const id = uuid.parse(params.id);
  const patient = await getPatient(db(), user.teamId, id);
  const episodes = await listPatientEpisodes(db(), user.teamId, id);
  return { patient, episodes };
});

export const PATCH = apiRoute<{ id: string }>("patient.write", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const input = await parseJson(req, patientUpdate);
  const patient = await db().transaction((trx) => updatePatient(trx, user, id, input));
  return { patient };
});
