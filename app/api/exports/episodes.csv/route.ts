// GET: the team's episodes as CSV for clinical audit (?from=&to= presentation dates, ?status=, ?episodeId=); no free-text notes.
import { apiRoute, parseQuery } from "@/lib/api";
import { db } from "@/db/knex";
import { episodesCsv, exportFilter } from "@/lib/exports/audit-csv";
import { csvResponse } from "@/lib/exports/csv";
import { auditExport } from "@/lib/exports/audit";

export const GET = apiRoute("export.read", async ({ req, user }) => {
  const filter = parseQuery(req, exportFilter);
  const csv = await episodesCsv(db(), user.teamId, filter);
  await auditExport(user, "export.episodes-csv", null, { filter, rows: csv.split("\r\n").length - 2 });
  return csvResponse(csv, `rimwatch-episodes-${new Date().toISOString().slice(0, 10)}.csv`);
});
