import type { SectionProps } from "./types";

// Placeholder until this part of the episode page is built.
export async function ExportsSection(_props: SectionProps) {
  return null;
}
