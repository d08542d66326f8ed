// GET: one version of a measurement. PUT: the next version of its chain, based on the version the
// reader started from (`basedOnVersion`); a stale base gets 409 and nothing is written.
import { z } from "zod";
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { getMeasurement, updateMeasurement } from "@/db/measurements";
import { measurementUpdate, parseMeasurementInput } from "@/lib/validation/measurements";
import { uuid } from "@/lib/validation/common";
import { reevaluateFlags } from "@/lib/measurement-flags";

export const GET = apiRoute<{ id: string }>("film.read", async ({ user, params }) => {
  const id = uuid.parse(params.id);
  return { measurement: await getMeasurement(db(), user.teamId, id) };
});

export const PUT = apiRoute<{ id: string }>("measurement.write", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const input = parseMeasurementInput(measurementUpdate, await parseJson(req, z.unknown()));
  const measurement = await db().transaction((trx) => updateMeasurement(trx, user, id, input, reevaluateFlags(user)));
  return { measurement };
});
