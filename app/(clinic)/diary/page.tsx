import type { Metadata } from "next";
import { requireUser } from "@/lib/auth/session";
import { can } from "@/lib/auth/permissions";
import { db } from "@/db/knex";
import { getWorklist } from "@/db/bookings";
import { PageTitle } from "@/components/ui/card";
import { DiaryClient } from "./diary-client";

export const metadata: Metadata = { title: "Follow-up diary" };

export default async function DiaryPage() {
  const user = await requireUser("booking.read");
  const worklist = await getWorklist(db(), user.teamId, new Date());
  return (
    <>
      <PageTitle title="Follow-up diary" subtitle="Repeat films to book, the coming days, and films that were missed." />
      <DiaryClient initial={worklist} canWrite={can(user.role, "booking.write")} />
    </>
  );
}
