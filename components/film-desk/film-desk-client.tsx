"use client";
// The film desk: the film on a konva stage with the caliper set, the guide, live figures computed by
// measure/ (the same code the server runs), saving as versions, other readers, and sign-off.
import dynamic from "next/dynamic";
import { useCallback, useDeferredValue, useEffect, useMemo, useReducer, useRef, useState } from "react";
import { caliperNames, estimateFromCalipers, type CaliperName, type CaliperSet, type Plane } from "@/measure";
import { ApiError, fetchJson } from "@/lib/client/api";
import { CALIPER_LABELS, type MeasurementView, type ReaderChain } from "@/lib/validation/measurements";
import { formatDateTime } from "@/lib/format";
import { Button } from "@/components/ui/button";
import { Tag } from "@/components/ui/card";
import type { DeskMode, FilmDeskFilm, FilmDeskUser, FilmMeasurements, SelectedEnd } from "./desk-types";
import { Estimates } from "./estimates";
import { CaliperGuide, type CaliperState } from "./guide";
import { caliperKey, historyReducer, initHistory, nextCaliper, type DeskSnapshot } from "./history";
import { fitView, zoomAt, ZOOM, type Size, type View } from "./view";
import { IDENTITY_WINDOW, isIdentity, type WindowLevel } from "./window-level";
import { loadFilmImage } from "./film-image";

const loadStage = () => import("./film-stage");
// In the browser, start fetching the konva stage as soon as this module runs (during hydration),
// rather than when the stage first renders; on the server konva is never loaded.
if (typeof window !== "undefined") void loadStage();

const FilmStage = dynamic(loadStage, {
  ssr: false,
  loading: () => <p className="p-6 text-sm text-estuary-100">Opening the film desk…</p>,
});

interface Props {
  film: FilmDeskFilm;
  side: "left" | "right";
  user: FilmDeskUser;
  initial: FilmMeasurements;
}

type SaveState =
  | { kind: "idle" }
  | { kind: "saving" }
  | { kind: "saved"; message: string }
  | { kind: "error"; message: string; fields: Record<string, string> }
  | { kind: "conflict"; message: string; currentId: string | null; currentVersion: number | null };

function snapshotOf(m: MeasurementView | undefined): DeskSnapshot {
  if (!m) return { calipers: {}, skipped: [] };
  const calipers: CaliperSet = {};
  const skipped: CaliperName[] = [];
  for (const n of caliperNames) {
    const s = m.calipers[n];
    if (s) calipers[n] = s;
    else if (s === null) skipped.push(n);
  }
  return { calipers, skipped };
}

/** The body the server wants: drawn calipers as segments, skipped ones as null, nothing else. */
function payloadOf(s: DeskSnapshot): CaliperSet {
  const out: CaliperSet = {};
  for (const n of caliperNames) {
    const seg = s.calipers[n];
    if (seg) out[n] = seg;
    else if (s.skipped.includes(n)) out[n] = null;
  }
  return out;
}

const pct = (v: number | null) => (v === null ? "—" : `${v.toFixed(1)} %`);
const diff = (a: number | null, b: number | null) => (a === null || b === null ? "—" : `${a - b >= 0 ? "+" : ""}${(a - b).toFixed(1)}`);

