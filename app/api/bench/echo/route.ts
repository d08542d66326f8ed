// Benchmark floor for bench/trend-api.ts: a bare route handler that answers with bytes it was given once.
// Exists only when the server runs with RIMWATCH_BENCH=1; otherwise every method answers 404 like any unknown route.
// It holds no patient data of its own and reaches no database.
export const dynamic = "force-dynamic";

const enabled = () => process.env.RIMWATCH_BENCH === "1";
const MAX_BYTES = 5 * 1024 * 1024;
const store = globalThis as unknown as { rimwatchBenchEcho?: Uint8Array };

const notFound = () => Response.json({ error: { code: "not_found", message: "Not found." } }, { status: 404 });

export async function GET(): Promise<Response> {
  if (!enabled()) return notFound();
  const body = store.rimwatchBenchEcho ?? new Uint8Array();
  return new Response(body.slice(), { headers: { "Content-Type": "application/json", "Cache-Control": "no-store" } });
}

export async function PUT(req: Request): Promise<Response> {
  if (!enabled()) return notFound();
  const buf = new Uint8Array(await req.arrayBuffer());
  if (buf.byteLength > MAX_BYTES) return Response.json({ error: { code: "too_large", message: "At most 5 MB." } }, { status: 413 });
  store.rimwatchBenchEcho = buf;
  return Response.json({ ok: true, bytes: buf.byteLength });
}
