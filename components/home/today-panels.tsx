import type { CurrentUser } from "@/lib/auth/session";
import { ConsultantPanel } from "./consultant-panel";
import { NursePanel } from "./nurse-panel";

// The role-specific panels of the start page (films to measure, flags to review, bookings to make).
// Each domain adds its panel here.
export async function TodayPanels({ user }: { user: CurrentUser }) {
  return (
    <>
      <ConsultantPanel user={user} />
      <NursePanel user={user} />
    </>
  );
}
