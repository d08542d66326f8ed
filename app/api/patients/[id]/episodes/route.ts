// POST: start a new pneumothorax episode for a patient.
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { createEpisode } from "@/db/episodes";
import { episodeInput } from "@/lib/validation/episodes";
import { uuid } from "@/lib/validation/common";

export const POST = apiRoute<{ id: string }>("episode.write", async ({ req, user, params }) => {
  const patientId = uuid.parse(params.id);
  const input = await parseJson(req, episodeInput);
  const episode = await db().transaction((trx) => createEpisode(trx, user, patientId, input));
  return Response.json({ episode }, { status: 201 });
});
