"use client";
// One form per settings group: values in force, each with its default and source; save or reset to the defaults.
import { useRouter } from "next/navigation";
import { useState } from "react";
import { ApiError, fetchJson } from "@/lib/client/api";
import type { GroupView } from "@/lib/settings-registry";
import { Card, Tag } from "@/components/ui/card";
import { Button } from "@/components/ui/button";
import { Select, TextInput } from "@/components/ui/field";

export function SettingsClient({ groups, canWrite }: { groups: GroupView[]; canWrite: boolean }) {
  return (
    <div className="space-y-6">
      {groups.map((g) => <GroupForm key={g.key} group={g} canWrite={canWrite} />)}
    </div>
  );
}

const asText = (v: unknown) => (typeof v === "number" || typeof v === "string" || typeof v === "boolean" ? String(v) : JSON.stringify(v));

function GroupForm({ group, canWrite }: { group: GroupView; canWrite: boolean }) {
  const router = useRouter();
  const keys = Object.keys(group.fields);
  const [values, setValues] = useState<Record<string, string>>(() => Object.fromEntries(keys.map((k) => [k, asText(group.values[k])])));
  const [errors, setErrors] = useState<Record<string, string>>({});
  const [message, setMessage] = useState<{ tone: "good" | "bad"; text: string } | null>(null);
  const [busy, setBusy] = useState(false);

  async function save(next: Record<string, string>, done: string) {
    setBusy(true);
    setMessage(null);
    setErrors({});
    const payload: Record<string, unknown> = {};
    for (const k of keys) {
      const raw = (next[k] ?? "").trim();
      const num = Number(raw);
      payload[k] = typeof group.defaults[k] === "boolean" ? raw === "true" : raw !== "" && Number.isFinite(num) && typeof group.defaults[k] === "number" ? num : raw;
    }
    try {
      await fetchJson("/api/settings", { method: "PUT", json: { key: group.key, values: payload } });
      setValues(next);
      setMessage({ tone: "good", text: done });
      router.refresh();
    } catch (err) {
      if (err instanceof ApiError) {
        const fields: Record<string, string> = {};
        for (const [k, v] of Object.entries(err.fields)) fields[k.replace(/^values\./, "")] = v;
        setErrors(fields);
        setMessage({ tone: "bad", text: err.message });
      } else setMessage({ tone: "bad", text: "The server could not be reached. Nothing was saved." });
    } finally {
      setBusy(false);
    }
  }

  const defaults = Object.fromEntries(keys.map((k) => [k, asText(group.defaults[k])]));
  const changed = keys.filter((k) => values[k] !== defaults[k]).length;

  return (
    <Card title={group.title} action={changed > 0 ? <Tag tone="watch">{changed} changed from the defaults</Tag> : <Tag tone="good">All defaults</Tag>}>
      <p className="mb-4 text-sm text-ink-soft">{group.description}</p>
      <form
        aria-label={group.title}
        onSubmit={(e) => {
          e.preventDefault();
          void save(values, "Saved. The new values apply from the next evaluation of each episode.");
        }}
      >
        <div className="divide-y divide-line">
          {keys.map((k) => {
            const f = group.fields[k];
            if (!f) return null;
            const id = `${group.key}-${k}`;
            return (
              <div key={k} className="grid gap-2 py-3 md:grid-cols-[minmax(0,2fr)_minmax(0,1fr)_minmax(0,3fr)]">
                <label htmlFor={id} className="text-sm font-bold">
                  {f.label}
                  {f.unit ? <span className="block font-normal text-ink-soft">{f.unit}</span> : null}
                </label>
                <div>
                  {typeof group.defaults[k] === "boolean" ? (
                    <Select id={id} value={values[k] ?? ""} disabled={!canWrite || busy} aria-describedby={`${id}-source`} onChange={(e) => setValues((v) => ({ ...v, [k]: e.target.value }))} className="mt-0">
                      <option value="true">On</option>
                      <option value="false">Off</option>
                    </Select>
                  ) : (
                  <TextInput
                    id={id}
                    type="number"
                    step={f.step ?? "any"}
                    value={values[k] ?? ""}
                    disabled={!canWrite || busy}
                    invalid={!!errors[k]}
                    aria-describedby={`${id}-source`}
                    onChange={(e) => setValues((v) => ({ ...v, [k]: e.target.value }))}
                    className="mt-0"
                  />
                  )}
                  {errors[k] ? <p role="alert" className="mt-1 text-sm font-bold text-rust-ink">{errors[k]}</p> : null}
                </div>
                <div id={`${id}-source`} className="text-xs text-ink-soft">
                  <span className="font-bold text-ink">Default {typeof group.defaults[k] === "boolean" ? (group.defaults[k] ? "on" : "off") : defaults[k]}</span>{" "}
                  <Tag tone={f.basis === "published" ? "info" : "neutral"}>{f.basis}</Tag>
                  <p className="mt-1">{f.source}</p>
                  {canWrite && values[k] !== defaults[k] ? (
                    <button type="button" className="mt-1 font-bold text-estuary-700 underline" onClick={() => setValues((v) => ({ ...v, [k]: defaults[k] ?? "" }))}>
                      Use the default
                    </button>
                  ) : null}
                </div>
              </div>
            );
          })}
        </div>
        {message ? (
          <p role={message.tone === "bad" ? "alert" : "status"} className={`mt-3 text-sm font-bold ${message.tone === "bad" ? "text-rust-ink" : "text-moss-ink"}`}>{message.text}</p>
        ) : null}
        {canWrite ? (
          <div className="mt-4 flex flex-wrap gap-2">
            <Button type="submit" disabled={busy}>{busy ? "Saving…" : `Save ${group.title.toLowerCase()}`}</Button>
            <Button
              tone="quiet"
              disabled={busy}
              onClick={() => {
                if (window.confirm(`Put every ${group.title.toLowerCase()} value back to its default?`)) void save(defaults, "All values are back to their defaults.");
              }}
            >
              Reset all to defaults
            </Button>
          </div>
        ) : (
          <p className="mt-3 text-sm text-ink-soft">Only an administrator can change these settings.</p>
        )}
      </form>
    </Card>
  );
}
