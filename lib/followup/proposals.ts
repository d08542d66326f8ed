// Booking proposals of the follow-up diary: when an episode's next film should be, and why.
// `proposeBookings` is pure (dates and `today` passed in); `loadProposalInputs` gathers its inputs.
import type { FollowUpProtocol } from "@/lib/settings-registry";
import { addDays, dateWords, daysBetween } from "@/lib/clinic-time";

export interface ProposalEpisode {
  id: string;
  status: "active" | "resolved" | "closed";
  management: "observation" | "needle-aspiration" | "chest-drain" | "ambulatory-valve" | "surgery";
  presentedOn: string;
  dischargedOn: string | null;
  followUpProtocol: string | null;
}

export interface ProposalBooking {
  id: string;
  kind: "repeat-film" | "clinic";
  source: "protocol" | "flag" | "manual";
  state: "booked" | "attended" | "missed" | "cancelled";
  /** Clinic date of the appointment. */
  scheduledOn: string;
  version: number;
}

export interface ProposalFlag {
  id: string;
  rule: string;
}

export interface ProposalInputs {
  episode: ProposalEpisode;
  protocols: readonly FollowUpProtocol[];
  /** Latest needle aspiration (YYYY-MM-DD), if any. */
  aspirationOn: string | null;
  /** Latest chest drain removal (YYYY-MM-DD), if any. */
  drainRemovedOn: string | null;
  /** A drain is still in: the patient is on the ward, not for an outpatient film. */
  drainInPlace: boolean;
  /** Date of the latest film of the episode. */
  lastFilmOn: string | null;
  /** The resorption chart's predicted resolution date, if there is one. */
  predictedResolutionOn: string | null;
  openFlags: readonly ProposalFlag[];
  bookings: readonly ProposalBooking[];
  /** Today at the clinic (YYYY-MM-DD). */
  today: string;
}

export interface ProposalSettings {
  /** Days within which an earlier film is proposed when resorption is slower than expected. */
  earlierFilmWithinDays: number;
  /** Films taken or attended up to this many days before a protocol date count as that film. */
  protocolToleranceDays: number;
  /** A film to confirm resolution is proposed only when the prediction is this many days past the protocol date. */
  resolutionCheckGapDays: number;
}

export const DEFAULT_PROPOSAL_SETTINGS: ProposalSettings = {
  earlierFilmWithinDays: 2, // common practice: a slower course is reviewed on a film within a couple of days
  protocolToleranceDays: 3, // common practice: a film a few days early serves the protocol review
  resolutionCheckGapDays: 3, // common practice
};

export type ProposalKind = "protocol" | "resolution-check" | "rebook-missed" | "flag";

export interface Proposal {
  /** Stable within one episode and day: the browser keys its rows by it. */
  key: string;
  kind: ProposalKind;
  bookingKind: "repeat-film";
  source: "protocol" | "flag" | "manual";
  flagId: string | null;
  /** When the film is due by the rule that proposes it. */
  dueOn: string;
  /** The date offered for booking: the due date, or today when that has passed. */
  proposedOn: string;
  /** Due date already passed. */
  late: boolean;
  reason: string;
  /** Where the rule comes from. */
  basis: string;
  /** For an earlier film when a later one is already booked: the booking to move instead of a second one. */
  moves: { bookingId: string; version: number; scheduledOn: string } | null;
}

/** Flags that the nurse answers with a film: how soon, in plain words, and what the rule rests on. */
const FLAG_RULES: Record<string, { withinDays: (s: ProposalSettings) => number; words: string; basis: string }> = {
  overdue: {
    withinDays: () => 0,
    words: "The planned film is overdue: book the first free slot.",
    basis: "Deviation board: overdue film",
  },
  "slower-than-expected": {
    withinDays: (s) => s.earlierFilmWithinDays,
    words: "Resorption is slower than expected: an earlier film lets the consultant review the course.",
    basis: "Deviation board: slower than expected (resorption 1.25 %/day, Kircher & Swartzel 1954)",
  },
  "unresolved-by-prediction": {
    withinDays: (s) => s.earlierFilmWithinDays,
    words: "Not yet marked resolved although resolution was predicted: a film to check.",
    basis: "Deviation board: unresolved by the predicted date",
  },
};
export const flagProposalRules = Object.keys(FLAG_RULES);

