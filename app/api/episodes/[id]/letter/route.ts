// GET: the episode letter as a PDF (patient, episode, measurements, resorption chart, plan, bookings, travel advice, cautions).
import { apiRoute } from "@/lib/api";
import { db } from "@/db/knex";
import { uuid } from "@/lib/validation/common";
import { loadEpisodeExport } from "@/lib/exports/episode-data";
import { renderEpisodeLetter } from "@/lib/exports/letter";
import { auditExport } from "@/lib/exports/audit";

export const GET = apiRoute<{ id: string }>("export.read", async ({ user, params }) => {
  const id = uuid.parse(params.id);
  const now = new Date();
  const data = await loadEpisodeExport(db(), user.teamId, id, now);
  const pdf = await renderEpisodeLetter(data, { now, preparedBy: user.name });
  await auditExport(user, "export.letter", id, { bytes: pdf.length, measurements: data.measurements.length });
  const filename = `rimwatch-letter-${data.patient.hospital_number.replace(/[^A-Za-z0-9-]/g, "")}-${now.toISOString().slice(0, 10)}.pdf`;
  return new Response(new Uint8Array(pdf), {
    headers: { "Content-Type": "application/pdf", "Content-Disposition": `attachment; filename="${filename}"`, "Cache-Control": "private, no-store" },
  });
});
