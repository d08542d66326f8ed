import type { Metadata } from "next";
import { requireUser } from "@/lib/auth/session";
import { PageTitle } from "@/components/ui/card";
import { PatientForm } from "../patient-form";

export const metadata: Metadata = { title: "Register a patient" };

export default async function NewPatientPage() {
  await requireUser("patient.write");
  return (
    <>
      <PageTitle title="Register a patient" />
      <PatientForm />
    </>
  );
}
