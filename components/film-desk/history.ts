// Undo and redo for the caliper set. A drag updates the present without history ("live") and commits
// once on release, so one drag is one undo step.
import { caliperNames, type CaliperName, type CaliperSet } from "@/measure";

export interface DeskSnapshot {
  calipers: CaliperSet;
  /** Calipers the reader chose to skip (methods that need them show "not measured"). */
  skipped: CaliperName[];
}

export interface History {
  past: DeskSnapshot[];
  present: DeskSnapshot;
  future: DeskSnapshot[];
}

export type HistoryAction =
  | { type: "live"; snapshot: DeskSnapshot }
  | { type: "commit"; before: DeskSnapshot; snapshot: DeskSnapshot }
  | { type: "undo" }
  | { type: "redo" }
  | { type: "reset"; snapshot: DeskSnapshot };

const LIMIT = 200;

export function initHistory(snapshot: DeskSnapshot): History {
  return { past: [], present: snapshot, future: [] };
}

export function historyReducer(h: History, a: HistoryAction): History {
  switch (a.type) {
    case "live":
      return { ...h, present: a.snapshot };
    case "commit":
      if (sameSnapshot(a.before, a.snapshot)) return { ...h, present: a.snapshot };
      return { past: [...h.past, a.before].slice(-LIMIT), present: a.snapshot, future: [] };
    case "undo": {
      const prev = h.past[h.past.length - 1];
      if (!prev) return h;
      return { past: h.past.slice(0, -1), present: prev, future: [h.present, ...h.future] };
    }
    case "redo": {
      const next = h.future[0];
      if (!next) return h;
      return { past: [...h.past, h.present], present: next, future: h.future.slice(1) };
    }
    case "reset":
      return initHistory(a.snapshot);
  }
}

/** A canonical text form of a caliper set (fixed key order, skipped and absent calipers left out). */
export function caliperKey(set: CaliperSet): string {
  return JSON.stringify(caliperNames.map((n) => set[n] ?? null));
}

export function sameSnapshot(a: DeskSnapshot, b: DeskSnapshot): boolean {
  return caliperKey(a.calipers) === caliperKey(b.calipers) && [...a.skipped].sort().join() === [...b.skipped].sort().join();
}

/** The caliper the guide asks for next: the first neither drawn nor skipped, or null when the set is complete. */
export function nextCaliper(s: DeskSnapshot): CaliperName | null {
  return caliperNames.find((n) => !s.calipers[n] && !s.skipped.includes(n)) ?? null;
}
