"use client";
import { zodResolver } from "@hookform/resolvers/zod";
import { useState, useTransition } from "react";
import { useForm } from "react-hook-form";
import type { z } from "zod";
import { ROLES, ROLE_LABELS, type Role } from "@/lib/auth/permissions";
import { userCreate } from "@/lib/validation/users";
import { PASSWORD_RULE } from "@/lib/validation/common";
import { Card } from "@/components/ui/card";
import { Button } from "@/components/ui/button";
import { Field, Select, TextInput } from "@/components/ui/field";
import { FormMessage } from "@/components/form-status";
import { createUserAction, setPasswordAction, updateUserAction } from "./actions";

interface U { id: string; name: string; email: string; role: Role; disabled: boolean; notifyOnFlag: boolean }
type In = z.input<typeof userCreate>;

export function UsersClient({ users, selfId }: { users: U[]; selfId: string }) {
  const [message, setMessage] = useState<string | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const [pending, start] = useTransition();
  const { register, handleSubmit, reset, setError, formState: { errors } } = useForm<In>({ resolver: zodResolver(userCreate), defaultValues: { role: "registrar" } });

  const onCreate = handleSubmit((values) =>
    start(async () => {
      setMessage(null);
      const res = await createUserAction(values);
      if (res.ok) { reset(); setNotice(`Created ${values.email}.`); }
      else {
        for (const [k, v] of Object.entries(res.fields ?? {})) setError(k as keyof In, { message: v });
        setMessage(res.error);
      }
    }),
  );

  const update = (id: string, patch: Partial<{ role: Role; disabled: boolean; notifyOnFlag: boolean }>) =>
    start(async () => {
      setMessage(null);
      const res = await updateUserAction(id, patch);
      if (!res.ok) setMessage(res.error); else setNotice("Saved.");
    });

  const resetPassword = (u: U) => {
    const password = window.prompt(`New password for ${u.name} (${PASSWORD_RULE.toLowerCase()})`);
    if (!password) return;
    start(async () => {
      const res = await setPasswordAction(u.id, { password });
      if (!res.ok) setMessage(res.error); else setNotice(`New password set for ${u.name}; their sessions end now.`);
    });
  };

  return (
    <div className="space-y-6">
      <Card title="People in your team">
        <div className="overflow-x-auto">
          <table className="w-full text-left text-sm">
            <thead className="text-estuary-900"><tr><th className="py-2">Name</th><th>E-mail</th><th>Role</th><th>Flag e-mails</th><th>Account</th><th /></tr></thead>
            <tbody>
              {users.map((u) => (
                <tr key={u.id} className={`border-t border-line ${u.disabled ? "text-ink-soft" : ""}`}>
                  <td className="py-2 font-bold">{u.name}</td>
                  <td>{u.email}</td>
                  <td>
                    <label className="sr-only" htmlFor={`role-${u.id}`}>Role of {u.name}</label>
                    <Select id={`role-${u.id}`} value={u.role} disabled={pending || u.id === selfId} onChange={(e) => update(u.id, { role: e.target.value as Role })} className="mt-0 py-1">
                      {ROLES.map((r) => <option key={r} value={r}>{ROLE_LABELS[r]}</option>)}
                    </Select>
                  </td>
                  <td>
                    <input type="checkbox" aria-label={`Send flag e-mails to ${u.name}`} checked={u.notifyOnFlag} disabled={pending} onChange={(e) => update(u.id, { notifyOnFlag: e.target.checked })} />
                  </td>
                  <td>{u.disabled ? "Disabled" : "Active"}</td>
                  <td className="space-x-2 whitespace-nowrap text-right">
                    <Button tone="quiet" disabled={pending} onClick={() => resetPassword(u)}>New password</Button>
                    {u.id !== selfId ? (
                      <Button tone={u.disabled ? "quiet" : "danger"} disabled={pending} onClick={() => update(u.id, { disabled: !u.disabled })}>
                        {u.disabled ? "Enable" : "Disable"}
                      </Button>
                    ) : null}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </Card>
      <Card title="Add a person">
        <form onSubmit={(e) => void onCreate(e)} className="grid gap-4 md:grid-cols-2" noValidate>
          <Field id="new-name" label="Full name" error={errors.name?.message}><TextInput id="new-name" {...register("name")} invalid={!!errors.name} /></Field>
          <Field id="new-email" label="E-mail" error={errors.email?.message}><TextInput id="new-email" type="email" {...register("email")} invalid={!!errors.email} /></Field>
          <Field id="new-role" label="Role" error={errors.role?.message}>
            <Select id="new-role" {...register("role")}>{ROLES.map((r) => <option key={r} value={r}>{ROLE_LABELS[r]}</option>)}</Select>
          </Field>
          <Field id="new-password" label="First password" hint={PASSWORD_RULE} error={errors.password?.message}>
            <TextInput id="new-password" type="password" autoComplete="new-password" {...register("password")} invalid={!!errors.password} />
          </Field>
          <div className="md:col-span-2"><Button type="submit" disabled={pending}>Add person</Button></div>
        </form>
      </Card>
      <FormMessage message={message} />
      <p aria-live="polite" className="text-sm text-moss-ink">{notice}</p>
    </div>
  );
}
