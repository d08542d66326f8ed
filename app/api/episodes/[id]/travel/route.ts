// GET: the travel note's figures for one episode (flying date, gas expansion at cabin altitude, diving).
import { apiRoute } from "@/lib/api";
import { db } from "@/db/knex";
import { getTravelFigures } from "@/lib/travel/load";
import { uuid } from "@/lib/validation/common";

export const GET = apiRoute<{ id: string }>("episode.read", async ({ user, params }) => getTravelFigures(db(), user.teamId, uuid.parse(params.id), new Date()));
