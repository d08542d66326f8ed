import type { ButtonHTMLAttributes } from "react";

type Tone = "primary" | "quiet" | "danger";
const TONES: Record<Tone, string> = {
  primary: "bg-estuary-700 text-white hover:bg-estuary-900 disabled:bg-ink-soft/40",
  quiet: "bg-card text-estuary-900 border border-line hover:bg-estuary-50 disabled:text-ink-soft/60",
  danger: "bg-rust-ink text-white hover:bg-[#7f1d15] disabled:bg-ink-soft/40",
};

export function buttonClass(tone: Tone = "primary", extra = "") {
  return `inline-flex items-center justify-center gap-2 rounded-md px-4 py-2 text-sm font-bold transition-colors disabled:cursor-not-allowed ${TONES[tone]} ${extra}`;
}

export function Button({ tone = "primary", className = "", ...props }: ButtonHTMLAttributes<HTMLButtonElement> & { tone?: Tone }) {
  return <button type="button" {...props} className={buttonClass(tone, className)} />;
}
