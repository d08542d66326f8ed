// The travel note's figures: when flying becomes reasonable, how much any remaining pleural gas would
// expand at cabin altitude, and the diving advice. `travelFigures` is pure (dates and `today` passed
// in) and only composes measure/'s functions; `getTravelFigures` gathers the episode's facts.
import {
  cabinPressureKPa,
  feetToMetres,
  flyingClearanceDate,
  flyingDefaults,
  gasExpansionFactor,
  standardAtmosphere,
  waterVapourAt37CKPa,
} from "@/measure";

export interface TravelSettingsInput {
  daysAfterResolution: number;
  daysAfterTraumatic: number;
  cabinAltitudeFeet: number;
}

export interface TravelInput {
  aetiology: "primary-spontaneous" | "secondary-spontaneous" | "iatrogenic" | "traumatic";
  /** Date of the film that confirmed resolution (episodes.resolved_on). */
  resolvedOn: string | null;
  /** Latest measured size of the primary method, with its film date. */
  latest: { percent: number; method: "collins" | "light" | "rhea"; filmOn: string } | null;
  /** The resorption chart's predicted resolution date. */
  predictedResolutionOn: string | null;
  today: string;
  settings: TravelSettingsInput;
}

export type FlyingState =
  /** Resolution confirmed and the waiting days are over. */
  | "reasonable"
  /** Resolution confirmed; flying is reasonable from a date still ahead. */
  | "from-date"
  /** No film has confirmed resolution yet: do not fly. */
  | "not-yet";

export interface TravelFigures {
  cabin: {
    altitudeFeet: number;
    altitudeMetres: number;
    seaLevelKPa: number;
    pressureKPa: number;
    /** Dry gas, Boyle's law. */
    expansionFactor: number;
    /** Gas saturated with water vapour at 37 C (6.28 kPa): slightly more. */
    expansionFactorBodyGas: number;
    source: string;
  };
  flying: {
    state: FlyingState;
    traumatic: boolean;
    waitDays: number;
    /** Earliest date flying is reasonable (confirmed), or the earliest it could be if resolution comes as predicted. */
    earliestOn: string | null;
    /** True when earliestOn rests on a prediction, not a film. */
    estimated: boolean;
    source: string;
  };
  remainingGas: {
    method: "collins" | "light" | "rhea";
    percent: number;
    filmOn: string;
    /** The same gas at cabin altitude, percent of the hemithorax (capped at 100). */
    expandedPercent: number;
  } | null;
  diving: { advice: string; source: string };
}

export const DIVING_SOURCE = "British Thoracic Society Fitness to Dive Group, Thorax 2003;58:3-13";
export const CABIN_SOURCE = `${standardAtmosphere.source}; cabin altitude 14 CFR 25.841 (from memory); Boyle's law`;

const round = (v: number, digits: number) => Math.round(v * 10 ** digits) / 10 ** digits;

export function travelFigures(i: TravelInput): TravelFigures {
  const metres = feetToMetres(i.settings.cabinAltitudeFeet);
  const pressure = cabinPressureKPa(metres);
  const sea = standardAtmosphere.seaLevelPressureKPa;
  const factor = gasExpansionFactor(sea, pressure);
  const bodyFactor = gasExpansionFactor(sea, pressure, { waterVapourKPa: waterVapourAt37CKPa });

  const traumatic = i.aetiology === "traumatic";
  const waitDays = traumatic ? i.settings.daysAfterTraumatic : i.settings.daysAfterResolution;
  const clearance = (from: string) =>
    flyingClearanceDate(from, { traumatic, daysAfterResolution: i.settings.daysAfterResolution, daysAfterTraumatic: i.settings.daysAfterTraumatic });
  let flying: TravelFigures["flying"];
  if (i.resolvedOn) {
    const on = clearance(i.resolvedOn);
    flying = { state: on <= i.today ? "reasonable" : "from-date", traumatic, waitDays, earliestOn: on, estimated: false, source: flyingDefaults.source };
  } else {
    const predicted = i.predictedResolutionOn && i.predictedResolutionOn >= i.today ? i.predictedResolutionOn : null;
    flying = { state: "not-yet", traumatic, waitDays, earliestOn: predicted ? clearance(predicted) : null, estimated: predicted !== null, source: flyingDefaults.source };
  }

  const remainingGas =
    i.latest && !i.resolvedOn && i.latest.percent > 0
      ? {
          method: i.latest.method,
          percent: i.latest.percent,
          filmOn: i.latest.filmOn,
          expandedPercent: Math.min(100, round(i.latest.percent * factor, 1)),
        }
      : null;

  return {
    cabin: {
      altitudeFeet: i.settings.cabinAltitudeFeet,
      altitudeMetres: round(metres, 1),
      seaLevelKPa: sea,
      pressureKPa: round(pressure, 2),
      expansionFactor: round(factor, 3),
      expansionFactorBodyGas: round(bodyFactor, 3),
      source: CABIN_SOURCE,
    },
    flying,
    remainingGas,
    diving: {
      advice:
        "Do not dive with compressed air (scuba) after a pneumothorax, unless both lungs have been treated by surgery to the pleura (bilateral surgical pleurectomy) and a specialist has confirmed fitness to dive.",
      source: DIVING_SOURCE,
    },
  };
}
