/**
 * Benchmark: the follow-up diary's pure work at hospital-group scale, against a floor measured in
 * the same run. (1) Booking proposals for 10,000 active episodes; floor: a structured clone of the
 * same inputs (touching every input once). (2) Reminders due among 100,000 bookings; floor: one
 * filter pass reading the same fields. Prints figures and ratios; asserts nothing.
 *
 * Run: npx tsx bench/diary.ts   (writes bench/results/diary.json)
 */
import { mkdirSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { proposeBookings, type ProposalInputs } from "../lib/followup/proposals";
import { dueReminders, type ReminderCandidate } from "../lib/jobs/reminders";
import { addDays } from "../lib/clinic-time";
import type { FollowUpProtocol } from "../lib/settings-registry";

const EPISODES = Number(process.env.BENCH_EPISODES ?? 10_000);
const BOOKINGS = Number(process.env.BENCH_BOOKINGS ?? 100_000);
const RUNS = Number(process.env.BENCH_RUNS ?? 7);
const today = "2026-12-02";

const protocols: FollowUpProtocol[] = [
  { key: "observation", label: "Observation", repeatFilmAfterDays: 14, anchor: "discharge", source: "BTS 2010" },
  { key: "aspiration", label: "After aspiration", repeatFilmAfterDays: 14, anchor: "aspiration", source: "BTS 2010" },
  { key: "drain", label: "After drain removal", repeatFilmAfterDays: 14, anchor: "drain-removal", source: "BTS 2010" },
  { key: "early", label: "Early check", repeatFilmAfterDays: 2, anchor: "presentation", source: "common practice" },
];
const managements = ["observation", "needle-aspiration", "chest-drain", "ambulatory-valve", "surgery"] as const;
const rules = ["overdue", "slower-than-expected", "methods-disagree", "unresolved-by-prediction"];

// Invented episodes: a spread of managements, anchors, flags and earlier bookings (deterministic).
function episodes(n: number): ProposalInputs[] {
  const out: ProposalInputs[] = [];
  for (let i = 0; i < n; i++) {
    const presented = addDays(today, -(i % 40));
    out.push({
      episode: { id: `e${i}`, status: "active", management: managements[i % 5]!, presentedOn: presented, dischargedOn: i % 3 ? addDays(presented, 1) : null, followUpProtocol: i % 11 === 0 ? "early" : null },
      protocols,
      aspirationOn: i % 5 === 1 ? addDays(presented, 0) : null,
      drainRemovedOn: i % 5 === 2 ? addDays(presented, 3) : null,
      drainInPlace: i % 17 === 0,
      lastFilmOn: addDays(presented, i % 9),
      predictedResolutionOn: i % 2 ? addDays(presented, 10 + (i % 30)) : null,
      openFlags: i % 7 === 0 ? [{ id: `f${i}`, rule: rules[i % 4]! }] : [],
      bookings: i % 4 === 0 ? [{ id: `b${i}`, kind: "repeat-film", source: "protocol", state: i % 8 === 0 ? "missed" : "booked", scheduledOn: addDays(today, (i % 10) - 3), version: 1 }] : [],
      today,
    });
  }
  return out;
}

function bookings(n: number): ReminderCandidate[] {
  const t0 = Date.UTC(2026, 11, 2, 9, 0);
  const states = ["booked", "booked", "booked", "attended", "missed", "cancelled"] as const;
  return Array.from({ length: n }, (_, i) => ({
    bookingId: `b${i}`,
    state: states[i % 6]!,
    scheduledAt: new Date(t0 + ((i * 7919) % (14 * 24 * 60)) * 60_000),
    confirmedAt: new Date(t0 - ((i * 104729) % (10 * 24 * 60)) * 60_000),
  }));
}

function time(fn: () => unknown): number {
  const t = process.hrtime.bigint();
  fn();
  return Number(process.hrtime.bigint() - t) / 1e6;
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)]!;
}

function measure(label: string, work: () => unknown, floor: () => unknown, items: number) {
  for (let i = 0; i < 2; i++) { work(); floor(); }
  const w: number[] = [];
  const f: number[] = [];
  for (let i = 0; i < RUNS; i++) { f.push(time(floor)); w.push(time(work)); }
  const res = { label, items, workMs: median(w), floorMs: median(f), perItemUs: (median(w) * 1000) / items, ratio: median(w) / median(f) };
  console.log(`${label}: ${items} items, ${res.workMs.toFixed(1)} ms (${res.perItemUs.toFixed(2)} us each); floor ${res.floorMs.toFixed(1)} ms; ratio ${res.ratio.toFixed(2)}`);
  return res;
}

const eps = episodes(EPISODES);
const bks = bookings(BOOKINGS);
const now = new Date(Date.UTC(2026, 11, 3, 9, 0));
let proposals = 0;
const results = [
  measure("proposals", () => { proposals = 0; for (const e of eps) proposals += proposeBookings(e).length; }, () => structuredClone(eps), EPISODES),
  measure("reminders due", () => dueReminders(bks, now, 48), () => bks.filter((b) => b.state === "booked" && b.scheduledAt.getTime() > 0 && b.confirmedAt.getTime() > 0), BOOKINGS),
];
console.log(`(${proposals} proposals for ${EPISODES} episodes; median of ${RUNS} runs)`);
mkdirSync(join(process.cwd(), "bench", "results"), { recursive: true });
writeFileSync(join(process.cwd(), "bench", "results", "diary.json"), JSON.stringify({ at: new Date().toISOString(), results }, null, 2));
