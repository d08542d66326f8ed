import type { CurrentUser } from "@/lib/auth/session";

// The role-specific panels of the start page (films to measure, flags to review, bookings to make).
// Each domain adds its panel here.
export async function TodayPanels(_props: { user: CurrentUser }) {
  return null;
}
