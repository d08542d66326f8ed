import type { CurrentUser } from "@/lib/auth/session";
import type { EpisodeRow } from "@/db/episodes";
import type { PatientRow } from "@/db/patients";

/** What every section of the episode page is given. */
export interface SectionProps {
  episode: EpisodeRow;
  patient: PatientRow;
  user: CurrentUser;
}
