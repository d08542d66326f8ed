// The film desk: one film on the measuring stage, with the caliper set, figures and readings.
import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { requireUser } from "@/lib/auth/session";
import { can } from "@/lib/auth/permissions";
import { db } from "@/db/knex";
import { getFilm, toFilmView } from "@/db/films";
import { getEpisode } from "@/db/episodes";
import { getPatient } from "@/db/patients";
import { estimateSettings, listFilmMeasurements } from "@/db/measurements";
import { isUuid, orNotFound } from "@/lib/pages";
import { formatDateTime, sideLabel } from "@/lib/format";
import { positionLabel, projectionLabel } from "@/lib/film-view";
import { FilmDeskClient } from "@/components/film-desk/film-desk-client";

export const metadata: Metadata = { title: "Film desk" };

export default async function FilmDeskPage({ params }: { params: Promise<{ id: string }> }) {
  const user = await requireUser("film.read");
  const { id } = await params;
  if (!isUuid(id)) notFound();
  const record = await orNotFound(getFilm(db(), user.teamId, id));
  const film = toFilmView(record);
  const [episode, measurements, settings] = await Promise.all([
    getEpisode(db(), user.teamId, film.episodeId),
    listFilmMeasurements(db(), user.teamId, id),
    estimateSettings(db(), user.teamId),
  ]);
  const patient = await getPatient(db(), user.teamId, episode.patient_id);
  const view = [projectionLabel(film.projection), positionLabel(film.position)].filter(Boolean).join(", ");

  return (
    <>
      {/* Start fetching the film while the desk's scripts load, instead of after they run. */}
      <link rel="preload" as="image" href={film.images.display} fetchPriority="high" />
      <p className="mb-1 text-sm">
        <Link href={`/episodes/${episode.id}`} className="text-estuary-700 underline">
          {patient.given_name} {patient.family_name} · {sideLabel(episode.side)} pneumothorax
        </Link>
        <span className="figures text-ink-soft"> · {patient.hospital_number}</span>
      </p>
      <div className="mb-3 flex flex-wrap items-baseline gap-x-4 gap-y-1">
        <h1 className="text-2xl font-bold text-ink">Film desk</h1>
        <p className="text-sm text-ink-soft">
          {film.takenAt ? `Taken ${formatDateTime(film.takenAt)}` : "Date not known"}
          {film.takenAtSource === "upload" ? " (upload time, not confirmed)" : ""} · {view || "projection and position not recorded"} · {film.columns} x {film.rows} px ·{" "}
          {film.calibration.words}
        </p>
      </div>
      {film.withdrawn ? (
        <p role="status" className="mb-3 rounded border border-amber-ink/30 bg-amber-wash px-3 py-2 text-sm text-amber-ink">
          Withdrawn {formatDateTime(film.withdrawn.at)}
          {film.withdrawn.byName ? ` by ${film.withdrawn.byName}` : ""}
          {film.withdrawn.reason ? `: ${film.withdrawn.reason}` : ""}. Its measurements stay readable.
        </p>
      ) : null}
      <FilmDeskClient
        film={{
          id: film.id,
          episodeId: film.episodeId,
          columns: film.columns,
          rows: film.rows,
          displayWidth: film.display.width,
          displayHeight: film.display.height,
          displayScale: film.display.scale,
          imageUrl: film.images.display,
          takenAt: film.takenAt,
          projection: film.projection,
          position: film.position,
          calibration: { film: film.calibration.film, patient: film.calibration.patient, correctionUnknown: film.calibration.correctionUnknown, notes: film.calibration.notes },
          calibrationWords: film.calibration.words,
          withdrawn: film.withdrawn !== null,
          settings,
        }}
        side={episode.side}
        user={{ id: user.id, name: user.name, canMeasure: can(user.role, "measurement.write"), canSignOff: can(user.role, "measurement.signoff") }}
        initial={measurements}
      />
    </>
  );
}
