// GET: an episode's films in the order they were taken. POST: upload one film, the file itself as the
// body (Content-Type as the file's, X-Film-Filename the URI-encoded name); answers 201 with the film.
import type { NextRequest } from "next/server";
import { apiRoute, parseQuery } from "@/lib/api";
import { AppError } from "@/lib/errors";
import { db } from "@/db/knex";
import { getEpisode } from "@/db/episodes";
import { listEpisodeFilms, toFilmView } from "@/db/films";
import { filmMaxBytes, storeFilm } from "@/lib/films/store-film";
import { filmListQuery } from "@/lib/validation/films";
import { uuid } from "@/lib/validation/common";

export const GET = apiRoute<{ id: string }>("film.read", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const query = parseQuery(req, filmListQuery);
  await getEpisode(db(), user.teamId, id);
  const films = await listEpisodeFilms(db(), user.teamId, id, { includeWithdrawn: query.include === "withdrawn" });
  return { films: films.map(toFilmView) };
});

const megabytes = (n: number) => `${Math.round(n / 1_048_576)} MB`;
const tooLarge = (max: number) => new AppError("too_large", `The film is larger than ${megabytes(max)}, the most Rimwatch accepts. Export it uncompressed at its own size, or ask the administrator about FILM_MAX_BYTES.`);

/** Reads the request body, refusing early (Content-Length) or as soon as the stream passes `max` bytes. */
async function readBody(req: NextRequest, max: number): Promise<Buffer> {
  const declared = req.headers.get("content-length");
  if (declared !== null && Number(declared) > max) throw tooLarge(max);
  if (!req.body) throw new AppError("invalid", "Send the film file as the request body.");
  const reader = req.body.getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.byteLength;
    if (total > max) {
      await reader.cancel().catch(() => undefined);
      throw tooLarge(max);
    }
    chunks.push(value);
  }
  return Buffer.concat(chunks, total);
}

function filenameFrom(req: NextRequest): string {
  const raw = req.headers.get("x-film-filename");
  if (!raw) return "film";
  try {
    return decodeURIComponent(raw);
  } catch {
    return raw;
  }
}

export const POST = apiRoute<{ id: string }>("film.upload", async ({ req, user, params }) => {
  const episodeId = uuid.parse(params.id);
  await getEpisode(db(), user.teamId, episodeId);
  const contentType = req.headers.get("content-type") ?? "application/octet-stream";
  if (/^multipart\//i.test(contentType)) {
    throw new AppError("unsupported", "Send the film file itself as the request body, not a form; put its name in the X-Film-Filename header.");
  }
  const bytes = await readBody(req, filmMaxBytes());
  const film = await storeFilm({ actor: user, episodeId, filename: filenameFrom(req), contentType, bytes, now: new Date() });
  return Response.json({ film: toFilmView(film) }, { status: 201, headers: { "Cache-Control": "no-store" } });
});
