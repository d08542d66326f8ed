import type { SectionProps } from "./types";

// Placeholder until this part of the episode page is built.
export async function DrainsSection(_props: SectionProps) {
  return null;
}
