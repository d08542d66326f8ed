// GET ?variant=display|thumb|original: a film's image, streamed from the object store after the
// session and team check. Objects never change under a film id, so the browser may keep them (privately).
import { Readable } from "node:stream";
import { apiRoute, parseQuery } from "@/lib/api";
import { AppError } from "@/lib/errors";
import { db } from "@/db/knex";
import { getFilm } from "@/db/films";
import { objectStore, ObjectNotFoundError } from "@/storage";
import { filmImageQuery } from "@/lib/validation/films";
import { uuid } from "@/lib/validation/common";

export const GET = apiRoute<{ id: string }>("film.read", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const { variant } = parseQuery(req, filmImageQuery);
  const film = await getFilm(db(), user.teamId, id);
  const etag = `"${film.sha256.slice(0, 32)}-${variant}"`;
  const cache = { "Cache-Control": "private, max-age=3600", ETag: etag, Vary: "Cookie" };
  if (req.headers.get("if-none-match") === etag) return new Response(null, { status: 304, headers: cache });

  const key = variant === "original" ? film.original_key : variant === "display" ? film.display_key : film.thumb_key;
  let object;
  try {
    object = await objectStore().get(key);
  } catch (err) {
    if (err instanceof ObjectNotFoundError) throw new AppError("not_found", "This film's image is missing from the film store; tell the Rimwatch administrator.");
    throw err;
  }
  const headers: Record<string, string> = { ...cache, "Content-Type": object.contentType };
  if (object.contentLength > 0) headers["Content-Length"] = String(object.contentLength);
  if (variant === "original") headers["Content-Disposition"] = `attachment; filename*=UTF-8''${encodeURIComponent(film.filename)}`;
  return new Response(Readable.toWeb(object.body) as ReadableStream<Uint8Array>, { status: 200, headers });
});
