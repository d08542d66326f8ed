// GET: one film (calibration, display size and scale, DICOM attributes). PATCH: set the date, projection
// or position a PNG/JPEG film (or a DICOM header) did not give. DELETE: withdraw it, with a reason.
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { getFilm, toFilmView, updateFilmDetails, withdrawFilm } from "@/db/films";
import { filmUpdate, filmWithdraw } from "@/lib/validation/films";
import { uuid } from "@/lib/validation/common";

export const GET = apiRoute<{ id: string }>("film.read", async ({ user, params }) => {
  const id = uuid.parse(params.id);
  const film = await getFilm(db(), user.teamId, id);
  const dicom = film.dicom ? { meta: film.dicom.meta, rendering: film.dicom.rendering, warnings: film.dicom.warnings } : null;
  return { film: toFilmView(film), dicom };
});

export const PATCH = apiRoute<{ id: string }>("film.upload", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const input = await parseJson(req, filmUpdate);
  const film = await db().transaction((trx) => updateFilmDetails(trx, user, id, input, new Date()));
  return { film: toFilmView(film) };
});

export const DELETE = apiRoute<{ id: string }>("film.delete", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const { reason } = await parseJson(req, filmWithdraw);
  const film = await db().transaction((trx) => withdrawFilm(trx, user, id, reason));
  return { film: toFilmView(film) };
});
