// GET: the follow-up diary's worklist (needing a booking, with proposals; coming days; missed).
// POST: book one appointment, usually a proposal; the confirmation is recorded with it and queued.
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { createBooking, getWorklist } from "@/db/bookings";
import { enqueueMail } from "@/lib/jobs/queue";
import { bookingCreate } from "@/lib/validation/bookings";

export const GET = apiRoute("booking.read", async ({ user }) => getWorklist(db(), user.teamId, new Date()));

export const POST = apiRoute("booking.write", async ({ req, user }) => {
  const input = await parseJson(req, bookingCreate);
  const { booking, message } = await db().transaction((trx) => createBooking(trx, user, input, new Date()));
  if (message?.status === "queued") await enqueueMail([message.id]);
  return Response.json(
    { booking, message: message ? { id: message.id, status: message.status, recipient: message.recipient, reason: message.last_error } : null },
    { status: 201 },
  );
});
