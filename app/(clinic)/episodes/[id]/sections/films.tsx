import type { SectionProps } from "./types";

// Placeholder until this part of the episode page is built.
export async function FilmsSection(_props: SectionProps) {
  return null;
}
