// Settings of the drains section: a group of the settings registry, defaults with their sources.
// Read them with readDrainSettings (lib/settings-registry.ts); this file only defines the group.
import { z } from "zod";
import { airLeakDefaults } from "@/measure";
import type { SettingGroup } from "@/lib/settings-registry";
import { reExpansionSource } from "./assess";

const hours = (label: string) =>
  z.number({ message: `${label}: enter a number` }).int(`${label}: whole hours`).min(1, `${label}: at least 1 hour`).max(14 * 24, `${label}: at most 336 hours (14 days)`);
const positive = (label: string, max: number, unit: string) =>
  z.number({ message: `${label}: enter a number` }).finite(`${label}: enter a number`).gt(0, `${label}: more than 0 ${unit}`).max(max, `${label}: at most ${max} ${unit}`);

const schema = z
  .object({
    specialistAfterHours: hours("Persistent air leak after"),
    surgicalOpinionAfterHours: hours("Thoracic surgical opinion after"),
    reExpandedBelowCm: positive("Re-expanded below", 3, "cm"),
    reExpandedBelowLightPercent: positive("Re-expanded below (Light index)", 30, "%"),
  })
  .strict()
  .refine((v) => v.surgicalOpinionAfterHours >= v.specialistAfterHours, {
    path: ["surgicalOpinionAfterHours"],
    message: "Thoracic surgical opinion after: not before the persistent air leak threshold",
  });
export type DrainSettings = z.output<typeof schema>;


export const drainGroup: SettingGroup<typeof schema> = {
  key: "drainRules",
  title: "Chest drains",
  description:
    "When the drains section calls an air leak persistent (and raises its flag), and when it counts the lung as re-expanded on the latest measured film since the drain went in (for the prompt to check a drain that no longer swings).",
  schema,
  defaults: {
    specialistAfterHours: airLeakDefaults.specialistAfterHours,
    surgicalOpinionAfterHours: airLeakDefaults.surgicalOpinionAfterHours,
    reExpandedBelowCm: 0.5,
    reExpandedBelowLightPercent: 5,
  },
  fields: {
    specialistAfterHours: { label: "Persistent air leak (respiratory specialist) after bubbling for", unit: "hours", step: 1, source: airLeakDefaults.source, basis: "from memory" },
    surgicalOpinionAfterHours: { label: "Thoracic surgical opinion after bubbling for", unit: "hours", step: 1, source: airLeakDefaults.source, basis: "from memory" },
    reExpandedBelowCm: { label: "Lung re-expanded when every measured interpleural distance is under", unit: "cm", step: 0.1, source: reExpansionSource, basis: "suggestion" },
    reExpandedBelowLightPercent: { label: "or, on an uncalibrated film, the Light index is under", unit: "%", step: 1, source: reExpansionSource, basis: "suggestion" },
  },
};
