"use client";
// Chest drains on the episode page: the record, the observation log, the rules' prompts, and the
// forms to insert, observe, change suction and remove. The server re-checks everything.
import { useRouter } from "next/navigation";
import { useState, type FormEvent, type ReactNode } from "react";
import { ApiError, fetchJson } from "@/lib/client/api";
import { formatDateTime } from "@/lib/format";
import {
  BUBBLING,
  BUBBLING_LABELS,
  DRAINAGE_LABELS,
  DRAINAGES,
  FR_RANGE,
  INDICATION_LABELS,
  INDICATIONS,
  TECHNIQUE_LABELS,
  TECHNIQUES,
  type Bubbling,
  type Drainage,
  type Indication,
  type Technique,
} from "@/lib/validation/drains";
import { Card, Empty, Tag } from "@/components/ui/card";
import { Button } from "@/components/ui/button";
import { Field, Select, TextInput } from "@/components/ui/field";

export interface DrainView {
  id: string;
  insertedAt: string;
  insertedBy: string;
  sizeFr: number;
  site: string;
  technique: Technique;
  indication: Indication;
  drainage: Drainage;
  suctionOn: boolean;
  suctionKpa: number | null;
  removedAt: string | null;
  removalReason: string | null;
  observations: { id: string; observedAt: string; swinging: boolean; bubbling: Bubbling; fluidMl: number | null; note: string | null; recordedBy: string | null }[];
  size: { verdict: string; reason: string; notes: string[]; source: string | null };
  airLeak: { advice: "none" | "respiratory-specialist" | "thoracic-surgical-opinion"; bubblingForHours: number | null; reason: string; source: string };
  check: { prompt: boolean; reason: string; source: string };
  lung: { reExpanded: boolean | null; reason: string };
}

interface Props {
  episodeId: string;
  canWrite: boolean;
  drains: DrainView[];
  thresholds: { specialistAfterHours: number; surgicalOpinionAfterHours: number };
  reExpansion: { text: string; source: string };
}

const nowLocal = () => {
  const d = new Date();
  d.setMinutes(d.getMinutes() - d.getTimezoneOffset());
  return d.toISOString().slice(0, 16);
};
const text = (v: FormDataEntryValue | null): string => (typeof v === "string" ? v : "");
const toIso = (local: FormDataEntryValue | null) => (text(local) ? new Date(text(local)).toISOString() : "");
const numberOrNull = (v: FormDataEntryValue | null) => (text(v).trim() === "" ? null : Number(text(v)));
/** 1 kPa = 10.197 cmH2O (standard gravity, water at 4 C). */
const cmH2O = (kpa: number) => Math.round(kpa * 10.197);

function useSubmit() {
  const router = useRouter();
  const [busy, setBusy] = useState(false);
  const [message, setMessage] = useState<string | null>(null);
  const [fields, setFields] = useState<Record<string, string>>({});
  async function run(fn: () => Promise<unknown>, onDone?: () => void) {
    setBusy(true);
    setMessage(null);
    setFields({});
    try {
      await fn();
      onDone?.();
      router.refresh();
    } catch (err) {
      if (err instanceof ApiError) {
        setMessage(err.message);
        setFields(err.fields);
      } else setMessage("Rimwatch could not reach the server. Check your connection and try again.");
    } finally {
      setBusy(false);
    }
  }
  return { busy, message, fields, run };
}

function Status({ message }: { message: string | null }) {
  return <div aria-live="polite">{message ? <p role="alert" className="mt-2 rounded-md bg-rust-wash px-3 py-2 text-sm font-bold text-rust-ink">{message}</p> : null}</div>;
}

function Prompt({ tone, title, children, source }: { tone: "alarm" | "watch" | "info"; title: string; children: ReactNode; source: string | null }) {
  const box = tone === "alarm" ? "border-rust-ink/40 bg-rust-wash" : tone === "watch" ? "border-amber-ink/40 bg-amber-wash" : "border-estuary-600/30 bg-estuary-50";
  return (
    <div className={`rounded-md border px-3 py-2 text-sm ${box}`} role={tone === "info" ? undefined : "status"}>
      <p className="font-bold">{title}</p>
      <p>{children}</p>
      {source ? <p className="mt-1 text-xs text-ink-soft">Source: {source}</p> : null}
    </div>
  );
}

