import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { requireUser } from "@/lib/auth/session";
import { db } from "@/db/knex";
import { getEpisode } from "@/db/episodes";
import { getPatient } from "@/db/patients";
import { listClinicians } from "@/db/users";
import { getProtocols } from "@/lib/settings-registry";
import { isUuid, orNotFound } from "@/lib/pages";
import { PageTitle } from "@/components/ui/card";
import { EpisodeForm } from "../../episode-form";

export const metadata: Metadata = { title: "Edit episode" };

export default async function EditEpisodePage({ params }: { params: Promise<{ id: string }> }) {
  const user = await requireUser("episode.write");
  const { id } = await params;
  if (!isUuid(id)) notFound();
  const e = await orNotFound(getEpisode(db(), user.teamId, id));
  const [p, consultants, registrars, protocols] = await Promise.all([
    getPatient(db(), user.teamId, e.patient_id),
    listClinicians(db(), user.teamId, "consultant"),
    listClinicians(db(), user.teamId, "registrar"),
    getProtocols(db(), user.teamId),
  ]);
  return (
    <>
      <PageTitle title="Edit episode" subtitle={`${p.given_name} ${p.family_name} · ${p.hospital_number}`} />
      <EpisodeForm
        patientId={p.id}
        episodeId={e.id}
        consultants={consultants}
        registrars={registrars}
        protocols={protocols.map((x) => ({ key: x.key, label: x.label }))}
        defaults={{
          side: e.side,
          onsetOn: e.onset_on,
          presentedOn: e.presented_on,
          aetiology: e.aetiology,
          underlyingDisease: e.underlying_disease ?? "",
          procedure: e.procedure ?? "",
          management: e.management,
          primaryMethod: e.primary_method,
          followUpProtocol: e.follow_up_protocol ?? "",
          consultantId: e.consultant_id,
          registrarId: e.registrar_id,
          notes: e.notes ?? "",
          status: e.status,
          resolvedOn: e.resolved_on,
          dischargedOn: e.discharged_on,
          version: e.version,
        }}
      />
    </>
  );
}
