// The episode's chest drains: the record of each drain, its observation log, and the drain rules'
// prompts where they apply (size for the indication, persistent air leak, no swing).
import { db } from "@/db/knex";
import { listEpisodeDrains } from "@/db/drains";
import { can } from "@/lib/auth/permissions";
import { reExpansionSource, reExpansionText } from "@/lib/drains/assess";
import { readDrainSettings } from "@/lib/settings-registry";
import { DrainsPanel, type DrainView } from "./drains-client";
import type { SectionProps } from "./types";

export async function DrainsSection({ episode, user }: SectionProps) {
  const settings = await readDrainSettings(db(), user.teamId);
  const drains = await listEpisodeDrains(db(), user.teamId, episode.id, settings);
  const views: DrainView[] = drains.map((d) => ({
    id: d.id,
    insertedAt: d.inserted_at.toISOString(),
    insertedBy: d.inserted_by,
    sizeFr: d.size_fr,
    site: d.site,
    technique: d.technique,
    indication: d.indication,
    drainage: d.drainage,
    suctionOn: d.suction_on,
    suctionKpa: d.suction_kpa,
    removedAt: d.removed_at?.toISOString() ?? null,
    removalReason: d.removal_reason,
    observations: d.observations.map((o) => ({
      id: o.id,
      observedAt: o.observed_at.toISOString(),
      swinging: o.swinging,
      bubbling: o.bubbling,
      fluidMl: o.fluid_ml,
      note: o.note,
      recordedBy: o.recorded_by_name ?? null,
    })),
    size: { verdict: d.assessment.size.verdict, reason: d.assessment.size.reason, notes: d.assessment.size.notes, source: d.assessment.size.source },
    airLeak: {
      advice: d.assessment.airLeak.advice,
      bubblingForHours: d.assessment.bubblingForHours,
      reason: d.assessment.airLeak.reason,
      source: d.assessment.airLeak.source,
    },
    check: { prompt: d.assessment.check.prompt, reason: d.assessment.check.reason, source: d.assessment.check.source },
    lung: d.assessment.lung,
  }));
  return (
    <DrainsPanel
      episodeId={episode.id}
      canWrite={can(user.role, "drain.write")}
      drains={views}
      thresholds={{ specialistAfterHours: settings.specialistAfterHours, surgicalOpinionAfterHours: settings.surgicalOpinionAfterHours }}
      reExpansion={{ text: reExpansionText(settings), source: reExpansionSource }}
    />
  );
}
