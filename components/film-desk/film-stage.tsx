"use client";
// The konva stage of the film desk: the film on its own layer (never redrawn while a caliper moves),
// the calipers on a second layer, window/level through a lookup table on a cached grey copy.
// Loaded only in the browser (next/dynamic with ssr: false, from film-desk-client.tsx).
import { memo, useCallback, useEffect, useRef, useState } from "react";
import type Konva from "konva";
import { Circle, Group, Image as KImage, Label, Layer, Line, Stage, Tag, Text } from "react-konva";
import { caliperNames, type CaliperName, type CaliperSet, type Point, type Segment } from "@/measure";
import { CALIPER_COLOURS, type DeskMode, type SelectedEnd } from "./desk-types";
import { loadFilmImage } from "./film-image";
import type { DeskSnapshot } from "./history";
import { clampToImage, toImage, zoomAt, ZOOM, type Size, type View } from "./view";
import { applyLut, buildLut, dragWindow, greyFromRgba, isIdentity, type WindowLevel } from "./window-level";

export interface FilmStageProps {
  imageUrl: string;
  /** Original film size in pixels: the image node is drawn at this size, so stage units are film pixels. */
  imageSize: Size;
  stageSize: Size;
  view: View;
  fitScale: number;
  onView: (v: View) => void;
  mode: DeskMode;
  wl: WindowLevel;
  onWindow: (wl: WindowLevel) => void;
  snapshot: DeskSnapshot;
  armed: CaliperName | null;
  canMeasure: boolean;
  labels: Record<CaliperName, string>;
  selected: SelectedEnd | null;
  onSelect: (s: SelectedEnd | null) => void;
  onLive: (calipers: CaliperSet) => void;
  onCommit: (before: CaliperSet, after: CaliperSet) => void;
  /** Other readers' calipers, drawn thin and dashed, not editable. */
  overlays: CaliperSet[];
  onImageState: (state: "loading" | "ready" | "error") => void;
}

/** Shorter than this on screen, a press-and-release is a click, not a caliper. */
const MIN_DRAG_SCREEN_PX = 4;
const HANDLE_RADIUS = 6;

function useFilmImage(url: string, onState: (s: "loading" | "ready" | "error") => void) {
  const [img, setImg] = useState<ImageBitmap | null>(null);
  const onStateRef = useRef(onState);
  onStateRef.current = onState;
  useEffect(() => {
    let live = true;
    onStateRef.current("loading");
    loadFilmImage(url).then(
      (el) => {
        if (!live) return;
        setImg(el);
        onStateRef.current("ready");
      },
      () => {
        if (live) onStateRef.current("error");
      },
    );
    return () => {
      live = false;
    };
  }, [url]);
  return img;
}

/** Longest side of the quick window/level copy used while the window is being dragged. */
const PREVIEW_MAX_SIDE = 1024;
/** The full-resolution pass runs this long after the window last changed. */
const FULL_PASS_DELAY_MS = 180;

interface GreyCanvas {
  canvas: HTMLCanvasElement;
  ctx: CanvasRenderingContext2D;
  grey: Uint8Array;
  out: ImageData;
}

/** A canvas of the film at (width, height) and its grey levels, made once. */
function greyCanvas(img: ImageBitmap, width: number, height: number): GreyCanvas | null {
  const canvas = document.createElement("canvas");
  canvas.width = width;
  canvas.height = height;
  const ctx = canvas.getContext("2d", { willReadFrequently: true });
  if (!ctx) return null;
  ctx.imageSmoothingQuality = "high";
  ctx.drawImage(img, 0, 0, width, height);
  const grey = greyFromRgba(ctx.getImageData(0, 0, width, height).data);
  return { canvas, ctx, grey, out: ctx.createImageData(width, height) };
}

function paint(g: GreyCanvas, wl: WindowLevel): number {
  const t0 = performance.now();
  applyLut(g.grey, buildLut(wl), g.out.data);
  g.ctx.putImageData(g.out, 0, 0);
  return performance.now() - t0;
}

/**
 * The picture the image layer draws: the decoded film itself for the identity window, else a canvas
 * re-coloured through the window's lookup table. While the window is being dragged a copy of at most
 * 1,024 px a side is re-coloured (at most once per animation frame: more pixels than the desk shows
 * when the film is fitted); the full-resolution canvas follows once the drag pauses.
 */
