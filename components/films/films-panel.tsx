"use client";
// The films card of the episode page: the upload zone, the films in the order they were taken, and
// the withdrawn ones kept for the record.
import { formatDateTime } from "@/lib/format";
import type { FilmView } from "@/lib/film-view";
import { Card, Empty } from "@/components/ui/card";
import { FilmCard } from "./film-card";
import { UploadZone } from "./upload-zone";

interface Props {
  episodeId: string;
  presentedOn: string;
  films: FilmView[];
  withdrawn: FilmView[];
  canUpload: boolean;
  canWithdraw: boolean;
  canMeasure: boolean;
  maxBytes: number;
}

export function FilmsPanel({ episodeId, presentedOn, films, withdrawn, canUpload, canWithdraw, canMeasure, maxBytes }: Props) {
  const uncalibrated = films.filter((f) => f.calibration.source === "none").length;
  return (
    <Card title={`Films${films.length > 0 ? ` (${films.length})` : ""}`}>
      {canUpload ? <UploadZone episodeId={episodeId} maxBytes={maxBytes} /> : null}
      {films.length === 0 ? (
        <Empty>
          {canUpload
            ? "No films on this episode yet. Drop the presenting chest film and any repeat films above; each is dated, its projection and calibration are read, and it can then be measured on the film desk."
            : "No films on this episode yet. A registrar or consultant uploads them here."}
        </Empty>
      ) : (
        <>
          {uncalibrated > 0 && canMeasure ? (
            <p className="mb-3 rounded-md bg-amber-wash px-3 py-2 text-sm text-amber-ink">
              {uncalibrated === 1 ? "One film has" : `${uncalibrated} films have`} no calibration: only the Light index can be measured until a reference
              line of known length is drawn on the film desk.
            </p>
          ) : null}
          <ol className="grid gap-4 sm:grid-cols-2 2xl:grid-cols-3" aria-label="Films in the order taken">
            {films.map((f) => (
              <FilmCard key={f.id} film={f} presentedOn={presentedOn} canEdit={canUpload} canWithdraw={canWithdraw} canMeasure={canMeasure} />
            ))}
          </ol>
        </>
      )}
      {withdrawn.length > 0 ? (
        <details className="mt-4 text-sm">
          <summary className="cursor-pointer text-ink-soft">Withdrawn films ({withdrawn.length}), kept for the record</summary>
          <ul className="mt-2 space-y-1">
            {withdrawn.map((f) => (
              <li key={f.id}>
                <span className="figures">{formatDateTime(f.takenAt)}</span> · {f.filename} — withdrawn by {f.withdrawn?.byName ?? "a former user"},{" "}
                {formatDateTime(f.withdrawn?.at ?? null)}: “{f.withdrawn?.reason}”
                {f.measurementCount > 0 ? ` (${f.measurementCount} measurement${f.measurementCount === 1 ? "" : "s"} kept)` : ""}
              </li>
            ))}
          </ul>
        </details>
      ) : null}
    </Card>
  );
}