const MANAGEMENT_PROTOCOL: Record<ProposalEpisode["management"], string> = {
  observation: "observation",
  "needle-aspiration": "aspiration",
  "chest-drain": "drain",
  "ambulatory-valve": "drain",
  surgery: "observation",
};

/** The protocol an episode follows: the one named on the episode, else the one for its management. */
export function protocolFor(episode: ProposalEpisode, protocols: readonly FollowUpProtocol[]): FollowUpProtocol | null {
  const named = episode.followUpProtocol ? protocols.find((p) => p.key === episode.followUpProtocol) : undefined;
  return named ?? protocols.find((p) => p.key === MANAGEMENT_PROTOCOL[episode.management]) ?? null;
}

const maxDate = (a: string, b: string) => (a > b ? a : b);

function anchorOf(p: FollowUpProtocol, i: ProposalInputs): { on: string; words: string; fallback: boolean } | null {
  const e = i.episode;
  const presentation = { on: e.presentedOn, words: `presentation on ${dateWords(e.presentedOn)}`, fallback: false };
  switch (p.anchor) {
    case "presentation":
      return presentation;
    case "discharge":
      return e.dischargedOn
        ? { on: e.dischargedOn, words: `discharge on ${dateWords(e.dischargedOn)}`, fallback: false }
        : { ...presentation, words: `presentation on ${dateWords(e.presentedOn)}, as no discharge date is recorded`, fallback: true };
    case "aspiration":
      return i.aspirationOn
        ? { on: i.aspirationOn, words: `aspiration on ${dateWords(i.aspirationOn)}`, fallback: false }
        : { ...presentation, words: `presentation on ${dateWords(e.presentedOn)}, as no aspiration is recorded`, fallback: true };
    case "drain-removal":
      if (i.drainInPlace) return null;
      return i.drainRemovedOn
        ? { on: i.drainRemovedOn, words: `drain removal on ${dateWords(i.drainRemovedOn)}`, fallback: false }
        : { ...presentation, words: `presentation on ${dateWords(e.presentedOn)}, as no drain removal is recorded`, fallback: true };
  }
}

/**
 * Proposals for an episode's next booking, earliest first.
 * - Flags (overdue; slower than expected; unresolved by prediction) propose an earlier film, moving a
 *   later booked one rather than adding a second; that film is then the only proposal.
 * - Otherwise, when nothing is booked ahead and no past appointment waits to be marked attended or
 *   missed: a film missed without a new booking is rebooked; the
 *   protocol's film (anchor date + days; BTS 2010 reviews at 2-4 weeks) unless already taken; and a
 *   film to confirm resolution on the predicted date when that is clearly later.
 */