function Prompts({ d, thresholds, reExpansion }: { d: DrainView; thresholds: Props["thresholds"]; reExpansion: Props["reExpansion"] }) {
  const items: ReactNode[] = [];
  if (d.size.verdict === "smaller-than-guidance" || d.size.verdict === "larger-than-guidance") {
    items.push(
      <Prompt key="size" tone="watch" title="Drain size questioned for the indication" source={d.size.source}>
        {d.size.reason} {d.size.notes.join(" ")}
      </Prompt>,
    );
  }
  if (d.airLeak.advice !== "none") {
    items.push(
      <Prompt key="leak" tone="alarm" title={d.airLeak.advice === "thoracic-surgical-opinion" ? "Persistent air leak: thoracic surgical opinion" : "Persistent air leak: respiratory specialist"} source={d.airLeak.source}>
        {d.airLeak.reason} A flag is on the deviation board.
      </Prompt>,
    );
  } else if (!d.removedAt && d.airLeak.bubblingForHours !== null) {
    items.push(
      <Prompt key="bubbling" tone="info" title="Still bubbling" source={d.airLeak.source}>
        Bubbling for {d.airLeak.bubblingForHours} h. A leak still bubbling at {thresholds.specialistAfterHours} h is persistent (respiratory specialist); at{" "}
        {thresholds.surgicalOpinionAfterHours} h seek a thoracic surgical opinion.
      </Prompt>,
    );
  }
  if (d.check.prompt) {
    items.push(
      <Prompt key="check" tone="watch" title="Check the drain" source={`${d.check.source}; lung ${reExpansion.text} (${reExpansion.source})`}>
        {d.check.reason} {d.lung.reason}
      </Prompt>,
    );
  }
  const last = d.observations[d.observations.length - 1];
  if (!d.removedAt && !d.check.prompt && last && !last.swinging && d.lung.reExpanded === null) {
    items.push(
      <Prompt key="swing-unknown" tone="info" title="No swing at the last observation" source={`${d.check.source}; lung ${reExpansion.text} (${reExpansion.source})`}>
        {d.lung.reason} Measure a film taken since insertion to tell whether the lung is up; if it is not, check the drain.
      </Prompt>,
    );
  }
  return items.length ? <div className="mt-3 space-y-2">{items}</div> : null;
}

