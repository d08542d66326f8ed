// PATCH: record when supplemental oxygen stopped.
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { stopOxygen } from "@/db/episodes";
import { oxygenStop } from "@/lib/validation/episodes";
import { uuid } from "@/lib/validation/common";
import { evaluateEpisodeFlags } from "@/lib/followup/evaluate";

export const PATCH = apiRoute<{ id: string; periodId: string }>("episode.write", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const periodId = uuid.parse(params.periodId);
  const { endedAt } = await parseJson(req, oxygenStop);
  const period = await db().transaction(async (trx) => {
    const row = await stopOxygen(trx, user, id, periodId, endedAt);
    await evaluateEpisodeFlags(trx, id, new Date(), user); // oxygen changes the expected resorption
    return row;
  });
  return { period };
});