function useWindowedSource(img: ImageBitmap | null, wl: WindowLevel) {
  const full = useRef<GreyCanvas | null>(null);
  const preview = useRef<GreyCanvas | null>(null);
  const frame = useRef<number | null>(null);
  const timer = useRef<ReturnType<typeof setTimeout> | null>(null);
  const latest = useRef(wl);
  latest.current = wl;
  const [state, setState] = useState<{ source: CanvasImageSource | null; version: number }>({ source: null, version: 0 });

  useEffect(() => {
    full.current = null;
    preview.current = null;
    setState((s) => ({ source: img, version: s.version + 1 }));
  }, [img]);

  useEffect(() => {
    if (!img) return;
    if (timer.current !== null) clearTimeout(timer.current);
    timer.current = null;
    if (isIdentity(wl)) {
      setState((s) => (s.source === img ? s : { source: img, version: s.version + 1 }));
      return;
    }
    const w = img.width;
    const h = img.height;
    const k = Math.min(1, PREVIEW_MAX_SIDE / Math.max(w, h));
    const runFull = () => {
      timer.current = null;
      full.current ??= greyCanvas(img, w, h);
      if (!full.current) return;
      recordWindowTime("full", paint(full.current, latest.current));
      const c = full.current.canvas;
      setState((s) => ({ source: c, version: s.version + 1 }));
    };
    if (k === 1) {
      if (frame.current === null) frame.current = window.requestAnimationFrame(() => {
        frame.current = null;
        runFull();
      });
      return;
    }
    if (frame.current === null) {
      frame.current = window.requestAnimationFrame(() => {
        frame.current = null;
        preview.current ??= greyCanvas(img, Math.max(1, Math.round(w * k)), Math.max(1, Math.round(h * k)));
        if (!preview.current) return;
        recordWindowTime("preview", paint(preview.current, latest.current));
        const c = preview.current.canvas;
        setState((s) => ({ source: c, version: s.version + 1 }));
      });
    }
    timer.current = setTimeout(runFull, FULL_PASS_DELAY_MS);
  }, [img, wl]);

  useEffect(
    () => () => {
      if (frame.current !== null) window.cancelAnimationFrame(frame.current);
      if (timer.current !== null) clearTimeout(timer.current);
    },
    [],
  );
  return state;
}

/** Window/level repaint times (ms) by kind, read by bench/film-desk.ts. */
function recordWindowTime(kind: "preview" | "full", ms: number) {
  const w = window as unknown as { __filmDeskWindowMs?: { preview: number[]; full: number[] } };
  w.__filmDeskWindowMs ??= { preview: [], full: [] };
  w.__filmDeskWindowMs[kind].push(ms);
}

/** The film, on its own layer. Memoised: a caliper drag changes none of its props, so konva never redraws it. */
const ImageLayer = memo(function ImageLayer({ source, size, version, smooth }: { source: CanvasImageSource | null; size: Size; version: number; smooth: boolean }) {
  const layer = useRef<Konva.Layer>(null);
  useEffect(() => {
    layer.current?.batchDraw();
  }, [version]);
  // Counts real redraws of the film layer (konva's own 'draw' event), read by bench/film-desk.ts.
  useEffect(() => {
    const l = layer.current;
    if (!l) return;
    const w = window as unknown as { __filmDeskImageDraws?: number };
    l.on("draw.filmdesk", () => {
      w.__filmDeskImageDraws = (w.__filmDeskImageDraws ?? 0) + 1;
    });
    return () => {
      l.off("draw.filmdesk");
    };
  }, []);
  return (
    <Layer ref={layer} listening={false} imageSmoothingEnabled={smooth}>
      {source ? <KImage image={source} x={0} y={0} width={size.width} height={size.height} listening={false} perfectDrawEnabled={false} /> : null}
    </Layer>
  );
});

function withEnd(seg: Segment, end: "a" | "b", p: Point): Segment {
  return end === "a" ? { a: p, b: seg.b } : { a: seg.a, b: p };
}

/**
 * Where a caliper's length label goes: beside the segment, on a side and at a point along it chosen per
 * caliper, so the hemithorax and lung widths (drawn on the same line) do not cover each other.
 */
const LABEL_SPOT: Record<CaliperName, { t: number; side: 1 | -1 }> = {
  hemithorax: { t: 0.22, side: 1 },
  lung: { t: 0.68, side: 1 },
  apex: { t: 0.5, side: 1 },
  upper: { t: 0.5, side: 1 },
  lower: { t: 0.5, side: -1 },
  hilum: { t: 0.5, side: -1 },
};

