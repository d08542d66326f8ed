import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { requireUser } from "@/lib/auth/session";
import { db } from "@/db/knex";
import { getPatient } from "@/db/patients";
import { isUuid, orNotFound } from "@/lib/pages";
import { PageTitle } from "@/components/ui/card";
import { PatientForm } from "../../patient-form";

export const metadata: Metadata = { title: "Edit patient" };

export default async function EditPatientPage({ params }: { params: Promise<{ id: string }> }) {
  const user = await requireUser("patient.write");
  const { id } = await params;
  if (!isUuid(id)) notFound();
  const p = await orNotFound(getPatient(db(), user.teamId, id));
  return (
    <>
      <PageTitle title={`Edit ${p.given_name} ${p.family_name}`} />
      <PatientForm
        patientId={p.id}
        version={p.version}
        defaults={{
          hospitalNumber: p.hospital_number,
          familyName: p.family_name,
          givenName: p.given_name,
          dateOfBirth: p.date_of_birth,
          sex: p.sex as "female" | "male" | "other" | "unknown",
          email: p.email ?? "",
          phone: p.phone ?? "",
          emailConsent: p.email_consent,
        }}
      />
    </>
  );
}
