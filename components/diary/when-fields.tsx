"use client";
// Date, time and place of an appointment, in the clinic's time zone whatever the browser's.
import { Field, TextInput } from "@/components/ui/field";

export interface WhenValue {
  date: string;
  time: string;
  location: string;
}

export function WhenFields({ idPrefix, value, onChange, errors }: { idPrefix: string; value: WhenValue; onChange: (v: WhenValue) => void; errors: Record<string, string> }) {
  const timeError = errors.scheduledAt;
  return (
    <div className="grid gap-3 sm:grid-cols-[10rem_7rem_1fr]">
      <Field id={`${idPrefix}-date`} label="Date" error={timeError}>
        <TextInput id={`${idPrefix}-date`} type="date" required value={value.date} invalid={!!timeError} onChange={(e) => onChange({ ...value, date: e.target.value })} />
      </Field>
      <Field id={`${idPrefix}-time`} label="Time">
        <TextInput id={`${idPrefix}-time`} type="time" required step={300} value={value.time} invalid={!!timeError} onChange={(e) => onChange({ ...value, time: e.target.value })} />
      </Field>
      <Field id={`${idPrefix}-location`} label="Where" error={errors.location}>
        <TextInput id={`${idPrefix}-location`} required maxLength={200} value={value.location} invalid={!!errors.location} onChange={(e) => onChange({ ...value, location: e.target.value })} />
      </Field>
    </div>
  );
}
