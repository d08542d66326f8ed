// The drain rules applied to one drain's record: size for the indication, persistent air leak, and
// the "no swing" check. Pure: the rules themselves live in measure/ and are only called from here.
import {
  airLeakDefaults,
  drainCheckPrompt,
  drainSizeCheck,
  persistentAirLeak,
  type AirLeakAssessment,
  type AirLeakSettings,
  type DrainCheckPrompt,
  type DrainSizeCheck,
} from "@/measure";
import type { Bubbling, Indication } from "@/lib/validation/drains";

export interface DrainFacts {
  insertedAt: Date;
  removedAt: Date | null;
  sizeFr: number;
  indication: Indication;
}

export interface ObservationFacts {
  observedAt: Date;
  swinging: boolean;
  bubbling: Bubbling;
}

/**
 * Any bubbling in the underwater seal is an air leak, whether on coughing, on expiration or
 * continuous; the persistent-leak clock runs while it continues (BTS 2010, from memory).
 */
export const isBubbling = (b: Bubbling): boolean => b !== "none";

/** What the latest film since the drain went in says about the lung. */
export interface FilmFigures {
  takenAt: Date;
  lightPercent: number | null;
  hilumCm: number | null;
  apexCm: number | null;
  aidCm: number | null;
}

/** When Rimwatch counts the lung as re-expanded on a measured film (a drains setting; defaults in lib/drains/settings.ts). */
export interface ReExpansionThresholds {
  reExpandedBelowCm: number;
  reExpandedBelowLightPercent: number;
}

/** The rule in words, with the thresholds in force, as the drains section shows it. */
export function reExpansionText(t: ReExpansionThresholds): string {
  return `re-expanded when the latest film since insertion shows every measured interpleural distance under ${t.reExpandedBelowCm} cm (or, uncalibrated, a Light index under ${t.reExpandedBelowLightPercent} %), or the episode is marked resolved`;
}

/** No published figure: a starting point (suggestion), shown on screen beside the prompt and set in the settings. */
export const reExpansionSource = "suggestion: no published figure; set by the team";

export interface LungState {
  reExpanded: boolean | null;
  reason: string;
}

/** Re-expansion from the episode's state and the latest measured film since the drain went in. */
export function lungStateFrom(input: { episodeResolved: boolean; latest: FilmFigures | null }, t: ReExpansionThresholds): LungState {
  if (input.episodeResolved) return { reExpanded: true, reason: "The episode is marked resolved." };
  const f = input.latest;
  if (f === null) return { reExpanded: null, reason: "No measured film since the drain went in." };
  const cms = [f.hilumCm, f.apexCm, f.aidCm].filter((v): v is number => v !== null && Number.isFinite(v));
  if (cms.length > 0) {
    const largest = Math.max(...cms);
    return largest < t.reExpandedBelowCm
      ? { reExpanded: true, reason: `Latest film: largest interpleural distance ${largest.toFixed(1)} cm.` }
      : { reExpanded: false, reason: `Latest film: interpleural distance up to ${largest.toFixed(1)} cm.` };
  }
  if (f.lightPercent !== null && Number.isFinite(f.lightPercent)) {
    return f.lightPercent < t.reExpandedBelowLightPercent
      ? { reExpanded: true, reason: `Latest film: Light index ${f.lightPercent.toFixed(0)} %.` }
      : { reExpanded: false, reason: `Latest film: Light index ${f.lightPercent.toFixed(0)} %.` };
  }
  return { reExpanded: null, reason: "The latest film since insertion has no usable distance or Light index." };
}

export interface DrainAssessment {
  size: DrainSizeCheck;
  airLeak: AirLeakAssessment;
  /** Hours of bubbling so far, even when under the threshold; null when not bubbling at the last observation. */
  bubblingForHours: number | null;
  check: DrainCheckPrompt;
  lung: LungState;
  lastObservedAt: Date | null;
}

const HOUR_MS = 3_600_000;

/**
 * Applies measure/'s drain rules to a drain and its observations (any order). Observations are
 * timed in hours since insertion; the swing prompt uses the most recent observation.
 */
export function assessDrain(drain: DrainFacts, observations: readonly ObservationFacts[], lung: LungState, settings: AirLeakSettings = {}): DrainAssessment {
  const size = drainSizeCheck({ frenchGauge: drain.sizeFr, indication: drain.indication });
  const sorted = [...observations].sort((a, b) => a.observedAt.getTime() - b.observedAt.getTime());
  const airLeak = persistentAirLeak(
    sorted.map((o) => ({
      atHours: Math.max(0, Math.round(((o.observedAt.getTime() - drain.insertedAt.getTime()) / HOUR_MS) * 10) / 10),
      bubbling: isBubbling(o.bubbling),
    })),
    settings,
  );
  const last = sorted[sorted.length - 1] ?? null;
  const check: DrainCheckPrompt =
    drain.removedAt !== null
      ? { prompt: false, reason: "The drain has been removed.", source: "common practice" }
      : drainCheckPrompt({ swinging: last === null ? null : last.swinging, lungReExpanded: lung.reExpanded });
  return { size, airLeak, bubblingForHours: airLeak.bubblingForHours, check, lung, lastObservedAt: last?.observedAt ?? null };
}

export const airLeakSource = airLeakDefaults.source;

/** Advice levels in increasing order, for escalation. */
export const ADVICE_RANK: Record<AirLeakAssessment["advice"], number> = { none: 0, "respiratory-specialist": 1, "thoracic-surgical-opinion": 2 };
