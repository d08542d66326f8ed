import Link from "next/link";
import { requireUser } from "@/lib/auth/session";
import { ROLE_LABELS } from "@/lib/auth/permissions";
import { NAV_BY_ROLE } from "@/components/nav";
import { MainNav } from "@/components/main-nav";
import { SignOutButton } from "@/components/sign-out-button";
import { Providers } from "@/components/providers";
import { Caution } from "@/components/caution";

export const dynamic = "force-dynamic";

export default async function ClinicLayout({ children }: { children: React.ReactNode }) {
  const user = await requireUser();
  return (
    <Providers>
      <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:left-2 focus:top-2 focus:z-50 focus:rounded focus:bg-card focus:p-2">
        Skip to content
      </a>
      <header className="no-print bg-estuary-900 text-white">
        <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-4 px-4 py-2">
          <Link href="/" className="flex items-center gap-2 text-lg font-bold tracking-wide">
            <RimMark />
            Rimwatch
          </Link>
          <MainNav items={NAV_BY_ROLE[user.role]} />
          <div className="ml-auto flex items-center gap-3 text-sm">
            <span>
              {user.name} <span className="text-estuary-100">· {ROLE_LABELS[user.role]}</span>
            </span>
            <SignOutButton />
          </div>
        </div>
      </header>
      <main id="main" className="mx-auto max-w-7xl px-4 py-6">
        {children}
        <Caution />
      </main>
    </Providers>
  );
}

/** Rimwatch's mark: a lung outline with a rim of air beside it. */
function RimMark() {
  return (
    <svg width="26" height="26" viewBox="0 0 26 26" aria-hidden="true">
      <path d="M13 2 C7 4 4 10 4 17 C4 22 7 24 10 24 L13 24 Z" fill="none" stroke="#cfe6e6" strokeWidth="2" strokeDasharray="3 2" />
      <path d="M13 5 C9 7 7 12 7 17 C7 20 9 22 11 22 L13 22 Z" fill="#cfe6e6" />
      <path d="M14 3 L14 24" stroke="#f2b544" strokeWidth="2" />
    </svg>
  );
}
