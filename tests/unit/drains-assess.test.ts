import { describe, expect, it } from "vitest";
import { assessDrain, isBubbling, lungStateFrom as lungStateWith, reExpansionText, type ObservationFacts } from "../../lib/drains/assess";

// The drains settings' defaults (lib/drains/settings.ts): a Rimwatch suggestion, no published figure.
const DEFAULT_RE_EXPANSION = { reExpandedBelowCm: 0.5, reExpandedBelowLightPercent: 5 };
const lungStateFrom = (input: Parameters<typeof lungStateWith>[0]) => lungStateWith(input, DEFAULT_RE_EXPANSION);

const inserted = new Date("2026-11-02T08:00:00Z");
const at = (hours: number) => new Date(inserted.getTime() + hours * 3_600_000);
const airDrain = { insertedAt: inserted, removedAt: null, sizeFr: 12, indication: "air" as const };
const unknownLung = { reExpanded: null, reason: "no film" };
const obs = (hours: number, bubbling: ObservationFacts["bubbling"], swinging = true): ObservationFacts => ({ observedAt: at(hours), bubbling, swinging });

describe("drain size for the indication", () => {
  it("passes a 12 Fr drain for air and questions a 24 Fr one", () => {
    // small-bore 8-14 Fr for pneumothorax: MacDuff A et al., BTS guideline, Thorax 2010;65 Suppl 2
    expect(assessDrain(airDrain, [], unknownLung).size.verdict).toBe("within-guidance");
    expect(assessDrain({ ...airDrain, sizeFr: 24 }, [], unknownLung).size.verdict).toBe("larger-than-guidance");
  });

  it("questions a 12 Fr drain for an acute haemothorax", () => {
    // 28-32 Fr for acute haemothorax: ATLS 10th edition (American College of Surgeons)
    const a = assessDrain({ ...airDrain, indication: "blood" }, [], unknownLung);
    expect(a.size.verdict).toBe("smaller-than-guidance");
    expect(a.size.guidance).toMatch(/28-32 Fr/);
  });
});

describe("persistent air leak from the observation log", () => {
  it("counts every kind of bubbling as a leak, and none as none", () => {
    // any bubbling in the underwater seal is an air leak (BTS 2010, from memory)
    expect(isBubbling("on-coughing")).toBe(true);
    expect(isBubbling("on-expiration")).toBe(true);
    expect(isBubbling("continuous")).toBe(true);
    expect(isBubbling("none")).toBe(false);
  });

  it("is not persistent at 30 h of bubbling", () => {
    // persistent from 48 h: BTS 2010 (MacDuff A et al., Thorax 2010;65 Suppl 2), from memory
    const a = assessDrain(airDrain, [obs(4, "continuous"), obs(30, "on-expiration")], unknownLung);
    expect(a.airLeak.persistent).toBe(false);
    expect(a.bubblingForHours).toBe(30);
  });

  it("refers to a respiratory specialist at 49 h of continuous bubbling", () => {
    // 48 h -> respiratory specialist: BTS 2010, from memory
    const a = assessDrain(airDrain, [obs(12, "continuous"), obs(30, "continuous"), obs(49, "continuous")], unknownLung);
    expect(a.airLeak.advice).toBe("respiratory-specialist");
    expect(a.airLeak.bubblingForHours).toBe(49);
  });

  it("asks for a thoracic surgical opinion from 72 h (3 days)", () => {
    // thoracic surgical opinion at 3-5 days: BTS 2010, from memory
    const a = assessDrain(airDrain, [obs(24, "continuous"), obs(72, "continuous")], unknownLung);
    expect(a.airLeak.advice).toBe("thoracic-surgical-opinion");
  });

  it("restarts the clock after a bubble-free observation, whatever order the log arrives in", () => {
    // persistence means uninterrupted bubbling (BTS 2010, from memory): 60 h - 40 h = 20 h
    const a = assessDrain(airDrain, [obs(60, "continuous"), obs(10, "continuous"), obs(30, "none"), obs(40, "on-coughing")], unknownLung);
    expect(a.airLeak.persistent).toBe(false);
    expect(a.bubblingForHours).toBe(20);
  });
});

describe("no swing with the lung not re-expanded", () => {
  const notExpanded = lungStateFrom({ episodeResolved: false, latest: { takenAt: at(6), lightPercent: 30, hilumCm: 1.8, apexCm: 2.5, aidCm: 2.0 } });

  it("prompts a drain check when the last observation shows no swing", () => {
    // common practice: a drain that does not swing while the lung is down may be blocked, kinked or displaced
    expect(notExpanded.reExpanded).toBe(false);
    const a = assessDrain(airDrain, [obs(2, "none", true), obs(8, "none", false)], notExpanded);
    expect(a.check.prompt).toBe(true);
  });

  it("does not prompt when it swings again, or once the drain is out", () => {
    // common practice
    expect(assessDrain(airDrain, [obs(8, "none", false), obs(9, "none", true)], notExpanded).check.prompt).toBe(false);
    expect(assessDrain({ ...airDrain, removedAt: at(10) }, [obs(8, "none", false)], notExpanded).check.prompt).toBe(false);
  });

  it("does not prompt when the latest film shows the lung up", () => {
    // re-expansion rule: a Rimwatch suggestion (no published figure), below 0.5 cm everywhere
    const up = lungStateFrom({ episodeResolved: false, latest: { takenAt: at(20), lightPercent: null, hilumCm: 0.2, apexCm: 0.4, aidCm: 0.3 } });
    expect(up.reExpanded).toBe(true);
    expect(assessDrain(airDrain, [obs(21, "none", false)], up).check.prompt).toBe(false);
  });
});

describe("lung state from the latest film", () => {
  it("uses cm distances first, the Light index when uncalibrated, and says unknown without a film", () => {
    // thresholds: Rimwatch suggestion (no published figure), 0.5 cm and 5 % Light
    expect(reExpansionText(DEFAULT_RE_EXPANSION)).toContain("under 0.5 cm");
    expect(lungStateFrom({ episodeResolved: false, latest: null }).reExpanded).toBeNull();
    expect(lungStateFrom({ episodeResolved: true, latest: null }).reExpanded).toBe(true);
    expect(lungStateFrom({ episodeResolved: false, latest: { takenAt: at(5), lightPercent: 3, hilumCm: null, apexCm: null, aidCm: null } }).reExpanded).toBe(true);
    expect(lungStateFrom({ episodeResolved: false, latest: { takenAt: at(5), lightPercent: 12, hilumCm: null, apexCm: null, aidCm: null } }).reExpanded).toBe(false);
    // an apex rim of 0.6 cm is not re-expanded even if the hilum is clear (largest distance counts)
    expect(lungStateFrom({ episodeResolved: false, latest: { takenAt: at(5), lightPercent: 2, hilumCm: 0.1, apexCm: 0.6, aidCm: 0.3 } }).reExpanded).toBe(false);
  });
});
