// Settings of the travel note: a group of the settings registry, defaults with their sources.
// Read them with readTravelSettings (lib/settings-registry.ts); this file only defines the group.
import { z } from "zod";
import { flyingDefaults, maxCabinAltitudeFeet } from "@/measure";
import type { SettingGroup } from "@/lib/settings-registry";

const days = (label: string) =>
  z.number({ message: `${label}: enter a number` }).int(`${label}: whole days`).min(0, `${label}: at least 0 days`).max(90, `${label}: at most 90 days`);

const schema = z
  .object({
    daysAfterResolution: days("Days after resolution"),
    daysAfterTraumatic: days("Days after a traumatic pneumothorax"),
    cabinAltitudeFeet: z
      .number({ message: "Cabin altitude: enter a number" })
      .int("Cabin altitude: whole feet")
      .min(0, "Cabin altitude: at least 0 ft")
      .max(10000, "Cabin altitude: at most 10,000 ft"),
  })
  .strict();
export type TravelSettings = z.output<typeof schema>;

export const travelGroup: SettingGroup<typeof schema> = {
  key: "travelNote",
  title: "Travel note",
  description: "The flying advice printed on the travel note: how long after a film confirms resolution, and the cabin altitude used for gas expansion.",
  schema,
  defaults: {
    daysAfterResolution: flyingDefaults.daysAfterResolution,
    daysAfterTraumatic: flyingDefaults.daysAfterTraumatic,
    cabinAltitudeFeet: maxCabinAltitudeFeet,
  },
  fields: {
    daysAfterResolution: { label: "Fly no sooner than, after a film confirms resolution", unit: "days", step: 1, source: "BTS air travel recommendations, Ahmedzai S et al., Thorax 2011;66 Suppl 1 (7 days)", basis: "published" },
    daysAfterTraumatic: { label: "After a traumatic pneumothorax", unit: "days", step: 1, source: "BTS air travel recommendations, Ahmedzai S et al., Thorax 2011;66 Suppl 1 (14 days)", basis: "published" },
    cabinAltitudeFeet: { label: "Cabin pressure altitude", unit: "ft", step: 500, source: "14 CFR 25.841: cabin altitude at most 8,000 ft in normal operation", basis: "from memory" },
  },
};
