"use client";
// One film on the episode page: thumbnail, when and how it was taken, how it is calibrated, and what
// a person may do with it (measure, correct what the file did not say, withdraw).
import Link from "next/link";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { fetchJson, ApiError } from "@/lib/client/api";
import { formatDate, formatDateTime } from "@/lib/format";
import { IMAGE_POSITIONS, PROJECTIONS, PROJECTION_LABELS, positionLabel, projectionLabel, type FilmView } from "@/lib/film-view";
import { Tag } from "@/components/ui/card";
import { Button, buttonClass } from "@/components/ui/button";
import { Field, Select, TextArea, TextInput } from "@/components/ui/field";

const DAY_MS = 86_400_000;

/** A text field of a submitted form ("" when absent). */
const text = (form: FormData, name: string): string => {
  const v = form.get(name);
  return typeof v === "string" ? v : "";
};

/** Whole days from the presentation date to the film, counted on London calendar days. */
function dayOfEpisode(presentedOn: string, takenAt: string): number {
  const londonDay = new Date(takenAt).toLocaleDateString("en-CA", { timeZone: "Europe/London" });
  return Math.round((Date.parse(`${londonDay}T00:00:00Z`) - Date.parse(`${presentedOn}T00:00:00Z`)) / DAY_MS);
}

/** A datetime-local value for an ISO instant, in the browser's time zone. */
function toLocalInput(iso: string): string {
  const d = new Date(iso);
  d.setMinutes(d.getMinutes() - d.getTimezoneOffset());
  return d.toISOString().slice(0, 16);
}

interface FilmCardProps {
  film: FilmView;
  presentedOn: string;
  canEdit: boolean;
  canWithdraw: boolean;
  canMeasure: boolean;
}

