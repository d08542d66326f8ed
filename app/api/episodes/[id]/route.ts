// GET: an episode with its oxygen periods and procedures. PATCH: update it (optimistic version check).
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { getEpisode, listOxygenPeriods, listProcedures, updateEpisode } from "@/db/episodes";
import { episodeUpdate } from "@/lib/validation/episodes";
import { uuid } from "@/lib/validation/common";
import { evaluateEpisodeFlags } from "@/lib/followup/evaluate";

export const GET = apiRoute<{ id: string }>("episode.read", async ({ user, params }) => {
  const id = uuid.parse(params.id);
  const episode = await getEpisode(db(), user.teamId, id);
  const [oxygen, procedures] = await Promise.all([listOxygenPeriods(db(), id), listProcedures(db(), id)]);
  return { episode, oxygen, procedures };
});

export const PATCH = apiRoute<{ id: string }>("episode.write", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const input = await parseJson(req, episodeUpdate);
  const episode = await db().transaction(async (trx) => {
    const row = await updateEpisode(trx, user, id, input);
    await evaluateEpisodeFlags(trx, id, new Date(), user); // status and primary method change which rules apply
    return row;
  });
  return { episode };
});
