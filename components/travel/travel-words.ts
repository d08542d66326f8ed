// Plain-language sentences of the travel note, shared by the printable note and the episode section.
import type { TravelFigures } from "@/lib/travel/figures";
import { formatDate } from "@/lib/format";

const METHOD = { collins: "Collins method", light: "Light index", rhea: "Rhea method" } as const;

export const factorWords = (f: number) => `×${f.toFixed(2)}`;

export function flyingHeadline(f: TravelFigures["flying"], resolvedOn: string | null): string {
  switch (f.state) {
    case "reasonable":
      return `Flying has been reasonable since ${formatDate(f.earliestOn)}.`;
    case "from-date":
      return `Flying is reasonable from ${formatDate(f.earliestOn)}: ${f.waitDays} days after the chest X-ray of ${formatDate(resolvedOn)} that showed the lung fully re-expanded.`;
    case "not-yet":
      return "Please do not fly yet. Flying is reasonable only after a chest X-ray has shown that the air around the lung has gone.";
  }
}

export function remainingGasWords(g: NonNullable<TravelFigures["remainingGas"]>, factor: number): string {
  return `On your last measured chest X-ray (${formatDate(g.filmOn)}) the air took up about ${g.percent.toFixed(0)} % of that side of the chest (${METHOD[g.method]}). In an aircraft cabin that air would try to grow by ${factorWords(factor)}, to about ${g.expandedPercent.toFixed(0)} %, pressing on the lung and the heart.`;
}
