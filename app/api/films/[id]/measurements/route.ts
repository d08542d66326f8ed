// GET: every reader's measurement of a film, all versions with who and when. POST: a new reading
// (version 1 of the caller's chain); the body is caliper geometry only, the server computes the figures.
import { z } from "zod";
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { createMeasurement, listFilmMeasurements } from "@/db/measurements";
import { measurementCreate, parseMeasurementInput } from "@/lib/validation/measurements";
import { uuid } from "@/lib/validation/common";
import { reevaluateFlags } from "@/lib/measurement-flags";

export const GET = apiRoute<{ id: string }>("film.read", async ({ user, params }) => {
  const filmId = uuid.parse(params.id);
  return listFilmMeasurements(db(), user.teamId, filmId);
});

export const POST = apiRoute<{ id: string }>("measurement.write", async ({ req, user, params }) => {
  const filmId = uuid.parse(params.id);
  const input = parseMeasurementInput(measurementCreate, await parseJson(req, z.unknown()));
  const measurement = await db().transaction((trx) => createMeasurement(trx, user, filmId, input, reevaluateFlags(user)));
  return Response.json({ measurement }, { status: 201, headers: { "Cache-Control": "no-store" } });
});
