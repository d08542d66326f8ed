import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { requireUser } from "@/lib/auth/session";
import { db } from "@/db/knex";
import { getPatient } from "@/db/patients";
import { listClinicians } from "@/db/users";
import { getProtocols } from "@/lib/settings-registry";
import { isUuid, orNotFound } from "@/lib/pages";
import { PageTitle } from "@/components/ui/card";
import { EpisodeForm } from "../../../../episodes/episode-form";

export const metadata: Metadata = { title: "Start an episode" };

export default async function NewEpisodePage({ params }: { params: Promise<{ id: string }> }) {
  const user = await requireUser("episode.write");
  const { id } = await params;
  if (!isUuid(id)) notFound();
  const p = await orNotFound(getPatient(db(), user.teamId, id));
  const [consultants, registrars, protocols] = await Promise.all([
    listClinicians(db(), user.teamId, "consultant"),
    listClinicians(db(), user.teamId, "registrar"),
    getProtocols(db(), user.teamId),
  ]);
  return (
    <>
      <PageTitle title="Start a pneumothorax episode" subtitle={`${p.given_name} ${p.family_name} · ${p.hospital_number}`} />
      <EpisodeForm
        patientId={p.id}
        consultants={consultants}
        registrars={registrars}
        protocols={protocols.map((x) => ({ key: x.key, label: x.label }))}
        defaults={{ registrarId: user.role === "registrar" ? user.id : null, consultantId: user.role === "consultant" ? user.id : null }}
      />
    </>
  );
}
