// GET: the resorption chart of an episode: series per method, expected line and band, predicted resolution, events, live flags.
import { apiRoute } from "@/lib/api";
import { db } from "@/db/knex";
import { getEpisodeTrend } from "@/lib/followup/trend";
import { uuid } from "@/lib/validation/common";

export const GET = apiRoute<{ id: string }>("episode.read", async ({ user, params }) => {
  const id = uuid.parse(params.id);
  return getEpisodeTrend(db(), user.teamId, id, new Date());
});
