// POST: a consultant signs off the current version of a measurement; that version is locked.
import { apiRoute } from "@/lib/api";
import { db } from "@/db/knex";
import { signOffMeasurement } from "@/db/measurements";
import { uuid } from "@/lib/validation/common";
import { reevaluateFlags } from "@/lib/measurement-flags";

export const POST = apiRoute<{ id: string }>("measurement.signoff", async ({ user, params }) => {
  const id = uuid.parse(params.id);
  const measurement = await db().transaction((trx) => signOffMeasurement(trx, user, id, reevaluateFlags(user)));
  return { measurement };
});