export function FilmDeskClient({ film, side, user, initial }: Props) {
  const [measurements, setMeasurements] = useState<FilmMeasurements>(initial);
  // Fetch and decode the film as soon as the desk is on the page, while the stage's code is still on its way.
  useEffect(() => {
    loadFilmImage(film.imageUrl).catch(() => undefined); // the stage reports a failed load itself
  }, [film.imageUrl]);
  const own: ReaderChain | undefined = measurements.readers.find((r) => r.reader.id === user.id);
  const others = measurements.readers.filter((r) => r.reader.id !== user.id);

  const [history, dispatch] = useReducer(historyReducer, own?.current, (m) => initHistory(snapshotOf(m)));
  const present = history.present;
  const [armedOverride, setArmedOverride] = useState<CaliperName | null>(null);
  const armed = user.canMeasure && !film.withdrawn ? (armedOverride ?? nextCaliper(present)) : null;
  const [selected, setSelected] = useState<SelectedEnd | null>(null);
  const [mode, setMode] = useState<DeskMode>("measure");
  const [wl, setWl] = useState<WindowLevel>(IDENTITY_WINDOW);
  const [plane, setPlane] = useState<Plane>(own?.current.results.plane ?? "film");
  const [base, setBase] = useState<{ id: string; version: number } | null>(own ? { id: own.current.id, version: own.current.version } : null);
  const [reason, setReason] = useState("");
  const [save, setSave] = useState<SaveState>({ kind: "idle" });
  const [showOthers, setShowOthers] = useState(true);
  const [imageState, setImageState] = useState<"loading" | "ready" | "error">("loading");

  // Stage size and view.
  const wrap = useRef<HTMLDivElement>(null);
  const [stageSize, setStageSize] = useState<Size>({ width: 0, height: 0 });
  const imageSize = useMemo<Size>(() => ({ width: film.columns, height: film.rows }), [film.columns, film.rows]);
  const fitted = useMemo(() => fitView(stageSize, imageSize), [stageSize, imageSize]);
  const [view, setView] = useState<View | null>(null);
  const followFit = useRef(true);
  useEffect(() => {
    const el = wrap.current;
    if (!el) return;
    const ro = new ResizeObserver(([entry]) => {
      if (!entry) return;
      setStageSize({ width: Math.floor(entry.contentRect.width), height: Math.floor(entry.contentRect.height) });
    });
    ro.observe(el);
    return () => ro.disconnect();
  }, []);
  useEffect(() => {
    if (stageSize.width > 0 && followFit.current) setView(fitted);
  }, [fitted, stageSize.width]);
  const changeView = useCallback((v: View) => {
    followFit.current = false;
    setView(v);
  }, []);
  const zoomBy = (factor: number) => {
    if (!view) return;
    changeView(zoomAt(view, factor, { x: stageSize.width / 2, y: stageSize.height / 2 }, fitted.scale));
  };
  const fit = () => {
    followFit.current = true;
    setView(fitted);
  };

  // Live figures: measure/ in the browser, the same function the server runs on save.
  const calibration = film.calibration;
  const live = useMemo(
    () => estimateFromCalipers(present.calipers, calibration, { plane, projection: film.projection, position: film.position, ...film.settings }),
    [present.calipers, calibration, plane, film.projection, film.position, film.settings],
  );
  const deferredLive = useDeferredValue(live);

  const savedSnapshot = useMemo(() => snapshotOf(own?.current), [own]);
  const dirty = own
    ? caliperKey(payloadOf(present)) !== caliperKey(payloadOf(savedSnapshot)) || plane !== own.current.results.plane
    : caliperNames.some((n) => present.calipers[n]);
  const canSave = user.canMeasure && !film.withdrawn && dirty && caliperNames.some((n) => present.calipers[n]) && save.kind !== "saving";
  const needsReason = !!own?.current.signedOff;

  const labels = useMemo(() => {
    const out = {} as Record<CaliperName, string>;
    for (const n of caliperNames) {
      const l = live.lengths[n];
      out[n] = l.mm !== null ? `${l.mm.toFixed(1)} mm` : l.px !== null ? `${l.px.toFixed(0)} px` : "";
    }
    return out;
  }, [live]);
  const states = useMemo(() => {
    const out = {} as Record<CaliperName, CaliperState>;
    for (const n of caliperNames) out[n] = present.calipers[n] ? "drawn" : present.skipped.includes(n) ? "skipped" : "waiting";
    return out;
  }, [present]);

  // Editing.
  const onLive = useCallback((calipers: CaliperSet) => dispatch({ type: "live", snapshot: { calipers, skipped: present.skipped } }), [present.skipped]);
  const commitSet = useCallback(
    (beforeCalipers: CaliperSet, calipers: CaliperSet) => {
      const drawnNow = caliperNames.filter((n) => calipers[n] && !beforeCalipers[n]);
      const skipped = present.skipped.filter((n) => !calipers[n]);
      dispatch({ type: "commit", before: { calipers: beforeCalipers, skipped: present.skipped }, snapshot: { calipers, skipped } });
      if (drawnNow.length > 0 || (armedOverride && calipers[armedOverride] !== beforeCalipers[armedOverride])) setArmedOverride(null);
      if (save.kind === "saved") setSave({ kind: "idle" });
    },
    [present.skipped, armedOverride, save.kind],
  );
  const commitSnapshot = (snapshot: DeskSnapshot) => dispatch({ type: "commit", before: present, snapshot });
  const arm = (name: CaliperName) => {
    setMode("measure");
    setArmedOverride(name);
    const { [name]: _drop, ...rest } = present.calipers;
    if (present.calipers[name] || present.skipped.includes(name)) commitSnapshot({ calipers: rest, skipped: present.skipped.filter((n) => n !== name) });
  };
  const skip = (name: CaliperName) => {
    const { [name]: _drop, ...rest } = present.calipers;
    commitSnapshot({ calipers: rest, skipped: [...present.skipped.filter((n) => n !== name), name] });
    if (armedOverride === name) setArmedOverride(null);
  };
  const clear = (name: CaliperName) => {
    const { [name]: _drop, ...rest } = present.calipers;
    commitSnapshot({ calipers: rest, skipped: present.skipped });
    if (selected?.name === name) setSelected(null);
  };
  const undo = useCallback(() => dispatch({ type: "undo" }), []);
  const redo = useCallback(() => dispatch({ type: "redo" }), []);

  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      const t = e.target as HTMLElement | null;
      if (t && (t.tagName === "INPUT" || t.tagName === "TEXTAREA" || t.tagName === "SELECT" || t.isContentEditable)) return;
      if (!(e.ctrlKey || e.metaKey)) return;
      const k = e.key.toLowerCase();
      if (k === "z" && !e.shiftKey) {
        e.preventDefault();
        undo();
      } else if ((k === "z" && e.shiftKey) || k === "y") {
        e.preventDefault();
        redo();
      }
    };
    window.addEventListener("keydown", onKey);
    return () => window.removeEventListener("keydown", onKey);
  }, [undo, redo]);

  const ends = useMemo(() => caliperNames.flatMap((n) => (present.calipers[n] ? ([{ name: n, end: "a" }, { name: n, end: "b" }] as SelectedEnd[]) : [])), [present.calipers]);
  const onStageKey = (e: React.KeyboardEvent<HTMLDivElement>) => {
    if (e.key === "Tab") {
      if (ends.length === 0) return;
      const i = selected ? ends.findIndex((x) => x.name === selected.name && x.end === selected.end) : -1;
      const j = e.shiftKey ? (i === -1 ? ends.length - 1 : i - 1) : i + 1;
      const next = ends[j];
      if (!next) {
        setSelected(null);
        return; // let focus leave the stage
      }
      e.preventDefault();
      setSelected(next);
      return;
    }
    if (e.key === "Escape") {
      setSelected(null);
      return;
    }
    if (!selected || !user.canMeasure) return;
    const seg = present.calipers[selected.name];
    if (!seg) return;
    if (e.key === "Delete" || e.key === "Backspace") {
      e.preventDefault();
      clear(selected.name);
      return;
    }
    const step = e.shiftKey ? 10 : 1;
    const d = { ArrowLeft: [-step, 0], ArrowRight: [step, 0], ArrowUp: [0, -step], ArrowDown: [0, step] }[e.key];
    if (!d) return;
    e.preventDefault();
    const p = seg[selected.end];
    const moved = { x: Math.min(film.columns, Math.max(0, p.x + (d[0] ?? 0))), y: Math.min(film.rows, Math.max(0, p.y + (d[1] ?? 0))) };
    const nextSeg = selected.end === "a" ? { a: moved, b: seg.b } : { a: seg.a, b: moved };
    commitSet(present.calipers, { ...present.calipers, [selected.name]: nextSeg });
  };

  // Saving.
  const refresh = useCallback(async () => {
    const fresh = await fetchJson<FilmMeasurements>(`/api/films/${film.id}/measurements`);
    setMeasurements(fresh);
    return fresh;
  }, [film.id]);

  const doSave = async (basedOn: { id: string; version: number } | null) => {
    setSave({ kind: "saving" });
    try {
      const body = { calipers: payloadOf(present), plane };
      const { measurement } = basedOn
        ? await fetchJson<{ measurement: MeasurementView }>(`/api/measurements/${basedOn.id}`, {
            method: "PUT",
            json: { ...body, basedOnVersion: basedOn.version, reason: reason.trim() || null },
          })
        : await fetchJson<{ measurement: MeasurementView }>(`/api/films/${film.id}/measurements`, { method: "POST", json: body });
      setBase({ id: measurement.id, version: measurement.version });
      setReason("");
      await refresh();
      setSave({ kind: "saved", message: `Saved as version ${measurement.version}. The figures shown are the server's.` });
    } catch (err) {
      if (err instanceof ApiError && err.status === 409) {
        const d = err.details;
        const currentId = typeof d.currentId === "string" ? d.currentId : typeof d.measurementId === "string" ? d.measurementId : null;
        const currentVersion = typeof d.currentVersion === "number" ? d.currentVersion : typeof d.version === "number" ? d.version : null;
        setSave({ kind: "conflict", message: err.message, currentId, currentVersion });
      } else if (err instanceof ApiError) {
        setSave({ kind: "error", message: err.message, fields: err.fields });
      } else {
        setSave({ kind: "error", message: "The save did not reach the server. Your calipers are kept; try again.", fields: {} });
      }
    }
  };

  const loadTheirs = async (id: string) => {
    try {
      const { measurement } = await fetchJson<{ measurement: MeasurementView }>(`/api/measurements/${id}`);
      commitSnapshot(snapshotOf(measurement));
      setPlane(measurement.results.plane);
      setBase({ id: measurement.id, version: measurement.version });
      await refresh();
      setSave({ kind: "saved", message: `Loaded version ${measurement.version}. Press Ctrl+Z to bring your own calipers back.` });
    } catch (err) {
      setSave({ kind: "error", message: err instanceof Error ? err.message : "Could not load that version.", fields: {} });
    }
  };

  const signOff = async (m: MeasurementView) => {
    try {
      await fetchJson(`/api/measurements/${m.id}/sign-off`, { method: "POST", json: {} });
      await refresh();
      setSave({ kind: "saved", message: `Signed off ${m.reader.name}'s version ${m.version}.` });
    } catch (err) {
      setSave({ kind: "error", message: err instanceof Error ? err.message : "Sign-off failed.", fields: {} });
      await refresh().catch(() => undefined);
    }
  };

  const showSaved = own && !dirty;
  const nothingDrawn = caliperNames.every((n) => !present.calipers[n]);
  // A reviewer who has not measured sees the first other reading's saved figures until they draw.
  const reviewing = !own && nothingDrawn ? others[0] : undefined;
  const shown = showSaved ? own.current.results : reviewing ? reviewing.current.results : deferredLive;
  const overlays = showOthers ? others.map((r) => r.current.calipers) : [];
  const ready = imageState === "ready" && view !== null;

  return (
    <div className="grid gap-4 lg:grid-cols-[minmax(0,1fr)_24rem]">
      <section aria-label="Film" className="min-w-0 self-start lg:sticky lg:top-2">
        <div className="mb-2 flex flex-wrap items-center gap-1.5 text-sm" role="toolbar" aria-label="Film desk tools">
          <div className="flex overflow-hidden rounded-md border border-line" role="group" aria-label="Mode">
            {(
              [
                ["measure", "Calipers"],
                ["pan", "Pan"],
                ["window", "Window"],
              ] as const
            ).map(([m, label]) => (
              <button key={m} type="button" aria-pressed={mode === m} onClick={() => setMode(m)} className={`px-3 py-1.5 font-bold ${mode === m ? "bg-estuary-700 text-white" : "bg-card text-estuary-900 hover:bg-estuary-50"}`}>
                {label}
              </button>
            ))}
          </div>
          <ToolButton label="Zoom out" onClick={() => zoomBy(1 / ZOOM.step)}>−</ToolButton>
          <ToolButton label="Zoom in" onClick={() => zoomBy(ZOOM.step)}>+</ToolButton>
          <ToolButton label="Fit the film to the desk" onClick={fit}>Fit</ToolButton>
          <ToolButton label="Invert grey levels" pressed={wl.invert} onClick={() => setWl((w) => ({ ...w, invert: !w.invert }))}>Invert</ToolButton>
          <ToolButton label="Reset window and level" disabled={isIdentity(wl)} onClick={() => setWl(IDENTITY_WINDOW)}>Reset window</ToolButton>
          <ToolButton label="Undo (Ctrl+Z)" disabled={history.past.length === 0} onClick={undo}>Undo</ToolButton>
          <ToolButton label="Redo (Ctrl+Shift+Z)" disabled={history.future.length === 0} onClick={redo}>Redo</ToolButton>
          {others.length > 0 ? (
            <ToolButton label="Show other readers' calipers" pressed={showOthers} onClick={() => setShowOthers((v) => !v)}>Other readings</ToolButton>
          ) : null}
          <span className="figures ml-auto text-xs text-ink-soft">{view ? `${Math.round(view.scale * 100)} %` : ""}</span>
        </div>
        <div
          ref={wrap}
          tabIndex={0}
          onKeyDown={onStageKey}
          aria-label="Film desk: press, drag and release to place the next caliper; Tab selects a caliper end, arrow keys move it (Shift for 10 pixels)"
          data-testid="film-stage"
          data-desk-ready={ready ? "true" : "false"}
          data-view-scale={view?.scale}
          data-view-x={view?.x}
          data-view-y={view?.y}
          className="relative h-[calc(100vh-13rem)] min-h-[480px] touch-none overflow-hidden rounded-lg bg-desk outline-offset-2"
        >
          {view && stageSize.width > 0 ? (
            <FilmStage
              imageUrl={film.imageUrl}
              imageSize={imageSize}
              stageSize={stageSize}
              view={view}
              fitScale={fitted.scale}
              onView={changeView}
              mode={mode}
              wl={wl}
              onWindow={setWl}
              snapshot={present}
              armed={mode === "measure" ? armed : null}
              canMeasure={user.canMeasure && !film.withdrawn}
              labels={labels}
              selected={selected}
              onSelect={setSelected}
              onLive={onLive}
              onCommit={commitSet}
              overlays={overlays}
              onImageState={setImageState}
            />
          ) : null}
          <p className="sr-only" aria-live="polite">
            {selected && present.calipers[selected.name]
              ? `Selected: ${CALIPER_LABELS[selected.name]}, ${selected.end === "a" ? "first" : "second"} end, at column ${Math.round(present.calipers[selected.name]?.[selected.end].x ?? 0)}, row ${Math.round(present.calipers[selected.name]?.[selected.end].y ?? 0)}; ${labels[selected.name]}.`
              : ""}
          </p>
          {imageState === "error" ? (
            <p role="alert" className="absolute inset-x-0 top-1/3 text-center text-sm text-rust-wash">
              The film could not be loaded. Reload the page; if it happens again, the stored image may be missing.
            </p>
          ) : null}
          {mode === "window" ? (
            <p className="pointer-events-none absolute bottom-2 left-2 rounded bg-black/60 px-2 py-1 text-xs text-white">
              Drag left or right for contrast, up or down for brightness.
            </p>
          ) : null}
        </div>
      </section>

      <aside className="space-y-4" aria-label="Caliper set and figures">
        {user.canMeasure && !film.withdrawn ? (
          <section className="rounded-lg border border-line bg-card p-4">
            <h2 className="mb-2 text-base font-bold text-estuary-900">Caliper set</h2>
            <CaliperGuide side={side} next={armed} states={states} lengths={labels} canMeasure onArm={arm} onSkip={skip} onClear={clear} />
          </section>
        ) : null}

        <section className="rounded-lg border border-line bg-card p-4">
          <Estimates
            estimate={shown}
            heading={
              <>
                <h2 className="text-base font-bold text-estuary-900">Figures</h2>
                {showSaved ? (
                  <Tag tone="good">saved, version {own.current.version}</Tag>
                ) : reviewing ? (
                  <Tag tone="info">
                    {reviewing.reader.name}, version {reviewing.current.version}
                  </Tag>
                ) : (
                  <Tag tone="watch">live, not saved</Tag>
                )}
              </>
            }
          />
          {reviewing && user.canMeasure && !film.withdrawn ? (
            <p className="mt-2 text-xs text-ink-soft">
              These are {reviewing.reader.name}&apos;s saved figures. Draw your own calipers for a second reading, or{" "}
              <button type="button" className="font-bold text-estuary-700 underline" onClick={() => commitSnapshot(snapshotOf(reviewing.current))}>
                start from their calipers
              </button>
              .
            </p>
          ) : null}
          <label className="mt-3 block text-xs font-bold" htmlFor="desk-plane">
            Centimetres measured in
          </label>
          <select id="desk-plane" className="mt-1 w-full rounded-md border border-line bg-card px-2 py-1 text-sm" value={plane} onChange={(e) => setPlane(e.target.value === "patient" ? "patient" : "film")} disabled={!user.canMeasure}>
            <option value="film">Detector (film) plane — as the methods were described</option>
            <option value="patient" disabled={!calibration.patient}>
              Patient plane{calibration.patient ? "" : " (not known for this film)"}
            </option>
          </select>
          <p className="mt-1 text-xs text-ink-soft">Calibration: {film.calibrationWords}</p>
        </section>

        {user.canMeasure && !film.withdrawn ? (
          <section className="rounded-lg border border-line bg-card p-4">
            <h2 className="mb-2 text-base font-bold text-estuary-900">Save</h2>
            {own ? (
              <>
                <label htmlFor="desk-reason" className="block text-xs font-bold">
                  {needsReason ? "Why are you changing a signed-off measurement? (required)" : "What changed (optional)"}
                </label>
                <textarea
                  id="desk-reason"
                  rows={2}
                  value={reason}
                  onChange={(e) => setReason(e.target.value)}
                  aria-invalid={save.kind === "error" && !!save.fields.reason}
                  className="mt-1 w-full rounded-md border border-line px-2 py-1 text-sm aria-[invalid=true]:border-rust-ink"
                />
              </>
            ) : null}
            <div className="mt-2 flex flex-wrap items-center gap-2">
              <Button onClick={() => void doSave(base)} disabled={!canSave || (needsReason && !reason.trim())}>
                {save.kind === "saving" ? "Saving…" : own ? `Save as version ${(base?.version ?? own.current.version) + 1}` : "Save measurement"}
              </Button>
              {!dirty && own ? <span className="text-xs text-ink-soft">No unsaved changes.</span> : null}
            </div>
            <div aria-live="polite" className="mt-2 text-sm">
              {save.kind === "saved" ? <p className="text-moss-ink">{save.message}</p> : null}
              {save.kind === "error" ? (
                <div role="alert" className="rounded border border-rust-ink/30 bg-rust-wash px-2 py-1 text-rust-ink">
                  <p className="font-bold">{save.message}</p>
                  {Object.entries(save.fields)
                    .filter(([, m]) => m !== save.message)
                    .map(([k, m]) => (
                      <p key={k} className="text-xs">{m}</p>
                    ))}
                </div>
              ) : null}
              {save.kind === "conflict" ? (
                <div role="alert" className="rounded border border-amber-ink/30 bg-amber-wash px-2 py-2 text-amber-ink" data-testid="save-conflict">
                  <p>{save.message}</p>
                  <div className="mt-2 flex flex-wrap gap-2">
                    {save.currentId ? (
                      <Button tone="quiet" onClick={() => save.currentId && void loadTheirs(save.currentId)}>
                        Load version {save.currentVersion ?? ""}
                      </Button>
                    ) : null}
                    {save.currentId && save.currentVersion ? (
                      <Button tone="quiet" onClick={() => save.currentId && save.currentVersion && void doSave({ id: save.currentId, version: save.currentVersion })}>
                        Save mine on top
                      </Button>
                    ) : null}
                  </div>
                </div>
              ) : null}
            </div>
          </section>
        ) : (
          <p className="rounded-lg border border-line bg-paper p-3 text-sm text-ink-soft">
            {film.withdrawn ? "This film was withdrawn: its measurements can be read but not changed." : "Your role can read the figures; registrars and consultants measure."}
          </p>
        )}

        <Readers readers={measurements.readers} versions={measurements.versions} userId={user.id} canSignOff={user.canSignOff && !film.withdrawn} onSignOff={(m) => void signOff(m)} />

        <p className="text-xs text-ink-soft">
          Keys: Tab selects a caliper end · arrows move it 1 px (Shift: 10 px) · Delete removes its caliper · Ctrl+Z undo · Ctrl+Shift+Z or Ctrl+Y redo. These figures
          support, and never replace, clinical judgement and your local protocol.
        </p>
      </aside>
    </div>
  );
}

