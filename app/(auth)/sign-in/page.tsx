import type { Metadata } from "next";
import { redirect } from "next/navigation";
import { currentUser } from "@/lib/auth/session";
import { DEMO_PASSWORD, DEMO_USERS } from "@/db/demo/users";
import { ROLE_LABELS } from "@/lib/auth/permissions";
import { SignInForm } from "./sign-in-form";

export const metadata: Metadata = { title: "Sign in" };
export const dynamic = "force-dynamic";

export default async function SignInPage() {
  if (await currentUser()) redirect("/");
  const demo = process.env.RIMWATCH_DEMO === "1";
  return (
    <main className="mx-auto flex min-h-screen max-w-4xl flex-col justify-center gap-8 px-4 py-10 md:flex-row md:items-center">
      <section className="md:w-1/2">
        <p className="text-sm font-bold uppercase tracking-widest text-estuary-600">Rimwatch</p>
        <h1 className="mt-2 text-3xl font-bold text-ink">Pneumothorax follow-up for respiratory teams</h1>
        <p className="mt-3 text-ink-soft">
          Measure each chest film, follow the episode against expected resorption, and make sure every repeat film happens.
        </p>
        {demo ? (
          <div className="mt-6 rounded-lg border border-line bg-card p-4 text-sm">
            <p className="font-bold">Demo sign-ins (password {DEMO_PASSWORD})</p>
            <ul className="mt-2 space-y-1 figures">
              {DEMO_USERS.filter((u) => u.team === "larkmoor").map((u) => (
                <li key={u.email}>
                  {ROLE_LABELS[u.role].padEnd(14)} {u.email}
                </li>
              ))}
            </ul>
          </div>
        ) : null}
      </section>
      <section className="rounded-lg border border-line bg-card p-6 shadow-sm md:w-1/2">
        <h2 className="mb-4 text-xl font-bold">Sign in</h2>
        <SignInForm />
      </section>
    </main>
  );
}
