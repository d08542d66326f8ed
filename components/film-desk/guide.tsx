"use client";
// The caliper guide: which caliper comes next, how to place it in plain words, a small chest drawing
// with that segment marked, and the list of the six calipers with their state.
import type { CaliperName } from "@/measure";
import { caliperNames } from "@/measure";
import { CALIPER_LABELS } from "@/lib/validation/measurements";
import { CALIPER_COLOURS } from "./desk-types";

export const CALIPER_GUIDE: Record<CaliperName, { title: string; how: string; feeds: string }> = {
  hemithorax: {
    title: "Hemithorax width",
    how: "At the level of the hilum, drag straight across from the inside of the ribs to the edge of the mediastinum.",
    feeds: "Light index",
  },
  lung: {
    title: "Lung width",
    how: "On the same level, drag from the edge of the collapsed lung (the thin white pleural line) to the edge of the mediastinum.",
    feeds: "Light index",
  },
  apex: {
    title: "Apex to cupola",
    how: "From the top of the collapsed lung, drag straight up to the roof of the chest cavity.",
    feeds: "Rhea, Collins, ACCP class",
  },
  upper: {
    title: "Upper gap",
    how: "Halfway down the upper half of the lung, drag from the lung edge out to the chest wall.",
    feeds: "Rhea, Collins",
  },
  lower: {
    title: "Lower gap",
    how: "Halfway down the lower half of the lung, drag from the lung edge out to the chest wall.",
    feeds: "Rhea, Collins",
  },
  hilum: {
    title: "Gap at the hilum",
    how: "At the level of the hilum, drag from the lung edge out to the chest wall.",
    feeds: "BTS class",
  },
};

/** Segment ends in the drawing, for a pneumothorax drawn on the viewer's left (the patient's right on a frontal film). */
const DIAGRAM_SEGMENTS: Record<CaliperName, [number, number, number, number]> = {
  hemithorax: [33, 95, 88, 95],
  lung: [57, 95, 88, 95],
  apex: [73, 61, 73, 31],
  upper: [35, 78, 61, 78],
  lower: [31, 124, 55, 124],
  hilum: [33, 95, 57, 95],
};

/**
 * A frontal chest seen as on a film (the patient's right on the viewer's left), the affected side with
 * its lung drawn away from the chest wall, and one caliper marked.
 */
export function ChestDiagram({ side, highlight }: { side: "left" | "right"; highlight: CaliperName | null }) {
  // Drawn for a right pneumothorax (viewer's left); a left one is the mirror image.
  const mirror = side === "left";
  const seg = highlight ? DIAGRAM_SEGMENTS[highlight] : null;
  const colour = highlight ? CALIPER_COLOURS[highlight] : "#f2b544";
  return (
    <svg viewBox="0 0 200 170" className="h-auto w-full max-w-[220px]" role="img" aria-label={highlight ? `Drawing of where the ${CALIPER_LABELS[highlight]} caliper goes` : "Drawing of the chest"}>
      <rect x="0" y="0" width="200" height="170" rx="8" fill="#1b2023" />
      <g transform={mirror ? "translate(200,0) scale(-1,1)" : undefined}>
        {/* rib cage */}
        <path d="M28 42 Q100 4 172 42 L180 150 Q100 168 20 150 Z" fill="none" stroke="#59636a" strokeWidth="1.5" />
        {/* mediastinum and heart */}
        <path d="M88 28 L112 28 L114 150 Q100 156 86 150 Z" fill="#8d979d" opacity="0.55" />
        <path d="M108 96 Q142 100 138 140 Q120 150 108 146 Z" fill="#8d979d" opacity="0.45" />
        {/* the affected hemithorax: outline, air, and the collapsed lung */}
        <path d="M88 40 C70 24 44 30 36 60 L30 148 Q60 158 88 150 Z" fill="#0d0f10" stroke="#aab4ba" strokeWidth="1.2" />
        <path d="M88 60 C78 56 63 62 60 80 L55 138 Q70 146 88 144 Z" fill="#4d5a60" stroke="#e8eef0" strokeWidth="1" strokeDasharray="2 1.5" />
        {/* the other hemithorax, lung filling it */}
        <path d="M112 40 C130 24 156 30 164 60 L170 148 Q140 158 112 150 Z" fill="#4d5a60" stroke="#aab4ba" strokeWidth="1.2" />
        {/* level of the hilum */}
        <line x1="24" y1="95" x2="92" y2="95" stroke="#59636a" strokeWidth="0.8" strokeDasharray="3 3" />
        {seg ? (
          <g stroke={colour} strokeWidth="3" strokeLinecap="round">
            <line x1={seg[0]} y1={seg[1]} x2={seg[2]} y2={seg[3]} />
            <circle cx={seg[0]} cy={seg[1]} r="3" fill={colour} stroke="none" />
            <circle cx={seg[2]} cy={seg[3]} r="3" fill={colour} stroke="none" />
          </g>
        ) : null}
      </g>
      <text x="10" y="18" fill="#cfd6da" fontSize="11" fontWeight="bold">R</text>
      <text x="182" y="18" fill="#cfd6da" fontSize="11" fontWeight="bold">L</text>
    </svg>
  );
}