function labelPlace(name: CaliperName, s: Segment, inv: number, text: string) {
  const { t, side } = LABEL_SPOT[name];
  const dx = s.b.x - s.a.x;
  const dy = s.b.y - s.a.y;
  const len = Math.hypot(dx, dy) || 1;
  // A normal that points up the screen (or right, for a vertical segment): side 1 is above/right.
  let nx = -dy / len;
  let ny = dx / len;
  if (ny > 0 || (ny === 0 && nx < 0)) {
    nx = -nx;
    ny = -ny;
  }
  const gap = 10 * inv;
  const x = s.a.x + dx * t + nx * side * gap;
  const y = s.a.y + dy * t + ny * side * gap;
  const width = text.length * 7.9 + 6; // monospace 13 px, padding 3 each side
  const height = 21;
  const vertical = Math.abs(ny) < 0.5;
  return {
    x,
    y,
    offsetX: vertical ? (side === 1 ? 0 : width) : width / 2,
    offsetY: vertical ? height / 2 : side === 1 ? height : 0,
  };
}

function FilmStageImpl(props: FilmStageProps) {
  const { imageSize, view, mode, snapshot, canMeasure, onLive, onCommit, onView, onSelect } = props;
  const img = useFilmImage(props.imageUrl, props.onImageState);
  const { source, version } = useWindowedSource(img, props.wl);

  // What a press started: drawing a caliper, panning, or windowing.
  const gesture = useRef<
    | { kind: "draw"; name: CaliperName; start: Point; startScreen: Point; before: CaliperSet }
    | { kind: "pan"; startScreen: Point; startView: View }
    | { kind: "window"; startScreen: Point; startWl: WindowLevel }
    | null
  >(null);
  const dragBefore = useRef<CaliperSet | null>(null);
  const calipersRef = useRef(snapshot.calipers);
  calipersRef.current = snapshot.calipers;

  const pointer = (stage: Konva.Stage | null): Point | null => stage?.getPointerPosition() ?? null;

  const endGesture = useCallback(() => {
    const g = gesture.current;
    gesture.current = null;
    if (!g || g.kind !== "draw") return;
    const seg = calipersRef.current[g.name];
    const screenLen = seg ? Math.hypot(seg.b.x - seg.a.x, seg.b.y - seg.a.y) * view.scale : 0;
    if (!seg || screenLen < MIN_DRAG_SCREEN_PX) {
      onLive(g.before);
      return;
    }
    onCommit(g.before, calipersRef.current);
    onSelect({ name: g.name, end: "b" });
  }, [onCommit, onLive, onSelect, view.scale]);

  // A press that ends outside the stage still ends the gesture.
  useEffect(() => {
    const up = () => {
      if (gesture.current) endGesture();
    };
    window.addEventListener("pointerup", up);
    return () => window.removeEventListener("pointerup", up);
  }, [endGesture]);

  const onPointerDown = (e: Konva.KonvaEventObject<PointerEvent>) => {
    const stage = e.target.getStage();
    const p = pointer(stage);
    if (!p) return;
    if (e.target !== stage) return; // a handle: konva's own drag takes over
    const button = e.evt.button;
    if (button === 1 || button === 2 || mode === "pan") {
      gesture.current = { kind: "pan", startScreen: p, startView: view };
      return;
    }
    if (mode === "window") {
      gesture.current = { kind: "window", startScreen: p, startWl: props.wl };
      return;
    }
    if (!canMeasure || !props.armed) {
      onSelect(null);
      return;
    }
    const start = clampToImage(toImage(view, p), imageSize);
    const before = calipersRef.current;
    gesture.current = { kind: "draw", name: props.armed, start, startScreen: p, before };
    onLive({ ...before, [props.armed]: { a: start, b: start } });
  };

  const onPointerMove = (e: Konva.KonvaEventObject<PointerEvent>) => {
    const g = gesture.current;
    if (!g) return;
    const p = pointer(e.target.getStage());
    if (!p) return;
    if (g.kind === "pan") {
      onView({ scale: g.startView.scale, x: g.startView.x + p.x - g.startScreen.x, y: g.startView.y + p.y - g.startScreen.y });
    } else if (g.kind === "window") {
      props.onWindow(dragWindow(g.startWl, p.x - g.startScreen.x, p.y - g.startScreen.y));
    } else {
      const b = clampToImage(toImage(view, p), imageSize);
      onLive({ ...calipersRef.current, [g.name]: { a: g.start, b } });
    }
  };

  const onWheel = (e: Konva.KonvaEventObject<WheelEvent>) => {
    e.evt.preventDefault();
    const p = pointer(e.target.getStage());
    if (!p) return;
    const factor = e.evt.deltaY < 0 ? ZOOM.wheelStep : 1 / ZOOM.wheelStep;
    onView(zoomAt(view, factor, p, props.fitScale));
  };

  const handleDragStart = () => {
    dragBefore.current = calipersRef.current;
  };
  const handleDragMove = (name: CaliperName, end: "a" | "b") => (e: Konva.KonvaEventObject<DragEvent>) => {
    const node = e.target;
    const p = clampToImage({ x: node.x(), y: node.y() }, imageSize);
    node.position(p);
    const seg = calipersRef.current[name];
    if (!seg) return;
    onLive({ ...calipersRef.current, [name]: withEnd(seg, end, p) });
  };
  const handleDragEnd = () => {
    const before = dragBefore.current;
    dragBefore.current = null;
    if (before) onCommit(before, calipersRef.current);
  };

  const inv = 1 / view.scale;
  const cursor = mode === "pan" ? "grab" : mode === "window" ? "ns-resize" : canMeasure && props.armed ? "crosshair" : "default";

  return (
    <Stage
      width={props.stageSize.width}
      height={props.stageSize.height}
      scaleX={view.scale}
      scaleY={view.scale}
      x={view.x}
      y={view.y}
      style={{ cursor }}
      onPointerDown={onPointerDown}
      onPointerMove={onPointerMove}
      onPointerUp={endGesture}
      onWheel={onWheel}
      onContextMenu={(e) => e.evt.preventDefault()}
    >
      <ImageLayer source={source} size={imageSize} version={version} smooth={view.scale < 2} />
      <Layer>
        {props.overlays.map((set, i) =>
          caliperNames.map((name) => {
            const s = set[name];
            return s ? (
              <Line key={`o${i}-${name}`} points={[s.a.x, s.a.y, s.b.x, s.b.y]} stroke={CALIPER_COLOURS[name]} strokeWidth={1.5} strokeScaleEnabled={false} dash={[6 * inv, 5 * inv]} opacity={0.75} listening={false} />
            ) : null;
          }),
        )}
        {caliperNames.map((name) => {
          const s = snapshot.calipers[name];
          if (!s) return null;
          const colour = CALIPER_COLOURS[name];
          const dx = s.b.x - s.a.x;
          const dy = s.b.y - s.a.y;
          const len = Math.hypot(dx, dy) || 1;
          const nx = (-dy / len) * 7 * inv; // end ticks, 7 screen px each way
          const ny = (dx / len) * 7 * inv;
          const label = labelPlace(name, s, inv, props.labels[name]);
          const isArmed = props.armed === name;
          return (
            <Group key={name}>
              <Line points={[s.a.x, s.a.y, s.b.x, s.b.y]} stroke="#000" strokeWidth={4} strokeScaleEnabled={false} opacity={0.55} listening={false} />
              <Line points={[s.a.x, s.a.y, s.b.x, s.b.y]} stroke={colour} strokeWidth={isArmed ? 2.5 : 2} strokeScaleEnabled={false} listening={false} />
              <Line points={[s.a.x - nx, s.a.y - ny, s.a.x + nx, s.a.y + ny]} stroke={colour} strokeWidth={2} strokeScaleEnabled={false} listening={false} />
              <Line points={[s.b.x - nx, s.b.y - ny, s.b.x + nx, s.b.y + ny]} stroke={colour} strokeWidth={2} strokeScaleEnabled={false} listening={false} />
              <Label x={label.x} y={label.y} offsetX={label.offsetX} offsetY={label.offsetY} scaleX={inv} scaleY={inv} listening={false}>
                <Tag fill="rgba(10,12,14,0.78)" cornerRadius={3} />
                <Text text={props.labels[name]} fill={colour} fontSize={13} fontFamily="ui-monospace, monospace" padding={3} />
              </Label>
              {(["a", "b"] as const).map((end) => {
                const p = s[end];
                const sel = props.selected?.name === name && props.selected.end === end;
                return (
                  <Circle
                    key={end}
                    name={`handle-${name}-${end}`}
                    x={p.x}
                    y={p.y}
                    radius={(sel ? HANDLE_RADIUS + 2 : HANDLE_RADIUS) * inv}
                    fill={sel ? "#f2b544" : "rgba(0,0,0,0.35)"}
                    stroke={colour}
                    strokeWidth={2}
                    strokeScaleEnabled={false}
                    draggable={canMeasure && mode === "measure"}
                    onPointerDown={() => onSelect({ name, end })}
                    onDragStart={handleDragStart}
                    onDragMove={handleDragMove(name, end)}
                    onDragEnd={handleDragEnd}
                  />
                );
              })}
            </Group>
          );
        })}
      </Layer>
    </Stage>
  );
}

export default FilmStageImpl;
