import Link from "next/link";
import { can } from "@/lib/auth/permissions";
import { db } from "@/db/knex";
import { getEpisodeDiary } from "@/db/bookings";
import { Card } from "@/components/ui/card";
import { EpisodeBookings } from "@/components/diary/episode-bookings";
import type { SectionProps } from "./types";

/** The episode's repeat films: what is proposed, what is booked, and what became of each e-mail. */
export async function BookingsSection({ episode, patient, user }: SectionProps) {
  if (!can(user.role, "booking.read")) return null;
  const diary = await getEpisodeDiary(db(), user.teamId, episode.id, new Date());
  return (
    <Card title="Repeat films" action={<Link href="/diary" className="text-sm text-estuary-700 underline">Follow-up diary</Link>}>
      <EpisodeBookings
        episodeId={episode.id}
        patientName={`${patient.family_name}, ${patient.given_name}`}
        proposals={diary.proposals}
        bookings={diary.bookings}
        today={diary.today}
        timeZone={diary.timeZone}
        defaultLocation={diary.defaultLocation}
        canWrite={can(user.role, "booking.write")}
      />
    </Card>
  );
}
