// Plain words for stored tags, shared by the letter, the CSV files and the FHIR bundle.
import type { SpacingSource } from "@/measure";

const SPACING_WORDS: Record<SpacingSource, string> = {
  "imager-pixel-spacing": "Imager Pixel Spacing (0018,1164)",
  "pixel-spacing-uncorrected": "Pixel Spacing (0028,0030), equal to Imager Pixel Spacing, so uncorrected",
  "pixel-spacing-unverified": "Pixel Spacing (0028,0030), correction status unknown",
  "nominal-scanned-pixel-spacing": "Nominal Scanned Pixel Spacing (0018,2010) of a digitised film",
  "pixel-spacing-calibrated": "calibrated Pixel Spacing (0028,0030)",
  "imager-spacing/ermf": "Imager Pixel Spacing divided by the Estimated Radiographic Magnification Factor",
  "imager-spacing*sod/sid": "Imager Pixel Spacing scaled by source-to-patient over source-to-detector distance",
  "reference-line": "a reference line of known length drawn on the film",
};

/** "detector (film) plane, from Imager Pixel Spacing (0018,1164)", or the no-calibration words. */
export function calibrationWords(plane: string | null, source: string | null): string {
  if (!source || plane === "none" || plane === null) return "no calibration: Light index only";
  const where = plane === "film" ? "detector (film) plane" : plane === "patient" ? "patient plane" : plane;
  const how = source in SPACING_WORDS ? SPACING_WORDS[source as SpacingSource] : source;
  return `${where}, from ${how}`;
}

export const METHOD_WORDS = {
  light: "Light index: 100 x (1 - L^3 / H^3), widths at the level of the hilum (Light RW, Pleural Diseases)",
  rhea: "Rhea nomogram from the average interpleural distance (Rhea JT et al., Radiology 1982;144:733)",
  collins: "Collins: 4.2 + 4.7 x (A + B + C), interpleural distances in cm (Collins CD et al., AJR 1995;165:1127)",
  hilum: "Interpleural distance at the level of the hilum (MacDuff A et al., BTS guideline, Thorax 2010;65 Suppl 2)",
  apex: "Lung apex to thoracic cupola (Baumann MH et al., ACCP consensus, Chest 2001;119:590)",
} as const;

export const CAUTION_WORDS = [
  "Estimates support, and never replace, clinical judgement and local protocols; management follows symptoms and is decided by a licensed clinician who has seen the patient.",
  "Size figures from plain films are approximate: plain films correlate with CT volume only moderately (r = 0.71, Engdahl O et al., Chest 1993;103:26) and the PA film underestimates size (BTS 2010).",
  "Supine and AP films, loculated or adherent air and bullous lungs make every method unreliable; compare only films of the same projection and position.",
  "The methods differ systematically (a 2 cm rim is about 32 % by Collins and 49 % by Light): compare figures of one method only.",
] as const;
