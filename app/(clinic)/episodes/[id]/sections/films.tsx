import { can } from "@/lib/auth/permissions";
import { db } from "@/db/knex";
import { listEpisodeFilms, toFilmView } from "@/db/films";
import { filmMaxBytes } from "@/lib/films/store-film";
import { FilmsPanel } from "@/components/films/films-panel";
import type { SectionProps } from "./types";

/** The episode's films: upload, thumbnails in the order taken, calibration in plain words, withdraw. */
export async function FilmsSection({ episode, user }: SectionProps) {
  if (!can(user.role, "film.read")) return null;
  const films = (await listEpisodeFilms(db(), user.teamId, episode.id, { includeWithdrawn: true })).map(toFilmView);
  return (
    <FilmsPanel
      episodeId={episode.id}
      presentedOn={episode.presented_on}
      films={films.filter((f) => !f.withdrawn)}
      withdrawn={films.filter((f) => f.withdrawn)}
      canUpload={can(user.role, "film.upload")}
      canWithdraw={can(user.role, "film.delete")}
      canMeasure={can(user.role, "measurement.write")}
      maxBytes={filmMaxBytes()}
    />
  );
}