export function FilmCard({ film, presentedOn, canEdit, canWithdraw, canMeasure }: FilmCardProps) {
  const router = useRouter();
  const [mode, setMode] = useState<"view" | "edit" | "withdraw">("view");
  const [busy, setBusy] = useState(false);
  const [message, setMessage] = useState<string | null>(null);
  const [fields, setFields] = useState<Record<string, string>>({});
  const anyEditable = film.editable.takenAt || film.editable.projection || film.editable.position;
  const day = film.takenAt ? dayOfEpisode(presentedOn, film.takenAt) : null;
  const view = [projectionLabel(film.projection), positionLabel(film.position)].filter(Boolean).join(" · ");
  const cal = film.calibration;

  async function act(fn: () => Promise<unknown>) {
    setBusy(true);
    setMessage(null);
    setFields({});
    try {
      await fn();
      setMode("view");
      router.refresh();
    } catch (err) {
      if (err instanceof ApiError) {
        setMessage(err.message);
        setFields(err.fields);
      } else {
        setMessage("Rimwatch could not reach the server. Check your connection and try again.");
      }
    } finally {
      setBusy(false);
    }
  }

  return (
    <li id={`film-${film.id}`} className="flex flex-col overflow-hidden rounded-lg border border-line bg-card" data-testid="film-card">
      <div className="flex h-52 items-center justify-center bg-desk">
        {/* A plain img: the thumbnail comes from a private, session-checked route. */}
        <img src={film.images.thumb} alt={`Chest film${film.takenAt ? ` of ${formatDate(film.takenAt)}` : ""}`} className="max-h-52 max-w-full object-contain" loading="lazy" />
      </div>
      <div className="flex flex-1 flex-col gap-1 p-3 text-sm">
        <p className="flex flex-wrap items-baseline gap-2">
          <strong className="figures text-base" data-testid="film-taken-at">{formatDateTime(film.takenAt)}</strong>
          {day !== null ? <span className="text-ink-soft">day {day}</span> : null}
          {film.takenAtSource === "upload" ? <Tag tone="watch">date of upload — confirm when taken</Tag> : null}
        </p>
        <p data-testid="film-view">{view || <span className="text-ink-soft">projection and position not recorded</span>}</p>
        <p data-testid="film-calibration">
          <span className="text-ink-soft">Calibration: </span>
          <span className={cal.source === "none" || cal.correctionUnknown ? "font-bold text-amber-ink" : ""}>{cal.words}</span>
        </p>
        <p className="text-xs text-ink-soft">
          {film.kind === "dicom" ? "DICOM" : film.contentType === "image/png" ? "PNG" : "JPEG"} · <span className="break-all">{film.filename}</span>
          <br />
          Uploaded by {film.uploadedBy.name ?? "a former user"}, {formatDateTime(film.createdAt)}
          {film.measurementCount > 0 ? ` · ${film.measurementCount} measurement${film.measurementCount === 1 ? "" : "s"}` : ""}
        </p>

        {mode === "view" ? (
          <div className="mt-auto flex flex-wrap gap-2 pt-2">
            <Link href={`/films/${film.id}`} className={buttonClass(canMeasure ? "primary" : "quiet", "px-3 py-1.5")}>
              {canMeasure ? "Measure" : "Open on the film desk"}
            </Link>
            {canEdit && anyEditable ? (
              <Button tone="quiet" className="px-3 py-1.5" onClick={() => setMode("edit")}>
                Correct details
              </Button>
            ) : null}
            {canWithdraw ? (
              <Button tone="quiet" className="px-3 py-1.5" onClick={() => setMode("withdraw")}>
                Withdraw
              </Button>
            ) : null}
          </div>
        ) : null}

        {mode === "edit" ? (
          <form
            className="mt-2 space-y-2 border-t border-line pt-2"
            onSubmit={(e) => {
              e.preventDefault();
              const f = new FormData(e.currentTarget);
              const json: Record<string, unknown> = {};
              if (film.editable.takenAt) json.takenAt = new Date(text(f, "takenAt")).toISOString();
              if (film.editable.projection) json.projection = text(f, "projection") || null;
              if (film.editable.position) json.position = text(f, "position") || null;
              void act(() => fetchJson(`/api/films/${film.id}`, { method: "PATCH", json }));
            }}
          >
            {film.editable.takenAt ? (
              <Field id={`taken-${film.id}`} label="Taken at" error={fields.takenAt} hint="When the film was taken, from the request form or PACS.">
                <TextInput id={`taken-${film.id}`} name="takenAt" type="datetime-local" required defaultValue={film.takenAt ? toLocalInput(film.takenAt) : ""} invalid={!!fields.takenAt} />
              </Field>
            ) : null}
            {film.editable.projection ? (
              <Field id={`projection-${film.id}`} label="Projection" error={fields.projection}>
                <Select id={`projection-${film.id}`} name="projection" defaultValue={film.projection ?? ""} invalid={!!fields.projection}>
                  <option value="">not recorded</option>
                  {PROJECTIONS.map((p) => (
                    <option key={p} value={p}>{PROJECTION_LABELS[p]}</option>
                  ))}
                </Select>
              </Field>
            ) : null}
            {film.editable.position ? (
              <Field id={`position-${film.id}`} label="Position" error={fields.position}>
                <Select id={`position-${film.id}`} name="position" defaultValue={film.position ?? ""} invalid={!!fields.position}>
                  <option value="">not recorded</option>
                  {IMAGE_POSITIONS.map((p) => (
                    <option key={p} value={p}>{p}</option>
                  ))}
                </Select>
              </Field>
            ) : null}
            <div className="flex gap-2">
              <Button type="submit" disabled={busy} className="px-3 py-1.5">Save details</Button>
              <Button tone="quiet" disabled={busy} className="px-3 py-1.5" onClick={() => setMode("view")}>Cancel</Button>
            </div>
          </form>
        ) : null}

        {mode === "withdraw" ? (
          <form
            className="mt-2 space-y-2 border-t border-line pt-2"
            onSubmit={(e) => {
              e.preventDefault();
              const reason = text(new FormData(e.currentTarget), "reason");
              void act(() => fetchJson(`/api/films/${film.id}`, { method: "DELETE", json: { reason } }));
            }}
          >
            <Field
              id={`reason-${film.id}`}
              label="Why withdraw this film?"
              error={fields.reason}
              hint={
                film.measurementCount > 0
                  ? `It leaves this episode's list and charts. Its ${film.measurementCount} measurement${film.measurementCount === 1 ? "" : "s"} and the file stay in the record.`
                  : "It leaves this episode's list and charts; the file stays in the record."
              }
            >
              <TextArea id={`reason-${film.id}`} name="reason" rows={2} required minLength={3} maxLength={500} placeholder="e.g. wrong patient's film" invalid={!!fields.reason} />
            </Field>
            <div className="flex gap-2">
              <Button type="submit" tone="danger" disabled={busy} className="px-3 py-1.5">Withdraw film</Button>
              <Button tone="quiet" disabled={busy} className="px-3 py-1.5" onClick={() => setMode("view")}>Keep it</Button>
            </div>
          </form>
        ) : null}
        <div aria-live="polite">{message ? <p role="alert" className="mt-1 font-bold text-rust-ink">{message}</p> : null}</div>
      </div>
    </li>
  );
}