function ObservationLog({ d }: { d: DrainView }) {
  if (d.observations.length === 0) return <p className="mt-3 text-sm text-ink-soft">No observation recorded yet.</p>;
  return (
    <div className="mt-3 overflow-x-auto">
      <table className="w-full text-left text-sm">
        <caption className="sr-only">Observation log of the {d.sizeFr} Fr drain</caption>
        <thead className="border-b border-line text-xs uppercase text-ink-soft">
          <tr>
            <th className="py-1 pr-3">When</th>
            <th className="py-1 pr-3">Swinging</th>
            <th className="py-1 pr-3">Bubbling</th>
            <th className="py-1 pr-3">Fluid</th>
            <th className="py-1 pr-3">Note</th>
            <th className="py-1">By</th>
          </tr>
        </thead>
        <tbody>
          {d.observations.map((o) => (
            <tr key={o.id} className="border-b border-line/60 last:border-0">
              <td className="figures py-1 pr-3 whitespace-nowrap">{formatDateTime(o.observedAt)}</td>
              <td className="py-1 pr-3">{o.swinging ? "yes" : <strong>no</strong>}</td>
              <td className="py-1 pr-3">{o.bubbling === "none" ? "none" : <strong>{BUBBLING_LABELS[o.bubbling].toLowerCase()}</strong>}</td>
              <td className="figures py-1 pr-3">{o.fluidMl === null ? "—" : `${o.fluidMl} mL`}</td>
              <td className="py-1 pr-3">{o.note ?? ""}</td>
              <td className="py-1 text-ink-soft">{o.recordedBy ?? ""}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

function ObservationForm({ d, onDone }: { d: DrainView; onDone: () => void }) {
  const { busy, message, fields, run } = useSubmit();
  const id = `obs-${d.id}`;
  function submit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const f = new FormData(e.currentTarget);
    void run(
      () =>
        fetchJson(`/api/drains/${d.id}/observations`, {
          method: "POST",
          json: { observedAt: toIso(f.get("at")), swinging: f.get("swinging") === "yes", bubbling: f.get("bubbling"), fluidMl: numberOrNull(f.get("fluid")), note: text(f.get("note")) },
        }),
      onDone,
    );
  }
  return (
    <form onSubmit={submit} className="mt-3 grid gap-3 rounded-md border border-line bg-paper p-3 sm:grid-cols-3">
      <Field id={`${id}-at`} label="Observed at" error={fields.observedAt}>
        <TextInput id={`${id}-at`} name="at" type="datetime-local" defaultValue={nowLocal()} required />
      </Field>
      <Field id={`${id}-swinging`} label="Fluid column swinging" error={fields.swinging}>
        <Select id={`${id}-swinging`} name="swinging" defaultValue="yes">
          <option value="yes">Yes, swinging</option>
          <option value="no">No swing</option>
        </Select>
      </Field>
      <Field id={`${id}-bubbling`} label="Bubbling" error={fields.bubbling}>
        <Select id={`${id}-bubbling`} name="bubbling" defaultValue="none">
          {BUBBLING.map((b) => <option key={b} value={b}>{BUBBLING_LABELS[b]}</option>)}
        </Select>
      </Field>
      <Field id={`${id}-fluid`} label="Fluid since last entry (mL)" error={fields.fluidMl}>
        <TextInput id={`${id}-fluid`} name="fluid" type="number" min="0" max="5000" step="1" />
      </Field>
      <div className="sm:col-span-2">
        <Field id={`${id}-note`} label="Note (optional)" error={fields.note}>
          <TextInput id={`${id}-note`} name="note" maxLength={500} />
        </Field>
      </div>
      <div className="sm:col-span-3">
        <Button type="submit" disabled={busy}>Save observation</Button>
        <Status message={message} />
      </div>
    </form>
  );
}

function SuctionForm({ d, onDone }: { d: DrainView; onDone: () => void }) {
  const { busy, message, fields, run } = useSubmit();
  const [on, setOn] = useState(d.suctionOn);
  const id = `suction-${d.id}`;
  function submit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const f = new FormData(e.currentTarget);
    void run(() => fetchJson(`/api/drains/${d.id}`, { method: "PATCH", json: { action: "suction", suctionOn: on, suctionKpa: on ? numberOrNull(f.get("kpa")) : null } }), onDone);
  }
  return (
    <form onSubmit={submit} className="mt-3 flex flex-wrap items-end gap-3 rounded-md border border-line bg-paper p-3">
      <Field id={`${id}-on`} label="Suction">
        <Select id={`${id}-on`} value={on ? "on" : "off"} onChange={(e) => setOn(e.target.value === "on")}>
          <option value="off">Off</option>
          <option value="on">On</option>
        </Select>
      </Field>
      {on ? (
        <Field id={`${id}-kpa`} label="Level (kPa below atmospheric)" error={fields.suctionKpa} hint="High-volume low-pressure suction is about 1-2 kPa (-10 to -20 cmH2O; BTS 2010, from memory).">
          <TextInput id={`${id}-kpa`} name="kpa" type="number" step="0.1" min="0.1" max="10" defaultValue={d.suctionKpa ?? ""} className="w-28" required />
        </Field>
      ) : null}
      <Button type="submit" tone="quiet" disabled={busy}>Save suction</Button>
      <div className="w-full"><Status message={message} /></div>
    </form>
  );
}

function RemoveForm({ d, onDone }: { d: DrainView; onDone: () => void }) {
  const { busy, message, fields, run } = useSubmit();
  const id = `remove-${d.id}`;
  function submit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const f = new FormData(e.currentTarget);
    void run(() => fetchJson(`/api/drains/${d.id}`, { method: "PATCH", json: { action: "remove", removedAt: toIso(f.get("at")), removalReason: text(f.get("reason")) } }), onDone);
  }
  return (
    <form onSubmit={submit} className="mt-3 grid gap-3 rounded-md border border-line bg-paper p-3 sm:grid-cols-3">
      <Field id={`${id}-at`} label="Removed at" error={fields.removedAt}>
        <TextInput id={`${id}-at`} name="at" type="datetime-local" defaultValue={nowLocal()} required />
      </Field>
      <div className="sm:col-span-2">
        <Field id={`${id}-reason`} label="Reason for removal" error={fields.removalReason}>
          <TextInput id={`${id}-reason`} name="reason" list={`${id}-reasons`} required minLength={3} maxLength={300} />
          <datalist id={`${id}-reasons`}>
            <option value="Lung re-expanded, no air leak" />
            <option value="Drain blocked" />
            <option value="Drain displaced" />
            <option value="Before surgery" />
          </datalist>
        </Field>
      </div>
      <div className="sm:col-span-3">
        <Button type="submit" tone="danger" disabled={busy}>Record removal</Button>
        <Status message={message} />
      </div>
    </form>
  );
}

function DrainRecord({ d, canWrite, thresholds, reExpansion }: { d: DrainView; canWrite: boolean; thresholds: Props["thresholds"]; reExpansion: Props["reExpansion"] }) {
  const [open, setOpen] = useState<"observe" | "suction" | "remove" | null>(null);
  const close = () => setOpen(null);
  const toggle = (what: "observe" | "suction" | "remove") => setOpen((o) => (o === what ? null : what));
  return (
    <li className="rounded-md border border-line p-4">
      <div className="flex flex-wrap items-start justify-between gap-2">
        <div>
          <p className="font-bold">
            <span className="figures">{d.sizeFr} Fr</span> · {TECHNIQUE_LABELS[d.technique]} · {d.site}
          </p>
          <p className="text-sm text-ink-soft">
            For {INDICATION_LABELS[d.indication].toLowerCase()} · {DRAINAGE_LABELS[d.drainage].toLowerCase()} ·{" "}
            {d.suctionOn ? <strong className="text-ink">suction on, {d.suctionKpa} kPa (about {cmH2O(d.suctionKpa ?? 0)} cmH2O)</strong> : "no suction"}
          </p>
          <p className="text-sm text-ink-soft">
            In <span className="figures">{formatDateTime(d.insertedAt)}</span> by {d.insertedBy}
            {d.removedAt ? <> · out <span className="figures">{formatDateTime(d.removedAt)}</span>: {d.removalReason}</> : null}
          </p>
        </div>
        <Tag tone={d.removedAt ? "neutral" : "info"}>{d.removedAt ? "Removed" : "In place"}</Tag>
      </div>
      <Prompts d={d} thresholds={thresholds} reExpansion={reExpansion} />
      <ObservationLog d={d} />
      {canWrite && !d.removedAt ? (
        <>
          <div className="mt-3 flex flex-wrap gap-2">
            <Button tone={open === "observe" ? "primary" : "quiet"} onClick={() => toggle("observe")} aria-expanded={open === "observe"}>Add observation</Button>
            <Button tone={open === "suction" ? "primary" : "quiet"} onClick={() => toggle("suction")} aria-expanded={open === "suction"}>Change suction</Button>
            <Button tone={open === "remove" ? "primary" : "quiet"} onClick={() => toggle("remove")} aria-expanded={open === "remove"}>Remove drain</Button>
          </div>
          {open === "observe" ? <ObservationForm d={d} onDone={close} /> : null}
          {open === "suction" ? <SuctionForm d={d} onDone={close} /> : null}
          {open === "remove" ? <RemoveForm d={d} onDone={close} /> : null}
        </>
      ) : null}
    </li>
  );
}

function InsertForm({ episodeId, onDone }: { episodeId: string; onDone: () => void }) {
  const { busy, message, fields, run } = useSubmit();
  const [suction, setSuction] = useState(false);
  function submit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const f = new FormData(e.currentTarget);
    void run(
      () =>
        fetchJson(`/api/episodes/${episodeId}/drains`, {
          method: "POST",
          json: {
            insertedAt: toIso(f.get("at")),
            insertedBy: text(f.get("by")),
            sizeFr: numberOrNull(f.get("fr")),
            site: text(f.get("site")),
            technique: f.get("technique"),
            indication: f.get("indication"),
            drainage: f.get("drainage"),
            suctionOn: suction,
            suctionKpa: suction ? numberOrNull(f.get("kpa")) : null,
          },
        }),
      onDone,
    );
  }
  return (
    <form onSubmit={submit} className="mb-4 grid gap-3 rounded-md border border-line bg-paper p-3 sm:grid-cols-2 lg:grid-cols-3" aria-label="Record a chest drain">
      <Field id="drain-at" label="Inserted at" error={fields.insertedAt}>
        <TextInput id="drain-at" name="at" type="datetime-local" defaultValue={nowLocal()} required />
      </Field>
      <Field id="drain-by" label="Inserted by" error={fields.insertedBy}>
        <TextInput id="drain-by" name="by" required minLength={2} maxLength={120} placeholder="Name and grade" />
      </Field>
      <Field id="drain-fr" label="Size (Fr)" error={fields.sizeFr} hint="BTS 2010: 8-14 Fr for a pneumothorax.">
        <TextInput id="drain-fr" name="fr" type="number" min={FR_RANGE.min} max={FR_RANGE.max} step="1" required />
      </Field>
      <Field id="drain-site" label="Site" error={fields.site}>
        <TextInput id="drain-site" name="site" list="drain-sites" required minLength={2} maxLength={120} />
        <datalist id="drain-sites">
          <option value="5th intercostal space, mid-axillary line" />
          <option value="4th intercostal space, anterior axillary line" />
          <option value="2nd intercostal space, mid-clavicular line" />
        </datalist>
      </Field>
      <Field id="drain-technique" label="Technique" error={fields.technique}>
        <Select id="drain-technique" name="technique" defaultValue="seldinger">
          {TECHNIQUES.map((t) => <option key={t} value={t}>{TECHNIQUE_LABELS[t]}</option>)}
        </Select>
      </Field>
      <Field id="drain-indication" label="Indication" error={fields.indication}>
        <Select id="drain-indication" name="indication" defaultValue="air">
          {INDICATIONS.map((t) => <option key={t} value={t}>{INDICATION_LABELS[t]}</option>)}
        </Select>
      </Field>
      <Field id="drain-drainage" label="Drainage" error={fields.drainage}>
        <Select id="drain-drainage" name="drainage" defaultValue="underwater-seal">
          {DRAINAGES.map((t) => <option key={t} value={t}>{DRAINAGE_LABELS[t]}</option>)}
        </Select>
      </Field>
      <Field id="drain-suction" label="Suction">
        <Select id="drain-suction" value={suction ? "on" : "off"} onChange={(e) => setSuction(e.target.value === "on")}>
          <option value="off">Off</option>
          <option value="on">On</option>
        </Select>
      </Field>
      {suction ? (
        <Field id="drain-kpa" label="Suction level (kPa)" error={fields.suctionKpa}>
          <TextInput id="drain-kpa" name="kpa" type="number" min="0.1" max="10" step="0.1" required />
        </Field>
      ) : null}
      <div className="sm:col-span-2 lg:col-span-3">
        <Button type="submit" disabled={busy}>Save drain</Button>
        <Status message={message} />
      </div>
    </form>
  );
}

export function DrainsPanel({ episodeId, canWrite, drains, thresholds, reExpansion }: Props) {
  const [inserting, setInserting] = useState(false);
  return (
    <Card
      title="Chest drains"
      action={canWrite ? <Button tone="quiet" onClick={() => setInserting((v) => !v)} aria-expanded={inserting}>{inserting ? "Close" : "Record a drain"}</Button> : null}
    >
      {inserting ? <InsertForm episodeId={episodeId} onDone={() => setInserting(false)} /> : null}
      {drains.length === 0 ? (
        <Empty>No chest drain recorded for this episode.</Empty>
      ) : (
        <ul className="space-y-4">
          {drains.map((d) => <DrainRecord key={d.id} d={d} canWrite={canWrite} thresholds={thresholds} reExpansion={reExpansion} />)}
        </ul>
      )}
    </Card>
  );
}
