import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { requireUser } from "@/lib/auth/session";
import { can } from "@/lib/auth/permissions";
import { db } from "@/db/knex";
import { getPatient } from "@/db/patients";
import { listPatientEpisodes } from "@/db/episodes";
import { isUuid, orNotFound } from "@/lib/pages";
import { ageOn, formatDate, sideLabel } from "@/lib/format";
import { AETIOLOGY_LABELS, MANAGEMENT_LABELS } from "@/lib/validation/episodes";
import { Card, Empty, PageTitle, Tag } from "@/components/ui/card";
import { buttonClass } from "@/components/ui/button";

export const metadata: Metadata = { title: "Patient" };

export default async function PatientPage({ params }: { params: Promise<{ id: string }> }) {
  const user = await requireUser("patient.read");
  const { id } = await params;
  if (!isUuid(id)) notFound();
  const p = await orNotFound(getPatient(db(), user.teamId, id));
  const episodes = await listPatientEpisodes(db(), user.teamId, id);
  return (
    <>
      <PageTitle
        title={`${p.given_name} ${p.family_name}`}
        subtitle={<span className="figures">{p.hospital_number} · born {formatDate(p.date_of_birth)} ({ageOn(p.date_of_birth)} y) · {p.sex}</span>}
        action={
          <div className="flex gap-2">
            {can(user.role, "patient.write") ? <Link href={`/patients/${p.id}/edit`} className={buttonClass("quiet")}>Edit details</Link> : null}
            {can(user.role, "episode.write") ? <Link href={`/patients/${p.id}/episodes/new`} className={buttonClass()}>Start an episode</Link> : null}
          </div>
        }
      />
      <div className="grid gap-6 lg:grid-cols-3">
        <Card title="Episodes" className="lg:col-span-2">
          {episodes.length === 0 ? (
            <Empty>No pneumothorax episode recorded yet.</Empty>
          ) : (
            <ul className="divide-y divide-line">
              {episodes.map((e) => (
                <li key={e.id} className="flex flex-wrap items-center justify-between gap-2 py-3">
                  <div>
                    <Link href={`/episodes/${e.id}`} className="font-bold text-estuary-700 underline-offset-2 hover:underline">
                      {sideLabel(e.side)} pneumothorax, presented {formatDate(e.presented_on)}
                    </Link>
                    <p className="text-sm text-ink-soft">
                      {AETIOLOGY_LABELS[e.aetiology]} · {MANAGEMENT_LABELS[e.management]}
                    </p>
                  </div>
                  <Tag tone={e.status === "active" ? "info" : e.status === "resolved" ? "good" : "neutral"}>{e.status}</Tag>
                </li>
              ))}
            </ul>
          )}
        </Card>
        <Card title="Contact">
          <dl className="space-y-2 text-sm">
            <div><dt className="font-bold">E-mail</dt><dd>{p.email ?? "—"}</dd></div>
            <div><dt className="font-bold">Phone</dt><dd>{p.phone ?? "—"}</dd></div>
            <div>
              <dt className="font-bold">E-mail contact</dt>
              <dd>{p.email_consent ? `Agreed ${formatDate(p.email_consent_at)}` : "Not agreed: no e-mail will be sent"}</dd>
            </div>
          </dl>
        </Card>
      </div>
    </>
  );
}
