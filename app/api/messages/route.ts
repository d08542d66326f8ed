// GET: one page of the team's send log (newest first), optionally by status, booking or episode.
import { apiRoute, parseQuery } from "@/lib/api";
import { db } from "@/db/knex";
import { listMessages } from "@/db/messages";
import { messageListQuery } from "@/lib/validation/bookings";

export const GET = apiRoute("message.read", async ({ req, user }) => {
  const q = parseQuery(req, messageListQuery);
  const { rows, total } = await listMessages(db(), user.teamId, q);
  return { rows, total, page: q.page, pageSize: q.pageSize };
});
