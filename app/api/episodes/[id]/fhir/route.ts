// GET: the episode's current measurements as a FHIR R4 Bundle (collection) of Observations with their Patient.
import { apiRoute } from "@/lib/api";
import { db } from "@/db/knex";
import { uuid } from "@/lib/validation/common";
import { loadEpisodeExport } from "@/lib/exports/episode-data";
import { buildEpisodeBundle } from "@/lib/exports/fhir";
import { auditExport } from "@/lib/exports/audit";

export const GET = apiRoute<{ id: string }>("export.read", async ({ user, params }) => {
  const id = uuid.parse(params.id);
  const now = new Date();
  const data = await loadEpisodeExport(db(), user.teamId, id, now);
  const bundle = buildEpisodeBundle(data, now);
  await auditExport(user, "export.fhir", id, { observations: (bundle.entry?.length ?? 2) - 2 });
  const filename = `rimwatch-fhir-${data.patient.hospital_number.replace(/[^A-Za-z0-9-]/g, "")}-${now.toISOString().slice(0, 10)}.json`;
  return new Response(JSON.stringify(bundle, null, 2), {
    headers: { "Content-Type": "application/fhir+json; charset=utf-8", "Content-Disposition": `attachment; filename="${filename}"`, "Cache-Control": "private, no-store" },
  });
});
