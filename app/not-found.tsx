import Link from "next/link";

export default function NotFound() {
  return (
    <main className="mx-auto max-w-xl px-4 py-20 text-center">
      <h1 className="text-2xl font-bold">Nothing here</h1>
      <p className="mt-3 text-ink-soft">That record does not exist, or it belongs to another team.</p>
      <Link href="/" className="mt-6 inline-block font-bold text-estuary-700 underline">
        Back to your start page
      </Link>
    </main>
  );
}
