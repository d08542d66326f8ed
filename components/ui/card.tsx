import type { ReactNode } from "react";

export function Card({ title, action, children, className = "" }: { title?: ReactNode; action?: ReactNode; children: ReactNode; className?: string }) {
  return (
    <section className={`rounded-lg border border-line bg-card p-5 shadow-sm ${className}`}>
      {title || action ? (
        <header className="mb-3 flex flex-wrap items-center justify-between gap-2">
          {title ? <h2 className="text-lg font-bold text-estuary-900">{title}</h2> : <span />}
          {action}
        </header>
      ) : null}
      {children}
    </section>
  );
}

export function PageTitle({ title, subtitle, action }: { title: ReactNode; subtitle?: ReactNode; action?: ReactNode }) {
  return (
    <div className="mb-6 flex flex-wrap items-end justify-between gap-3">
      <div>
        <h1 className="text-2xl font-bold text-ink">{title}</h1>
        {subtitle ? <p className="mt-1 text-ink-soft">{subtitle}</p> : null}
      </div>
      {action}
    </div>
  );
}

type Tone = "neutral" | "good" | "watch" | "alarm" | "info";
const TONES: Record<Tone, string> = {
  neutral: "bg-paper text-ink border-line",
  good: "bg-moss-wash text-moss-ink border-moss-ink/30",
  watch: "bg-amber-wash text-amber-ink border-amber-ink/30",
  alarm: "bg-rust-wash text-rust-ink border-rust-ink/30",
  info: "bg-estuary-50 text-estuary-900 border-estuary-600/30",
};

export function Tag({ tone = "neutral", children }: { tone?: Tone; children: ReactNode }) {
  return <span className={`inline-flex items-center rounded border px-2 py-0.5 text-xs font-bold ${TONES[tone]}`}>{children}</span>;
}

export function Empty({ children }: { children: ReactNode }) {
  return <p className="rounded-md border border-dashed border-line bg-paper px-4 py-6 text-center text-ink-soft">{children}</p>;
}
