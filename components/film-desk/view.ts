// The film desk's view: how image pixels map to screen pixels (screen = offset + image * scale).
// Pure, so zoom and fit are unit-tested and the browser test can compute where to press.

export interface View {
  /** Screen pixels per ORIGINAL image pixel. */
  scale: number;
  /** Screen position of the image's top-left corner, relative to the stage. */
  x: number;
  y: number;
}

export interface Size {
  width: number;
  height: number;
}

/** Zoom limits relative to the fitted scale, and absolute at the top (8 screen pixels per film pixel). */
export const ZOOM = { minOfFit: 0.5, maxScale: 8, step: 1.25, wheelStep: 1.1 } as const;

/** The whole film centred in the stage with a small margin. */
export function fitView(stage: Size, image: Size, margin = 0.97): View {
  if (stage.width <= 0 || stage.height <= 0 || image.width <= 0 || image.height <= 0) return { scale: 1, x: 0, y: 0 };
  const scale = Math.min(stage.width / image.width, stage.height / image.height) * margin;
  return { scale, x: (stage.width - image.width * scale) / 2, y: (stage.height - image.height * scale) / 2 };
}

/** Zooms by `factor` keeping the image point under `anchor` (screen) where it is. */
export function zoomAt(view: View, factor: number, anchor: { x: number; y: number }, fitScale: number): View {
  const min = fitScale * ZOOM.minOfFit;
  const max = Math.max(ZOOM.maxScale, fitScale);
  const scale = Math.min(max, Math.max(min, view.scale * factor));
  const k = scale / view.scale;
  return { scale, x: anchor.x - (anchor.x - view.x) * k, y: anchor.y - (anchor.y - view.y) * k };
}

export function toImage(view: View, screen: { x: number; y: number }): { x: number; y: number } {
  return { x: (screen.x - view.x) / view.scale, y: (screen.y - view.y) / view.scale };
}

export function toScreen(view: View, image: { x: number; y: number }): { x: number; y: number } {
  return { x: view.x + image.x * view.scale, y: view.y + image.y * view.scale };
}

export function clampToImage(p: { x: number; y: number }, image: Size): { x: number; y: number } {
  return { x: Math.min(image.width, Math.max(0, p.x)), y: Math.min(image.height, Math.max(0, p.y)) };
}