function ToolButton({ label, onClick, disabled, pressed, children }: { label: string; onClick: () => void; disabled?: boolean; pressed?: boolean; children: React.ReactNode }) {
  return (
    <button
      type="button"
      title={label}
      aria-label={label}
      aria-pressed={pressed}
      disabled={disabled}
      onClick={onClick}
      className={`rounded-md border border-line px-2.5 py-1.5 font-bold disabled:cursor-not-allowed disabled:opacity-40 ${pressed ? "bg-estuary-700 text-white" : "bg-card text-estuary-900 hover:bg-estuary-50"}`}
    >
      {children}
    </button>
  );
}

function Readers({
  readers,
  versions,
  userId,
  canSignOff,
  onSignOff,
}: {
  readers: ReaderChain[];
  versions: MeasurementView[];
  userId: string;
  canSignOff: boolean;
  onSignOff: (m: MeasurementView) => void;
}) {
  if (readers.length === 0) {
    return (
      <section className="rounded-lg border border-line bg-card p-4 text-sm">
        <h2 className="mb-1 text-base font-bold text-estuary-900">Readings</h2>
        <p className="text-ink-soft">Nobody has measured this film yet.</p>
      </section>
    );
  }
  const sorted = [...readers].sort((a, b) => (a.reader.id === userId ? -1 : b.reader.id === userId ? 1 : a.reader.name.localeCompare(b.reader.name)));
  const [first, second] = sorted;
  return (
    <section className="rounded-lg border border-line bg-card p-4 text-sm" data-testid="readers">
      <h2 className="mb-2 text-base font-bold text-estuary-900">Readings</h2>
      <table className="w-full text-left">
        <thead className="text-xs text-ink-soft">
          <tr>
            <th className="py-1 font-bold">Reader</th>
            <th className="py-1 text-right font-bold">Light</th>
            <th className="py-1 text-right font-bold">Rhea</th>
            <th className="py-1 text-right font-bold">Collins</th>
          </tr>
        </thead>
        <tbody className="figures">
          {sorted.map((r) => (
            <tr key={r.chainId} className="border-t border-line align-top">
              <td className="py-1.5 font-sans">
                <span className="font-bold">{r.reader.id === userId ? "You" : r.reader.name}</span>
                <span className="block text-xs text-ink-soft">
                  version {r.current.version} · {formatDateTime(r.current.createdAt)}
                </span>
                {r.current.signedOff ? (
                  <span className="mt-0.5 block text-xs text-moss-ink" data-testid="signed-off">
                    Signed off by {r.current.signedOff.by.name}, {formatDateTime(r.current.signedOff.at)}
                  </span>
                ) : canSignOff ? (
                  <button type="button" className="mt-1 rounded border border-estuary-600 px-2 py-0.5 text-xs font-bold text-estuary-700 hover:bg-estuary-50" onClick={() => onSignOff(r.current)}>
                    Sign off version {r.current.version}
                  </button>
                ) : (
                  <span className="mt-0.5 block text-xs text-ink-soft">not signed off</span>
                )}
              </td>
              <td className="whitespace-nowrap py-1.5 pl-1 text-right">{pct(r.current.figures.lightPercent)}</td>
              <td className="whitespace-nowrap py-1.5 pl-1 text-right">{pct(r.current.figures.rheaPercent)}</td>
              <td className="whitespace-nowrap py-1.5 pl-1 text-right">{pct(r.current.figures.collinsPercent)}</td>
            </tr>
          ))}
          {first && second ? (
            <tr className="border-t-2 border-line text-xs" data-testid="reader-difference">
              <td className="py-1.5 font-sans">
                Difference ({first.reader.id === userId ? "you" : first.reader.name} − {second.reader.name}), points
              </td>
              <td className="py-1.5 text-right">{diff(first.current.figures.lightPercent, second.current.figures.lightPercent)}</td>
              <td className="py-1.5 text-right">{diff(first.current.figures.rheaPercent, second.current.figures.rheaPercent)}</td>
              <td className="py-1.5 text-right">{diff(first.current.figures.collinsPercent, second.current.figures.collinsPercent)}</td>
            </tr>
          ) : null}
        </tbody>
      </table>
      <details className="mt-2">
        <summary className="cursor-pointer text-xs font-bold text-estuary-700">All versions ({versions.length})</summary>
        <ol className="mt-1 space-y-1 text-xs">
          {sorted.flatMap((r) =>
            versions
              .filter((v) => v.chainId === r.chainId)
              .sort((a, b) => b.version - a.version)
              .map((v) => (
                <li key={v.id} className="rounded border border-line px-2 py-1">
                  <span className="font-bold">{v.reader.name}</span> · version {v.version} · {formatDateTime(v.createdAt)}
                  {v.createdBy.id !== v.reader.id ? ` (saved by ${v.createdBy.name})` : ""}
                  {v.current ? " · current" : ` · replaced ${formatDateTime(v.supersededAt)}`}
                  <span className="figures block">
                    Light {pct(v.figures.lightPercent)} · Rhea {pct(v.figures.rheaPercent)} · Collins {pct(v.figures.collinsPercent)}
                  </span>
                  {v.reason ? <span className="block italic">“{v.reason}”</span> : null}
                  {v.signedOff ? <span className="block text-moss-ink">signed off by {v.signedOff.by.name}</span> : null}
                </li>
              )),
          )}
        </ol>
      </details>
      <p className="mt-2 text-xs text-ink-soft">Each reader keeps their own reading; a change is a new version, and older versions stay readable.</p>
    </section>
  );
}
