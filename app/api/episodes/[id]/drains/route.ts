// GET: the episode's chest drains with their observation logs and the drain rules' verdicts. POST: record a drain.
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { insertDrain, listEpisodeDrains } from "@/db/drains";
import { drainInsert } from "@/lib/validation/drains";
import { uuid } from "@/lib/validation/common";

export const GET = apiRoute<{ id: string }>("episode.read", async ({ user, params }) => {
  const id = uuid.parse(params.id);
  const drains = await listEpisodeDrains(db(), user.teamId, id);
  return { drains };
});

export const POST = apiRoute<{ id: string }>("drain.write", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const input = await parseJson(req, drainInsert);
  const drain = await db().transaction((trx) => insertDrain(trx, user, id, input, new Date()));
  return Response.json({ drain }, { status: 201 });
});
