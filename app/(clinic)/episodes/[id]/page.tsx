import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { requireUser } from "@/lib/auth/session";
import { can } from "@/lib/auth/permissions";
import { db } from "@/db/knex";
import { getEpisode, listOxygenPeriods, listProcedures } from "@/db/episodes";
import { getPatient } from "@/db/patients";
import { isUuid, orNotFound } from "@/lib/pages";
import { ageOn, formatDate, sideLabel } from "@/lib/format";
import { AETIOLOGY_LABELS, MANAGEMENT_LABELS, METHOD_LABELS } from "@/lib/validation/episodes";
import { Card, PageTitle, Tag } from "@/components/ui/card";
import { buttonClass } from "@/components/ui/button";
import { OxygenAndProcedures } from "./oxygen-procedures";
import { FilmsSection } from "./sections/films";
import { TrendSection } from "./sections/trend";
import { FlagsSection } from "./sections/flags";
import { DrainsSection } from "./sections/drains";
import { BookingsSection } from "./sections/bookings";
import { TravelSection } from "./sections/travel";
import { ExportsSection } from "./sections/exports";

export const metadata: Metadata = { title: "Episode" };

export default async function EpisodePage({ params }: { params: Promise<{ id: string }> }) {
  const user = await requireUser("episode.read");
  const { id } = await params;
  if (!isUuid(id)) notFound();
  const episode = await orNotFound(getEpisode(db(), user.teamId, id));
  const [patient, oxygen, procedures] = await Promise.all([
    getPatient(db(), user.teamId, episode.patient_id),
    listOxygenPeriods(db(), id),
    listProcedures(db(), id),
  ]);
  const props = { episode, patient, user };
  return (
    <>
      <p className="mb-1 text-sm">
        <Link href={`/patients/${patient.id}`} className="text-estuary-700 underline">{patient.given_name} {patient.family_name}</Link>
        <span className="figures text-ink-soft"> · {patient.hospital_number} · {ageOn(patient.date_of_birth)} y · {patient.sex}</span>
      </p>
      <PageTitle
        title={`${sideLabel(episode.side)} pneumothorax`}
        subtitle={
          <>
            {AETIOLOGY_LABELS[episode.aetiology]}
            {episode.underlying_disease ? ` (${episode.underlying_disease})` : ""}
            {episode.procedure ? ` after ${episode.procedure}` : ""} · {MANAGEMENT_LABELS[episode.management]} · presented {formatDate(episode.presented_on)}
          </>
        }
        action={
          <div className="flex items-center gap-2">
            <Tag tone={episode.status === "active" ? "info" : episode.status === "resolved" ? "good" : "neutral"}>{episode.status}</Tag>
            {can(user.role, "episode.write") ? <Link href={`/episodes/${episode.id}/edit`} className={buttonClass("quiet")}>Edit episode</Link> : null}
          </div>
        }
      />
      <div className="grid gap-6 xl:grid-cols-3">
        <div className="space-y-6 xl:col-span-2">
          <FlagsSection {...props} />
          <TrendSection {...props} />
          <FilmsSection {...props} />
          <DrainsSection {...props} />
        </div>
        <div className="space-y-6">
          <Card title="Plan and record">
            <dl className="grid grid-cols-2 gap-2 text-sm">
              <dt className="font-bold">Chart method</dt><dd>{METHOD_LABELS[episode.primary_method]}</dd>
              <dt className="font-bold">Discharged</dt><dd>{formatDate(episode.discharged_on)}</dd>
              <dt className="font-bold">Resolution confirmed</dt><dd>{formatDate(episode.resolved_on)}</dd>
            </dl>
            {episode.notes ? <p className="mt-3 whitespace-pre-wrap text-sm">{episode.notes}</p> : null}
          </Card>
          <OxygenAndProcedures
            episodeId={episode.id}
            canWrite={can(user.role, "episode.write")}
            oxygen={oxygen.map((o) => ({ id: o.id, startedAt: o.started_at.toISOString(), endedAt: o.ended_at?.toISOString() ?? null, flowLMin: o.flow_l_min, device: o.device }))}
            procedures={procedures.map((p) => ({ id: p.id, kind: p.kind, performedAt: p.performed_at.toISOString(), volumeMl: p.volume_ml, notes: p.notes }))}
          />
          <BookingsSection {...props} />
          <TravelSection {...props} />
          <ExportsSection {...props} />
        </div>
      </div>
    </>
  );
}
