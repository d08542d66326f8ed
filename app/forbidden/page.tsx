import Link from "next/link";

export default function Forbidden() {
  return (
    <main className="mx-auto max-w-xl px-4 py-20 text-center">
      <h1 className="text-2xl font-bold">Not part of your role</h1>
      <p className="mt-3 text-ink-soft">Your role in Rimwatch does not include this page. If you need it for your work, ask an administrator.</p>
      <Link href="/" className="mt-6 inline-block font-bold text-estuary-700 underline">
        Back to your start page
      </Link>
    </main>
  );
}
