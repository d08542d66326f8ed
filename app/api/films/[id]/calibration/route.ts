// POST: calibrate a film by a reference line of known length ({ segment in original film pixels,
// knownLengthMm, plane }); it replaces the DICOM calibration on the film desk. Audited.
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { calibrateByReferenceLine, toFilmView } from "@/db/films";
import { referenceLineInput } from "@/lib/validation/films";
import { uuid } from "@/lib/validation/common";

export const POST = apiRoute<{ id: string }>("film.calibrate", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const input = await parseJson(req, referenceLineInput);
  const film = await db().transaction((trx) => calibrateByReferenceLine(trx, user, id, input, new Date()));
  return { film: toFilmView(film) };
});
