"use client";
// The konva stage of the film desk: the film on its own layer (never redrawn while a caliper moves),
// the calipers on a second layer, window/level through a lookup table on a cached grey copy.
// Loaded only in the browser (next/dynamic with ssr: false, from film-desk-client.tsx).
import { memo, useCallback, useEffect, useRef, useState } from "react";
import type Konva from "konva";
import { Circle, Group, Image as KImage, Label, Layer, Line, Stage, Tag, Text } from "react-konva";
import { caliperNames, type CaliperName, type CaliperSet, type Point, type Segment } from "@/measure";
import { CALIPER_COLOURS, type DeskMode, type SelectedEnd } from "./desk-types";
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
  const [img, setImg] = useState<HTMLImageElement | null>(null);
  const onStateRef = useRef(onState);
  onStateRef.current = onState;
  useEffect(() => {
    let live = true;
    const el = new window.Image();
    el.decoding = "async";
    onStateRef.current("loading");
    el.onload = () => {
      if (!live) return;
      setImg(el);
      onStateRef.current("ready");
    };
    el.onerror = () => {
      if (live) onStateRef.current("error");
    };
    el.src = url;
    return () => {
      live = false;
    };
  }, [url]);
  return img;
}

/**
 * The picture the image layer draws: the decoded film itself for the identity window, else a canvas
 * re-coloured through the window's lookup table (at most once per animation frame).
 */
function useWindowedSource(img: HTMLImageElement | null, wl: WindowLevel) {
  const grey = useRef<Uint8Array | null>(null);
  const canvas = useRef<HTMLCanvasElement | null>(null);
  const pending = useRef<number | null>(null);
  const latest = useRef(wl);
  latest.current = wl;
  const [state, setState] = useState<{ source: CanvasImageSource | null; version: number }>({ source: null, version: 0 });

  useEffect(() => {
    grey.current = null;
    canvas.current = null;
    setState((s) => ({ source: img, version: s.version + 1 }));
  }, [img]);

  useEffect(() => {
    if (!img) return;
    if (isIdentity(wl)) {
      setState((s) => (s.source === img ? s : { source: img, version: s.version + 1 }));
      return;
    }
    if (pending.current !== null) return;
    pending.current = window.requestAnimationFrame(() => {
      pending.current = null;
      const w = img.naturalWidth;
      const h = img.naturalHeight;
      if (!canvas.current) {
        const c = document.createElement("canvas");
        c.width = w;
        c.height = h;
        canvas.current = c;
      }
      const ctx = canvas.current.getContext("2d", { willReadFrequently: true });
      if (!ctx) return;
      if (!grey.current) {
        ctx.drawImage(img, 0, 0);
        grey.current = greyFromRgba(ctx.getImageData(0, 0, w, h).data);
      }
      const t0 = performance.now();
      const out = ctx.createImageData(w, h);
      applyLut(grey.current, buildLut(latest.current), out.data);
      ctx.putImageData(out, 0, 0);
      recordWindowTime(performance.now() - t0);
      setState((s) => ({ source: canvas.current, version: s.version + 1 }));
    });
  }, [img, wl]);

  useEffect(() => () => {
    if (pending.current !== null) window.cancelAnimationFrame(pending.current);
  }, []);
  return state;
}

/** Last window/level repaint times (ms), read by bench/film-desk.ts. */
function recordWindowTime(ms: number) {
  const w = window as unknown as { __filmDeskWindowMs?: number[] };
  (w.__filmDeskWindowMs ??= []).push(ms);
}

/** The film, on its own layer. Memoised: a caliper drag changes none of its props, so konva never redraws it. */
const ImageLayer = memo(function ImageLayer({ source, size, version, smooth }: { source: CanvasImageSource | null; size: Size; version: number; smooth: boolean }) {
  const layer = useRef<Konva.Layer>(null);
  useEffect(() => {
    layer.current?.batchDraw();
    const w = window as unknown as { __filmDeskImageDraws?: number };
    w.__filmDeskImageDraws = (w.__filmDeskImageDraws ?? 0) + 1;
  }, [version]);
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
