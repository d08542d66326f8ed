"use client";
import { signOut } from "next-auth/react";

export function SignOutButton() {
  return (
    <button type="button" onClick={() => void signOut({ callbackUrl: "/sign-in" })} className="rounded px-2 py-1 text-sm text-estuary-50 underline-offset-2 hover:underline">
      Sign out
    </button>
  );
}
