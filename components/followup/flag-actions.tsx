"use client";
// Acknowledge, or resolve with a note and a plan: the consultant's decision on one flag. Used by the
// deviation board and the episode page. The server checks the session and the permission again.
import { useId, useState } from "react";
import { ApiError, fetchJson } from "@/lib/client/api";
import { PLAN_KINDS, PLAN_LABELS, type PlanKind } from "@/lib/followup/rules";
import { Button } from "@/components/ui/button";
import { Field, Select, TextArea, TextInput } from "@/components/ui/field";

export function FlagActions({ flagId, state, label, onDone }: { flagId: string; state: string; label: string; onDone: (message: string) => void }) {
  const id = useId();
  const [open, setOpen] = useState(false);
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const [fields, setFields] = useState<Record<string, string>>({});
  const [note, setNote] = useState("");
  const [kind, setKind] = useState<PlanKind | "">("repeat-film");
  const [days, setDays] = useState("14");
  const [text, setText] = useState("");

  async function send(body: unknown, done: string) {
    setBusy(true);
    setError(null);
    setFields({});
    try {
      await fetchJson(`/api/flags/${flagId}`, { method: "POST", json: body });
      setOpen(false);
      onDone(done);
    } catch (err) {
      if (err instanceof ApiError) {
        setError(err.message);
        setFields(err.fields);
      } else setError("The server could not be reached. Nothing was saved; try again.");
    } finally {
      setBusy(false);
    }
  }

  const resolve = () => {
    const d = days.trim() === "" ? undefined : Number(days);
    const plan =
      kind === ""
        ? undefined
        : {
            kind,
            ...(kind === "repeat-film" && d !== undefined ? { days: Number.isFinite(d) ? d : -1 } : {}),
            ...(text.trim() ? { text: text.trim() } : {}),
          };
    void send({ action: "resolve", note, ...(plan ? { plan } : {}) }, `Resolved: ${label}.`);
  };

  if (!open) {
    return (
      <div className="flex flex-wrap gap-2">
        {state === "open" ? (
          <Button tone="quiet" disabled={busy} onClick={() => void send({ action: "acknowledge" }, `Acknowledged: ${label}.`)} aria-label={`Acknowledge: ${label}`}>
            Acknowledge
          </Button>
        ) : null}
        <Button tone="primary" disabled={busy} onClick={() => setOpen(true)} aria-label={`Resolve: ${label}`}>
          Resolve…
        </Button>
        {error ? <p role="alert" className="w-full text-sm font-bold text-rust-ink">{error}</p> : null}
      </div>
    );
  }

  return (
    <form
      className="min-w-72 space-y-3 rounded-md border border-line bg-paper p-3"
      aria-label={`Resolve: ${label}`}
      onSubmit={(e) => {
        e.preventDefault();
        resolve();
      }}
    >
      <Field id={`${id}-note`} label="Decision note" error={fields.note} hint="What you decided and why; it goes into the record.">
        <TextArea id={`${id}-note`} rows={3} value={note} onChange={(e) => setNote(e.target.value)} invalid={!!fields.note} maxLength={2000} />
      </Field>
      <Field id={`${id}-plan`} label="Plan" error={fields["plan.kind"]}>
        <Select id={`${id}-plan`} value={kind} onChange={(e) => setKind(e.target.value as PlanKind | "")}>
          {PLAN_KINDS.map((k) => (
            <option key={k} value={k}>{PLAN_LABELS[k]}</option>
          ))}
          <option value="">No plan to record</option>
        </Select>
      </Field>
      {kind === "repeat-film" ? (
        <Field id={`${id}-days`} label="Repeat film in (days)" error={fields["plan.days"]}>
          <TextInput id={`${id}-days`} type="number" inputMode="numeric" min={1} max={365} value={days} onChange={(e) => setDays(e.target.value)} invalid={!!fields["plan.days"]} />
        </Field>
      ) : null}
      {kind !== "" ? (
        <Field id={`${id}-text`} label={kind === "other" ? "Describe the plan" : "Plan details (optional)"} error={fields["plan.text"]}>
          <TextInput id={`${id}-text`} value={text} onChange={(e) => setText(e.target.value)} invalid={!!fields["plan.text"]} maxLength={500} />
        </Field>
      ) : null}
      {error ? <p role="alert" className="text-sm font-bold text-rust-ink">{error}</p> : null}
      <div className="flex gap-2">
        <Button type="submit" disabled={busy}>{busy ? "Saving…" : "Resolve flag"}</Button>
        <Button tone="quiet" disabled={busy} onClick={() => setOpen(false)}>Cancel</Button>
      </div>
    </form>
  );
}
