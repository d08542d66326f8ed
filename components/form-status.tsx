"use client";
import type { FieldValues, Path, UseFormSetError } from "react-hook-form";
import { ApiError } from "@/lib/client/api";

/** Puts the server's field messages onto the form's fields and returns the general message. */
export function applyServerError<T extends FieldValues>(err: unknown, setError: UseFormSetError<T>): string {
  if (err instanceof ApiError) {
    for (const [field, message] of Object.entries(err.fields)) setError(field as Path<T>, { type: "server", message });
    return err.message;
  }
  return "Rimwatch could not reach the server. Check your connection and try again.";
}

export function FormMessage({ message }: { message: string | null }) {
  return (
    <div aria-live="polite" className="min-h-6">
      {message ? <p role="alert" className="rounded-md bg-rust-wash px-3 py-2 text-sm font-bold text-rust-ink">{message}</p> : null}
    </div>
  );
}
