// PATCH: move, cancel, mark attended or mark missed one booking (optimistic version).
// A move or a cancellation records the patient's message; a missed film re-runs the deviation rules.
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { changeBooking, getBooking } from "@/db/bookings";
import { enqueueMail } from "@/lib/jobs/queue";
import { bookingPatch } from "@/lib/validation/bookings";
import { uuid } from "@/lib/validation/common";

export const GET = apiRoute<{ id: string }>("booking.read", async ({ user, params }) => {
  const booking = await getBooking(db(), user.teamId, uuid.parse(params.id));
  return { booking };
});

export const PATCH = apiRoute<{ id: string }>("booking.write", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const patch = await parseJson(req, bookingPatch);
  const { booking, message, flags } = await db().transaction((trx) => changeBooking(trx, user, id, patch, new Date()));
  if (message?.status === "queued") await enqueueMail([message.id]);
  return {
    booking,
    message: message ? { id: message.id, status: message.status, recipient: message.recipient, reason: message.last_error } : null,
    flagsRaised: flags ? flags.raised.map((f) => ({ id: f.id, rule: f.rule })) : [],
  };
});
