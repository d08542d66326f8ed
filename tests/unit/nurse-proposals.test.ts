// Booking proposals of the follow-up diary: protocol film, flags asking for an earlier film, a
// missed film, and a film to confirm resolution on the predicted date.
import { describe, expect, it } from "vitest";
import { proposeBookings, protocolFor, type ProposalInputs } from "@/lib/followup/proposals";
import type { FollowUpProtocol } from "@/lib/settings-registry";

// Invented protocols in the shape of the team's settings. Review 2-4 weeks after discharge, aspiration
// or drain removal: MacDuff A et al., BTS pleural disease guideline, Thorax 2010;65 Suppl 2.
const protocols: FollowUpProtocol[] = [
  { key: "observation", label: "Observation", repeatFilmAfterDays: 14, anchor: "discharge", source: "BTS 2010" },
  { key: "aspiration", label: "After aspiration", repeatFilmAfterDays: 14, anchor: "aspiration", source: "BTS 2010" },
  { key: "drain", label: "After drain removal", repeatFilmAfterDays: 14, anchor: "drain-removal", source: "BTS 2010" },
  { key: "early", label: "Early check", repeatFilmAfterDays: 2, anchor: "presentation", source: "common practice" },
];

const base: ProposalInputs = {
  episode: { id: "e1", status: "active", management: "observation", presentedOn: "2026-11-20", dischargedOn: "2026-11-21", followUpProtocol: null },
  protocols,
  aspirationOn: null,
  drainRemovedOn: null,
  drainInPlace: false,
  lastFilmOn: "2026-11-20",
  predictedResolutionOn: null,
  openFlags: [],
  bookings: [],
  today: "2026-12-01",
};

describe("protocol proposals", () => {
  it("proposes the repeat film 14 days after discharge for an observed episode", () => {
    // BTS 2010: review at 2-4 weeks; 2026-11-21 + 14 days = 2026-12-05
    const [p, ...rest] = proposeBookings(base);
    expect(rest).toHaveLength(0);
    expect(p).toMatchObject({ kind: "protocol", source: "protocol", dueOn: "2026-12-05", proposedOn: "2026-12-05", late: false, moves: null });
    expect(p?.reason).toMatch(/counted from discharge on 21 Nov 2026/);
  });

  it("counts from presentation, and says so, when no discharge date is recorded", () => {
    // BTS 2010 anchor missing: 2026-11-20 + 14 days = 2026-12-04 (common practice: count from presentation)
    const [p] = proposeBookings({ ...base, episode: { ...base.episode, dischargedOn: null } });
    expect(p).toMatchObject({ dueOn: "2026-12-04" });
    expect(p?.reason).toMatch(/presentation on 20 Nov 2026, as no discharge date is recorded/);
  });

  it("anchors on the latest aspiration after needle aspiration", () => {
    // BTS 2010: repeat film 2-4 weeks after aspiration; 2026-11-22 + 14 = 2026-12-06
    const [p] = proposeBookings({ ...base, episode: { ...base.episode, management: "needle-aspiration" }, aspirationOn: "2026-11-22" });
    expect(p).toMatchObject({ kind: "protocol", dueOn: "2026-12-06" });
  });

  it("waits while a chest drain is still in", () => {
    // common practice: a patient with a drain in place is on the ward, not for an outpatient film
    expect(proposeBookings({ ...base, episode: { ...base.episode, management: "chest-drain" }, drainInPlace: true })).toEqual([]);
  });

  it("uses the protocol named on the episode over the one for its management", () => {
    // "early" protocol: 48 hours after presentation (common practice); 2026-11-20 + 2 = 2026-11-22, passed -> offered today
    const e = { ...base.episode, followUpProtocol: "early" };
    expect(protocolFor(e, protocols)?.key).toBe("early");
    const [p] = proposeBookings({ ...base, episode: e });
    expect(p).toMatchObject({ dueOn: "2026-11-22", proposedOn: "2026-12-01", late: true });
  });

  it("proposes nothing once a film has been taken around the protocol date", () => {
    // common practice: a film 3 days before the due date (2026-12-05) serves the protocol review
    expect(proposeBookings({ ...base, lastFilmOn: "2026-12-02" })).toEqual([]);
  });

  it("counts an attended booking near the protocol date as the protocol film", () => {
    // common practice: attended 2026-12-03, 2 days before the due 2026-12-05 (within the 3-day tolerance)
    const attended = { id: "b0", kind: "repeat-film" as const, source: "protocol" as const, state: "attended" as const, scheduledOn: "2026-12-03", version: 2 };
    expect(proposeBookings({ ...base, today: "2026-12-04", bookings: [attended] })).toEqual([]);
    // ...but not one a week early (2026-11-28 is before 2026-12-02)
    expect(proposeBookings({ ...base, bookings: [{ ...attended, scheduledOn: "2026-11-28" }] }).map((p) => p.kind)).toEqual(["protocol"]);
  });

  it("proposes nothing while a film is booked ahead, and nothing for a closed episode", () => {
    const booked = { id: "b1", kind: "repeat-film" as const, source: "protocol" as const, state: "booked" as const, scheduledOn: "2026-12-05", version: 1 };
    expect(proposeBookings({ ...base, bookings: [booked] })).toEqual([]);
    expect(proposeBookings({ ...base, episode: { ...base.episode, status: "resolved" } })).toEqual([]);
  });
});

