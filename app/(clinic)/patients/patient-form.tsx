"use client";
import { zodResolver } from "@hookform/resolvers/zod";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { useForm } from "react-hook-form";
import type { z } from "zod";
import { patientInput, SEXES } from "@/lib/validation/patients";
import { fetchJson } from "@/lib/client/api";
import { Field, Select, TextInput } from "@/components/ui/field";
import { Button } from "@/components/ui/button";
import { applyServerError, FormMessage } from "@/components/form-status";

type In = z.input<typeof patientInput>;
type Out = z.output<typeof patientInput>;

export function PatientForm({ patientId, version, defaults }: { patientId?: string; version?: number; defaults?: Partial<In> }) {
  const router = useRouter();
  const [message, setMessage] = useState<string | null>(null);
  const { register, handleSubmit, setError, formState: { errors, isSubmitting } } = useForm<In, unknown, Out>({
    resolver: zodResolver(patientInput),
    defaultValues: { sex: "unknown", emailConsent: false, ...defaults },
  });

  const onSubmit = handleSubmit(async (values) => {
    setMessage(null);
    try {
      if (patientId) {
        await fetchJson(`/api/patients/${patientId}`, { method: "PATCH", json: { ...values, email: values.email ?? "", version } });
        router.push(`/patients/${patientId}`);
      } else {
        const { patient } = await fetchJson<{ patient: { id: string } }>("/api/patients", { method: "POST", json: { ...values, email: values.email ?? "" } });
        router.push(`/patients/${patient.id}`);
      }
      router.refresh();
    } catch (err) {
      setMessage(applyServerError(err, setError));
    }
  });

  return (
    <form onSubmit={(e) => void onSubmit(e)} className="grid max-w-3xl gap-4 md:grid-cols-2" noValidate>
      <Field id="hospitalNumber" label="Hospital number" error={errors.hospitalNumber?.message} hint="As on the hospital's patient index">
        <TextInput id="hospitalNumber" {...register("hospitalNumber")} invalid={!!errors.hospitalNumber} className="figures uppercase" />
      </Field>
      <Field id="dateOfBirth" label="Date of birth" error={errors.dateOfBirth?.message}>
        <TextInput id="dateOfBirth" type="date" {...register("dateOfBirth")} invalid={!!errors.dateOfBirth} />
      </Field>
      <Field id="givenName" label="Given name" error={errors.givenName?.message}>
        <TextInput id="givenName" {...register("givenName")} invalid={!!errors.givenName} />
      </Field>
      <Field id="familyName" label="Family name" error={errors.familyName?.message}>
        <TextInput id="familyName" {...register("familyName")} invalid={!!errors.familyName} />
      </Field>
      <Field id="sex" label="Sex" error={errors.sex?.message}>
        <Select id="sex" {...register("sex")} invalid={!!errors.sex}>
          {SEXES.map((s) => <option key={s} value={s}>{s[0]?.toUpperCase() + s.slice(1)}</option>)}
        </Select>
      </Field>
      <Field id="phone" label="Phone" error={errors.phone?.message}>
        <TextInput id="phone" type="tel" {...register("phone")} invalid={!!errors.phone} />
      </Field>
      <Field id="email" label="E-mail" error={errors.email?.message} hint="Used only for appointment letters and reminders">
        <TextInput id="email" type="email" {...register("email")} invalid={!!errors.email} />
      </Field>
      <div className="flex items-end pb-2">
        <label className="flex items-start gap-2 text-sm">
          <input type="checkbox" {...register("emailConsent")} className="mt-1 h-4 w-4" />
          <span>The patient agrees to be contacted by e-mail about their follow-up.</span>
        </label>
      </div>
      <div className="md:col-span-2">
        <FormMessage message={message} />
        <Button type="submit" disabled={isSubmitting}>{isSubmitting ? "Saving…" : patientId ? "Save changes" : "Register patient"}</Button>
      </div>
    </form>
  );
}