export function proposeBookings(i: ProposalInputs, settings: ProposalSettings = DEFAULT_PROPOSAL_SETTINGS): Proposal[] {
  if (i.episode.status !== "active") return [];
  const films = i.bookings.filter((b) => b.kind === "repeat-film");
  const ahead = films.filter((b) => b.state === "booked" && b.scheduledOn >= i.today).sort((a, b) => (a.scheduledOn < b.scheduledOn ? -1 : 1));
  const nextBooked = ahead[0] ?? null;
  const out: Proposal[] = [];
  const make = (p: Omit<Proposal, "proposedOn" | "late" | "bookingKind">): Proposal => ({
    ...p,
    bookingKind: "repeat-film",
    proposedOn: maxDate(p.dueOn, i.today),
    late: p.dueOn < i.today,
  });

  // Flags: one earlier film answers all of them; the most urgent rule names it.
  const flagged = i.openFlags
    .filter((f) => f.rule in FLAG_RULES)
    .map((f) => {
      const rule = FLAG_RULES[f.rule]!;
      return { flag: f, rule, dueOn: addDays(i.today, rule.withinDays(settings)) };
    })
    .sort((a, b) => (a.dueOn < b.dueOn ? -1 : a.dueOn > b.dueOn ? 1 : flagProposalRules.indexOf(a.flag.rule) - flagProposalRules.indexOf(b.flag.rule)));
  const first = flagged[0];
  if (first && !(nextBooked && nextBooked.scheduledOn <= first.dueOn)) {
    out.push(
      make({
        key: `flag:${first.flag.id}`,
        kind: "flag",
        source: "flag",
        flagId: first.flag.id,
        dueOn: first.dueOn,
        reason: [first.rule.words, ...flagged.slice(1).map((f) => f.rule.words)].join(" "),
        basis: first.rule.basis,
        moves: nextBooked ? { bookingId: nextBooked.id, version: nextBooked.version, scheduledOn: nextBooked.scheduledOn } : null,
      }),
    );
  }
  // An earlier film asked for by a flag is the next film: nothing else is proposed beside it.
  if (nextBooked || out.length > 0) return out;
  // A past appointment nobody has marked yet: mark it attended or missed first (it is listed under missed).
  if (films.some((b) => b.state === "booked" && b.scheduledOn < i.today)) return out;

  // A missed film with nothing booked since: rebook (unless a flag proposal already asks for a film).
  const latest = [...films].filter((b) => b.state !== "cancelled").sort((a, b) => (a.scheduledOn < b.scheduledOn ? 1 : -1))[0];
  if (latest?.state === "missed") {
    out.push(
      make({
        key: `missed:${latest.id}`,
        kind: "rebook-missed",
        source: latest.source,
        flagId: null,
        dueOn: addDays(i.today, 1),
        reason: `The film booked for ${dateWords(latest.scheduledOn)} was missed: book it again and let the patient know.`,
        basis: "Follow-up diary: missed film",
        moves: null,
      }),
    );
  }

  // The protocol's repeat film, unless a film or an attended booking already serves it.
  const protocol = protocolFor(i.episode, i.protocols);
  let protocolDue: string | null = null;
  if (protocol) {
    const anchor = anchorOf(protocol, i);
    if (anchor) {
      const due = addDays(anchor.on, protocol.repeatFilmAfterDays);
      const servedFrom = addDays(due, -settings.protocolToleranceDays);
      // Films and attended bookings after the anchor and at most a few days early serve the protocol.
      const serves = (on: string) => on > anchor.on && on >= servedFrom;
      const served = (i.lastFilmOn !== null && serves(i.lastFilmOn)) || films.some((b) => b.state === "attended" && serves(b.scheduledOn));
      if (!served) {
        protocolDue = due;
        if (!out.some((p) => p.kind === "rebook-missed")) {
          out.push(
            make({
              key: `protocol:${protocol.key}:${due}`,
              kind: "protocol",
              source: "protocol",
              flagId: null,
              dueOn: due,
              reason: `${protocol.label}; counted from ${anchor.words}.`,
              basis: protocol.source,
              moves: null,
            }),
          );
        }
      }
    }
  }

  // A film to confirm resolution when the prediction falls clearly after the protocol film.
  const predicted = i.predictedResolutionOn;
  if (predicted && predicted >= i.today) {
    const afterProtocol = protocolDue === null || daysBetween(protocolDue, predicted) >= settings.resolutionCheckGapDays;
    const alreadyFilmed = i.lastFilmOn !== null && i.lastFilmOn >= predicted;
    if (afterProtocol && !alreadyFilmed) {
      out.push(
        make({
          key: `resolution:${predicted}`,
          kind: "resolution-check",
          source: "manual",
          flagId: null,
          dueOn: predicted,
          reason: `A film to confirm resolution on the predicted date (${dateWords(predicted)}).`,
          basis: "Resorption chart: predicted resolution (1.25 %/day, Kircher & Swartzel 1954; x4 on oxygen, Northfield 1971)",
          moves: null,
        }),
      );
    }
  }

  return out.sort((a, b) => (a.proposedOn < b.proposedOn ? -1 : a.proposedOn > b.proposedOn ? 1 : 0));
}