describe("flag proposals", () => {
  const booked = { id: "b1", kind: "repeat-film" as const, source: "protocol" as const, state: "booked" as const, scheduledOn: "2026-12-05", version: 3 };

  it("slower than expected: an earlier film within 2 days, moving the later booking", () => {
    // earlier film within 2 days: common practice (a setting); 2026-12-01 + 2 = 2026-12-03 < booked 2026-12-05
    const [p, ...rest] = proposeBookings({ ...base, bookings: [booked], openFlags: [{ id: "f1", rule: "slower-than-expected" }] });
    expect(rest).toHaveLength(0);
    expect(p).toMatchObject({ kind: "flag", source: "flag", flagId: "f1", dueOn: "2026-12-03", moves: { bookingId: "b1", version: 3, scheduledOn: "2026-12-05" } });
  });

  it("a booking already early enough answers the flag", () => {
    // booked 2026-12-02, within 2 days of 2026-12-01 (common practice setting)
    expect(proposeBookings({ ...base, bookings: [{ ...booked, scheduledOn: "2026-12-02" }], openFlags: [{ id: "f1", rule: "slower-than-expected" }] })).toEqual([]);
  });

  it("overdue comes first, today, and names the other flags too", () => {
    // overdue: first free slot (common practice) -> today 2026-12-01
    const [p] = proposeBookings({ ...base, openFlags: [{ id: "f1", rule: "slower-than-expected" }, { id: "f2", rule: "overdue" }] });
    expect(p).toMatchObject({ flagId: "f2", dueOn: "2026-12-01", moves: null });
    expect(p?.reason).toMatch(/overdue/);
    expect(p?.reason).toMatch(/slower than expected/);
  });

  it("follows the setting for how soon the earlier film should be", () => {
    // earlierFilmWithinDays = 5 (a local setting): 2026-12-01 + 5 = 2026-12-06
    const ps = proposeBookings({ ...base, openFlags: [{ id: "f1", rule: "unresolved-by-prediction" }] }, { earlierFilmWithinDays: 5, protocolToleranceDays: 3, resolutionCheckGapDays: 3 });
    // the flag's film is the next film: the protocol film is not offered beside it
    expect(ps).toHaveLength(1);
    expect(ps[0]).toMatchObject({ kind: "flag", dueOn: "2026-12-06" });
  });

  it("ignores flags a booking cannot answer (methods disagree)", () => {
    // methods-disagree asks for the calipers to be checked, not a film (deviation board rules)
    const kinds = proposeBookings({ ...base, openFlags: [{ id: "f1", rule: "methods-disagree" }] }).map((p) => p.kind);
    expect(kinds).toEqual(["protocol"]);
  });
});

describe("missed films and resolution checks", () => {
  it("rebooks a missed film tomorrow instead of the protocol proposal", () => {
    // common practice: a missed film is rebooked promptly; 2026-12-01 + 1 = 2026-12-02
    const missed = { id: "b1", kind: "repeat-film" as const, source: "protocol" as const, state: "missed" as const, scheduledOn: "2026-11-29", version: 2 };
    const ps = proposeBookings({ ...base, bookings: [missed] });
    expect(ps.map((p) => p.kind)).toEqual(["rebook-missed"]);
    expect(ps[0]).toMatchObject({ dueOn: "2026-12-02", source: "protocol" });
  });

  it("waits for a past appointment to be marked attended or missed before proposing another", () => {
    // common practice: the diary lists it under missed until the nurse marks it
    const unmarked = { id: "b1", kind: "repeat-film" as const, source: "protocol" as const, state: "booked" as const, scheduledOn: "2026-11-29", version: 1 };
    expect(proposeBookings({ ...base, bookings: [unmarked] })).toEqual([]);
    // ...unless a flag asks for a film: overdue, today (common practice)
    expect(proposeBookings({ ...base, bookings: [unmarked], openFlags: [{ id: "f9", rule: "overdue" }] }).map((p) => [p.kind, p.dueOn])).toEqual([["flag", "2026-12-01"]]);
  });

  it("adds a film to confirm resolution when the prediction falls well after the protocol film", () => {
    // predicted resolution from 1.25 %/day (Kircher & Swartzel 1954) on 2026-12-20, 15 days after the protocol date
    const ps = proposeBookings({ ...base, predictedResolutionOn: "2026-12-20" });
    expect(ps.map((p) => [p.kind, p.dueOn])).toEqual([
      ["protocol", "2026-12-05"],
      ["resolution-check", "2026-12-20"],
    ]);
  });

  it("does not add a resolution check that coincides with the protocol film", () => {
    // 2 days apart, under the 3-day gap (common practice setting)
    expect(proposeBookings({ ...base, predictedResolutionOn: "2026-12-07" }).map((p) => p.kind)).toEqual(["protocol"]);
  });
});
