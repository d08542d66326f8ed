import type { Metadata } from "next";
import Link from "next/link";
import { requireUser } from "@/lib/auth/session";
import { can } from "@/lib/auth/permissions";
import { PageTitle } from "@/components/ui/card";
import { buttonClass } from "@/components/ui/button";
import { PatientTable } from "./patient-table";

export const metadata: Metadata = { title: "Patients" };

export default async function PatientsPage() {
  const user = await requireUser("patient.read");
  return (
    <>
      <PageTitle
        title="Patients"
        subtitle="Search by name or hospital number."
        action={can(user.role, "patient.write") ? <Link href="/patients/new" className={buttonClass()}>Register a patient</Link> : null}
      />
      <PatientTable />
    </>
  );
}
