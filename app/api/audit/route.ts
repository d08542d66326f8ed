// GET: the audit log, newest first, optionally for one record.
import { z } from "zod";
import { apiRoute, parseQuery } from "@/lib/api";
import { db } from "@/db/knex";
import { listAudit } from "@/db/audit";
import { paging } from "@/lib/validation/common";

const query = paging.extend({ entity: z.string().max(40).optional(), entityId: z.string().max(80).optional() });

export const GET = apiRoute("audit.read", async ({ req, user }) => {
  const q = parseQuery(req, query);
  return listAudit(db(), { teamId: user.teamId, entity: q.entity, entityId: q.entityId, limit: q.pageSize, offset: (q.page - 1) * q.pageSize });
});
