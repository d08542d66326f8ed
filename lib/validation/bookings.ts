import { z } from "zod";
import { isoDate, isoDateTime, optionalText, paging, uuid } from "./common";

export const BOOKING_KINDS = ["repeat-film", "clinic"] as const;
export const BOOKING_SOURCES = ["protocol", "flag", "manual"] as const;
export const BOOKING_STATES = ["booked", "attended", "missed", "cancelled"] as const;
export type BookingState = (typeof BOOKING_STATES)[number];

export const BOOKING_KIND_LABELS: Record<(typeof BOOKING_KINDS)[number], string> = {
  "repeat-film": "Repeat chest film",
  clinic: "Clinic visit",
};

const location = z.string().trim().min(2, "Say where the patient should go").max(200, "At most 200 characters");

/** POST /api/bookings: book one appointment, usually from a proposal of the follow-up diary. */
export const bookingCreate = z.object({
  episodeId: uuid,
  kind: z.enum(BOOKING_KINDS).default("repeat-film"),
  source: z.enum(BOOKING_SOURCES).default("manual"),
  flagId: uuid.nullable().optional(),
  reason: optionalText(300),
  dueOn: isoDate.nullable().optional(),
  scheduledAt: isoDateTime,
  location,
});
export type BookingCreate = z.output<typeof bookingCreate>;

const version = z.number({ message: "The booking version is missing" }).int().min(1);

/** PATCH /api/bookings/[id]: one of four changes, each against the version the nurse saw. */
export const bookingPatch = z.discriminatedUnion(
  "action",
  [
    z.object({ action: z.literal("move"), version, scheduledAt: isoDateTime, location: location.optional() }),
    z.object({ action: z.literal("cancel"), version, reason: optionalText(300) }),
    z.object({ action: z.literal("attended"), version }),
    z.object({ action: z.literal("missed"), version }),
  ],
  { message: "Choose move, cancel, attended or missed" },
);
export type BookingPatch = z.output<typeof bookingPatch>;

export const MESSAGE_STATUSES = ["queued", "sent", "failed", "skipped"] as const;
export type MessageStatus = (typeof MESSAGE_STATUSES)[number];

export const messageListQuery = paging.extend({
  status: z.enum(MESSAGE_STATUSES).optional(),
  bookingId: uuid.optional(),
  episodeId: uuid.optional(),
});
export type MessageListQuery = z.output<typeof messageListQuery>;