export type CaliperState = "drawn" | "skipped" | "waiting";

export function CaliperGuide({
  side,
  next,
  states,
  lengths,
  canMeasure,
  onArm,
  onSkip,
  onClear,
}: {
  side: "left" | "right";
  next: CaliperName | null;
  states: Record<CaliperName, CaliperState>;
  lengths: Record<CaliperName, string>;
  canMeasure: boolean;
  onArm: (name: CaliperName) => void;
  onSkip: (name: CaliperName) => void;
  onClear: (name: CaliperName) => void;
}) {
  const sideWords = side === "right" ? "right" : "left";
  const filmSide = side === "right" ? "left" : "right";
  return (
    <div>
      <div className="flex gap-3">
        <div className="w-[46%] shrink-0">
          <ChestDiagram side={side} highlight={next} />
        </div>
        <div className="min-w-0 text-sm" aria-live="polite">
          {next ? (
            <>
              <p className="text-xs font-bold uppercase tracking-wide text-ink-soft">
                Next: {caliperNames.indexOf(next) + 1} of 6
              </p>
              <p className="mt-0.5 font-bold" style={{ color: "#0c3336" }} data-testid="next-caliper">
                <span aria-hidden="true" className="mr-1 inline-block h-2.5 w-2.5 rounded-full align-middle" style={{ background: CALIPER_COLOURS[next] }} />
                {CALIPER_GUIDE[next].title}
              </p>
              <p className="mt-1">{CALIPER_GUIDE[next].how}</p>
              <p className="mt-1 text-xs text-ink-soft">
                {canMeasure ? "Press, drag and release on the film." : "You can look, but your role does not measure."} Feeds: {CALIPER_GUIDE[next].feeds}.
              </p>
            </>
          ) : (
            <p data-testid="next-caliper">
              <strong>Caliper set complete.</strong> Drag any end to adjust it, or redraw a caliper from the list.
            </p>
          )}
          <p className="mt-2 text-xs text-ink-soft">
            {sideWords[0]?.toUpperCase()}
            {sideWords.slice(1)} pneumothorax: on a frontal film it is on the {filmSide} of the picture as you look at it.
          </p>
        </div>
      </div>
      <ol className="mt-3 divide-y divide-line rounded-md border border-line text-sm">
        {caliperNames.map((name) => {
          const st = states[name];
          return (
            <li key={name} className={`flex items-center gap-2 px-2 py-1.5 ${next === name ? "bg-estuary-50" : ""}`}>
              <span aria-hidden="true" className="inline-block h-2.5 w-2.5 shrink-0 rounded-full" style={{ background: CALIPER_COLOURS[name] }} />
              <span className="min-w-0 flex-1">
                {CALIPER_GUIDE[name].title}
                <span className="figures ml-2 text-ink-soft">{st === "drawn" ? lengths[name] : st === "skipped" ? "skipped" : "—"}</span>
              </span>
              {canMeasure ? (
                <span className="flex shrink-0 gap-1">
                  <button type="button" className="rounded border border-line px-1.5 py-0.5 text-xs hover:bg-estuary-50" onClick={() => onArm(name)} aria-label={`${st === "drawn" ? "Redraw" : "Draw"} the ${CALIPER_LABELS[name]} caliper`}>
                    {st === "drawn" ? "Redraw" : "Draw"}
                  </button>
                  {st !== "skipped" ? (
                    <button type="button" className="rounded border border-line px-1.5 py-0.5 text-xs hover:bg-estuary-50" onClick={() => (st === "drawn" ? onClear(name) : onSkip(name))} aria-label={`${st === "drawn" ? "Remove" : "Skip"} the ${CALIPER_LABELS[name]} caliper`}>
                      {st === "drawn" ? "Remove" : "Skip"}
                    </button>
                  ) : null}
                </span>
              ) : null}
            </li>
          );
        })}
      </ol>
    </div>
  );
}
