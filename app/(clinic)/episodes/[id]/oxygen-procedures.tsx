"use client";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { fetchJson, ApiError } from "@/lib/client/api";
import { formText } from "@/lib/client/form";
import { formatDateTime } from "@/lib/format";
import { Card, Empty } from "@/components/ui/card";
import { Button } from "@/components/ui/button";
import { Field, Select, TextInput } from "@/components/ui/field";

interface Oxygen { id: string; startedAt: string; endedAt: string | null; flowLMin: number | null; device: string | null }
interface Procedure { id: string; kind: string; performedAt: string; volumeMl: number | null; notes: string | null }

const nowLocal = () => {
  const d = new Date();
  d.setMinutes(d.getMinutes() - d.getTimezoneOffset());
  return d.toISOString().slice(0, 16);
};
const toIso = (local: string) => new Date(local).toISOString();

export function OxygenAndProcedures({ episodeId, canWrite, oxygen, procedures }: { episodeId: string; canWrite: boolean; oxygen: Oxygen[]; procedures: Procedure[] }) {
  const router = useRouter();
  const [message, setMessage] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const running = oxygen.find((o) => !o.endedAt);

  async function act(fn: () => Promise<unknown>) {
    setBusy(true);
    setMessage(null);
    try {
      await fn();
      router.refresh();
    } catch (err) {
      setMessage(err instanceof ApiError ? err.message : "Could not reach the server.");
    } finally {
      setBusy(false);
    }
  }

  return (
    <Card title="Oxygen and procedures">
      <h3 className="text-sm font-bold">Supplemental oxygen</h3>
      {oxygen.length === 0 ? <p className="text-sm text-ink-soft">On air throughout.</p> : (
        <ul className="mt-1 space-y-1 text-sm">
          {oxygen.map((o) => (
            <li key={o.id}>
              {formatDateTime(o.startedAt)} → {o.endedAt ? formatDateTime(o.endedAt) : <strong>running</strong>}
              {o.flowLMin ? ` · ${o.flowLMin} L/min` : ""}{o.device ? ` · ${o.device}` : ""}
            </li>
          ))}
        </ul>
      )}
      {canWrite ? (
        <form
          className="mt-3 flex flex-wrap items-end gap-2"
          onSubmit={(e) => {
            e.preventDefault();
            const f = new FormData(e.currentTarget);
            const at = toIso(formText(f, "at"));
            void act(() =>
              running
                ? fetchJson(`/api/episodes/${episodeId}/oxygen/${running.id}`, { method: "PATCH", json: { endedAt: at } })
                : fetchJson(`/api/episodes/${episodeId}/oxygen`, { method: "POST", json: { startedAt: at, flowLMin: f.get("flow") ? Number(f.get("flow")) : null, device: formText(f, "device") } }),
            );
          }}
        >
          <Field id="oxygen-at" label={running ? "Stopped at" : "Started at"}>
            <TextInput id="oxygen-at" name="at" type="datetime-local" defaultValue={nowLocal()} required />
          </Field>
          {!running ? (
            <>
              <Field id="oxygen-flow" label="Flow (L/min)">
                <TextInput id="oxygen-flow" name="flow" type="number" step="0.5" min="0.5" max="60" className="w-24" />
              </Field>
              <Field id="oxygen-device" label="Device">
                <TextInput id="oxygen-device" name="device" placeholder="e.g. non-rebreather" className="w-40" />
              </Field>
            </>
          ) : null}
          <Button type="submit" tone="quiet" disabled={busy}>{running ? "Record oxygen stopped" : "Record oxygen started"}</Button>
        </form>
      ) : null}

      <h3 className="mt-5 text-sm font-bold">Procedures</h3>
      {procedures.length === 0 ? <Empty>No procedure recorded.</Empty> : (
        <ul className="mt-1 space-y-1 text-sm">
          {procedures.map((p) => (
            <li key={p.id}>{formatDateTime(p.performedAt)} · {p.kind.replace("-", " ")}{p.volumeMl !== null ? ` · ${p.volumeMl} mL aspirated` : ""}{p.notes ? ` · ${p.notes}` : ""}</li>
          ))}
        </ul>
      )}
      {canWrite ? (
        <form
          className="mt-3 flex flex-wrap items-end gap-2"
          onSubmit={(e) => {
            e.preventDefault();
            const f = new FormData(e.currentTarget);
            void act(() =>
              fetchJson(`/api/episodes/${episodeId}/procedures`, {
                method: "POST",
                json: { kind: f.get("kind"), performedAt: toIso(formText(f, "at")), volumeMl: f.get("volume") ? Number(f.get("volume")) : null, notes: formText(f, "notes") },
              }),
            );
          }}
        >
          <Field id="proc-kind" label="Procedure">
            <Select id="proc-kind" name="kind">
              <option value="needle-aspiration">Needle aspiration</option>
              <option value="ambulatory-valve">Ambulatory valve</option>
              <option value="surgery">Surgery</option>
              <option value="other">Other</option>
            </Select>
          </Field>
          <Field id="proc-at" label="When">
            <TextInput id="proc-at" name="at" type="datetime-local" defaultValue={nowLocal()} required />
          </Field>
          <Field id="proc-volume" label="Aspirated (mL)">
            <TextInput id="proc-volume" name="volume" type="number" min="0" max="5000" className="w-24" />
          </Field>
          <Button type="submit" tone="quiet" disabled={busy}>Add procedure</Button>
        </form>
      ) : null}
      <div aria-live="polite">{message ? <p role="alert" className="mt-2 text-sm font-bold text-rust-ink">{message}</p> : null}</div>
    </Card>
  );
}
