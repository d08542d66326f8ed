// GET: every version of the team's measurements as CSV for clinical audit (same filters as episodes.csv); no free-text reasons.
import { apiRoute, parseQuery } from "@/lib/api";
import { db } from "@/db/knex";
import { exportFilter, measurementsCsv } from "@/lib/exports/audit-csv";
import { csvResponse } from "@/lib/exports/csv";
import { auditExport } from "@/lib/exports/audit";

export const GET = apiRoute("export.read", async ({ req, user }) => {
  const filter = parseQuery(req, exportFilter);
  const csv = await measurementsCsv(db(), user.teamId, filter);
  await auditExport(user, "export.measurements-csv", null, { filter, rows: csv.split("\r\n").length - 2 });
  return csvResponse(csv, `rimwatch-measurements-${new Date().toISOString().slice(0, 10)}.csv`);
});
