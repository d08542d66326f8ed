"use client";
import { zodResolver } from "@hookform/resolvers/zod";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { useForm } from "react-hook-form";
import type { z } from "zod";
import {
  AETIOLOGIES, AETIOLOGY_LABELS, EPISODE_STATUSES, episodeUpdate, MANAGEMENTS, MANAGEMENT_LABELS, METHODS, METHOD_LABELS, SIDES,
} from "@/lib/validation/episodes";
import { fetchJson } from "@/lib/client/api";
import { Field, Select, TextArea, TextInput } from "@/components/ui/field";
import { Button } from "@/components/ui/button";
import { applyServerError, FormMessage } from "@/components/form-status";

type In = z.input<typeof episodeUpdate>;
type Out = z.output<typeof episodeUpdate>;
interface Person { id: string; name: string }

export function EpisodeForm(props: {
  patientId: string;
  episodeId?: string;
  defaults?: Partial<In>;
  consultants: Person[];
  registrars: Person[];
  protocols: { key: string; label: string }[];
}) {
  const router = useRouter();
  const [message, setMessage] = useState<string | null>(null);
  const editing = !!props.episodeId;
  const { register, handleSubmit, setError, watch, formState: { errors, isSubmitting } } = useForm<In, unknown, Out>({
    resolver: zodResolver(episodeUpdate),
    defaultValues: { status: "active", primaryMethod: "collins", version: 1, presentedOn: new Date().toISOString().slice(0, 10), ...props.defaults },
  });
  const aetiology = watch("aetiology");
  const status = watch("status");

  const onSubmit = handleSubmit(async (values) => {
    setMessage(null);
    try {
      if (props.episodeId) {
        await fetchJson(`/api/episodes/${props.episodeId}`, { method: "PATCH", json: values });
        router.push(`/episodes/${props.episodeId}`);
      } else {
        const { status: _s, resolvedOn: _r, dischargedOn: _d, version: _v, ...create } = values;
        const { episode } = await fetchJson<{ episode: { id: string } }>(`/api/patients/${props.patientId}/episodes`, { method: "POST", json: create });
        router.push(`/episodes/${episode.id}`);
      }
      router.refresh();
    } catch (err) {
      setMessage(applyServerError(err, setError));
    }
  });

  const nullable = { setValueAs: (v: string) => (v === "" ? null : v) };
  return (
    <form onSubmit={(e) => void onSubmit(e)} className="grid max-w-4xl gap-4 md:grid-cols-3" noValidate>
      <Field id="side" label="Side" error={errors.side?.message}>
        <Select id="side" {...register("side")} invalid={!!errors.side}>
          <option value="">Choose…</option>
          {SIDES.map((s) => <option key={s} value={s}>{s === "left" ? "Left" : "Right"}</option>)}
        </Select>
      </Field>
      <Field id="presentedOn" label="Presented on" error={errors.presentedOn?.message}>
        <TextInput id="presentedOn" type="date" {...register("presentedOn")} invalid={!!errors.presentedOn} />
      </Field>
      <Field id="onsetOn" label="Symptoms began (if known)" error={errors.onsetOn?.message}>
        <TextInput id="onsetOn" type="date" {...register("onsetOn", nullable)} invalid={!!errors.onsetOn} />
      </Field>
      <Field id="aetiology" label="Aetiology" error={errors.aetiology?.message}>
        <Select id="aetiology" {...register("aetiology")} invalid={!!errors.aetiology}>
          <option value="">Choose…</option>
          {AETIOLOGIES.map((a) => <option key={a} value={a}>{AETIOLOGY_LABELS[a]}</option>)}
        </Select>
      </Field>
      {aetiology === "secondary-spontaneous" ? (
        <Field id="underlyingDisease" label="Underlying lung disease" error={errors.underlyingDisease?.message}>
          <TextInput id="underlyingDisease" {...register("underlyingDisease")} invalid={!!errors.underlyingDisease} placeholder="e.g. COPD" />
        </Field>
      ) : null}
      {aetiology === "iatrogenic" ? (
        <Field id="procedure" label="Procedure that caused it" error={errors.procedure?.message}>
          <TextInput id="procedure" {...register("procedure")} invalid={!!errors.procedure} placeholder="e.g. CT-guided lung biopsy" />
        </Field>
      ) : null}
      <Field id="management" label="Management" error={errors.management?.message}>
        <Select id="management" {...register("management")} invalid={!!errors.management}>
          <option value="">Choose…</option>
          {MANAGEMENTS.map((m) => <option key={m} value={m}>{MANAGEMENT_LABELS[m]}</option>)}
        </Select>
      </Field>
      <Field id="primaryMethod" label="Method for the resorption chart" error={errors.primaryMethod?.message} hint="Collins is closest to CT volume on erect PA films">
        <Select id="primaryMethod" {...register("primaryMethod")}>
          {METHODS.map((m) => <option key={m} value={m}>{METHOD_LABELS[m]}</option>)}
        </Select>
      </Field>
      <Field id="followUpProtocol" label="Follow-up protocol" error={errors.followUpProtocol?.message}>
        <Select id="followUpProtocol" {...register("followUpProtocol", nullable)}>
          <option value="">None chosen</option>
          {props.protocols.map((p) => <option key={p.key} value={p.key}>{p.label}</option>)}
        </Select>
      </Field>
      <Field id="consultantId" label="Responsible consultant" error={errors.consultantId?.message}>
        <Select id="consultantId" {...register("consultantId", nullable)} invalid={!!errors.consultantId}>
          <option value="">Not assigned</option>
          {props.consultants.map((c) => <option key={c.id} value={c.id}>{c.name}</option>)}
        </Select>
      </Field>
      <Field id="registrarId" label="Registrar" error={errors.registrarId?.message}>
        <Select id="registrarId" {...register("registrarId", nullable)} invalid={!!errors.registrarId}>
          <option value="">Not assigned</option>
          {props.registrars.map((c) => <option key={c.id} value={c.id}>{c.name}</option>)}
        </Select>
      </Field>
      {editing ? (
        <>
          <Field id="status" label="Status" error={errors.status?.message}>
            <Select id="status" {...register("status")}>
              {EPISODE_STATUSES.map((s) => <option key={s} value={s}>{s[0]?.toUpperCase() + s.slice(1)}</option>)}
            </Select>
          </Field>
          <Field id="resolvedOn" label="Resolution confirmed on film" error={errors.resolvedOn?.message} hint={status === "resolved" ? "Needed for the travel note" : undefined}>
            <TextInput id="resolvedOn" type="date" {...register("resolvedOn", nullable)} invalid={!!errors.resolvedOn} />
          </Field>
          <Field id="dischargedOn" label="Discharged on" error={errors.dischargedOn?.message}>
            <TextInput id="dischargedOn" type="date" {...register("dischargedOn", nullable)} />
          </Field>
        </>
      ) : null}
      <div className="md:col-span-3">
        <Field id="notes" label="Notes" error={errors.notes?.message}>
          <TextArea id="notes" rows={4} {...register("notes")} />
        </Field>
      </div>
      <input type="hidden" {...register("version", { valueAsNumber: true })} />
      <div className="md:col-span-3">
        <FormMessage message={message} />
        <Button type="submit" disabled={isSubmitting}>{isSubmitting ? "Saving…" : editing ? "Save episode" : "Start episode"}</Button>
      </div>
    </form>
  );
}
