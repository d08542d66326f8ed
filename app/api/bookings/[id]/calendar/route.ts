// GET: the booking as a calendar file (.ics), for the nurse to save or hand on.
import { apiRoute } from "@/lib/api";
import { db } from "@/db/knex";
import { getBooking } from "@/db/bookings";
import { bookingIcs } from "@/lib/mail/ics";
import { uuid } from "@/lib/validation/common";

export const GET = apiRoute<{ id: string }>("booking.read", async ({ user, params }) => {
  const b = await getBooking(db(), user.teamId, uuid.parse(params.id));
  const team = await db()("teams").where({ id: user.teamId }).first<{ name: string; hospital: string } | undefined>("name", "hospital");
  const ics = bookingIcs({
    bookingId: b.id,
    version: b.version,
    scheduledAt: b.scheduled_at,
    durationMinutes: 30,
    title: b.kind === "repeat-film" ? "Follow-up chest X-ray" : "Follow-up clinic appointment",
    location: b.location ?? team?.hospital ?? "",
    description: team ? `${team.name}, ${team.hospital}` : "",
    cancelled: b.state === "cancelled",
  });
  return new Response(ics, {
    headers: {
      "Content-Type": "text/calendar; charset=utf-8",
      "Content-Disposition": `attachment; filename="appointment-${b.scheduled_at.toISOString().slice(0, 10)}.ics"`,
      "Cache-Control": "private, no-store",
    },
  });
});
