// Downloads of identifiable records are written to the audit log (who took what, when).
import "server-only";
import { db } from "@/db/knex";
import { writeAudit } from "@/db/audit";
import type { Actor } from "@/db/types";

/** Letter and FHIR name the episode (already checked to be the team's); CSV files record their filter. */
export async function auditExport(actor: Actor, action: "export.letter" | "export.fhir" | "export.episodes-csv" | "export.measurements-csv", episodeId: string | null, after: Record<string, unknown>): Promise<void> {
  await writeAudit(db(), { actorId: actor.id, teamId: actor.teamId, action, entity: episodeId ? "episode" : "export", entityId: episodeId, after });
}
