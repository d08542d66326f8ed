/**
 * Benchmark: the film desk in Debian's Chromium on a 3,000 x 3,000 film.
 *
 * Prints (never asserts):
 *  1. time from navigation to the first caliper being placeable (the stage's data-desk-ready flag),
 *     against two floors measured in the same run: opening the same display image on its own (the
 *     transfer and decode no film desk can avoid), and loading another clinic page of the app;
 *  2. frame intervals while a caliper is drawn and while one of its ends is dragged, against the
 *     floor of the same page receiving the same pointer moves with no button pressed;
 *  3. how often the film layer was redrawn during those drags (the design says never);
 *  4. window/level repaint times (the quick copy while dragging, and the full-resolution pass).
 * Targets: first caliper placeable in under 1.5 s; drag p95 frame interval <= 2 x the floor's p95 (60 fps
 * where the floor has it); no film-layer redraw during a caliper drag.
 *
 * Run by bench/run.sh (which starts the app and exports RIMWATCH_BENCH_URL), or by hand against a
 * running app: RIMWATCH_TEST_URL=http://127.0.0.1:3000 node --import tsx bench/film-desk.ts
 * Needs the demo data (db/demo) and /usr/bin/chromium. Writes bench/results/film-desk.json.
 */
import { mkdirSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { chromium, type Browser, type BrowserContext, type Page } from "@playwright/test";
import { signIn, type Client } from "../tests/support/http";
import { syntheticChestFilm, syntheticChestPng } from "../tests/support/synthetic-film";
import { DEMO_PASSWORD } from "../db/demo/users";

const SIZE = 3000;
const RUNS = Number(process.env.BENCH_RUNS ?? 5);
const MOVES = 120;
const READY_TARGET_MS = 1500;
const base = process.env.RIMWATCH_BENCH_URL ?? process.env.RIMWATCH_TEST_URL;
if (!base) throw new Error("Set RIMWATCH_BENCH_URL (or RIMWATCH_TEST_URL) to the running app");
process.env.RIMWATCH_TEST_URL = base;

const CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"];

const median = (xs: number[]) => quantile(xs, 0.5);
function quantile(xs: number[], q: number): number {
  if (xs.length === 0) return Number.NaN;
  const s = [...xs].sort((a, b) => a - b);
  const i = Math.min(s.length - 1, Math.max(0, Math.ceil(q * s.length) - 1));
  return s[i] as number;
}
const ms = (v: number) => `${v.toFixed(1)} ms`;

async function json<T>(res: Response, what: string): Promise<T> {
  if (!res.ok) throw new Error(`${what} answered ${res.status}: ${await res.text()}`);
  return (await res.json()) as T;
}

/** An invented patient with a right pneumothorax and the synthetic film as a PNG, through the API. */
async function setUp(client: Client): Promise<string> {
  const stamp = Date.now().toString(36).toUpperCase().slice(-8);
  const { patient } = await json<{ patient: { id: string } }>(
    await client.send("POST", "/api/patients", { hospitalNumber: `BN-${stamp}`, familyName: "Benchley", givenName: "Orla", dateOfBirth: "1988-02-17", sex: "female" }),
    "patient",
  );
  const { episode } = await json<{ episode: { id: string } }>(
    await client.send("POST", `/api/patients/${patient.id}/episodes`, { side: "right", presentedOn: "2026-11-28", aetiology: "primary-spontaneous", management: "observation" }),
    "episode",
  );
  const t0 = performance.now();
  // With detector-like noise, so the PNG weighs what a real film's does.
  const png = await syntheticChestPng(syntheticChestFilm({ width: SIZE, height: SIZE, noise: 60 }));
  console.log(`drew the ${SIZE} x ${SIZE} synthetic film (${(png.length / 1e6).toFixed(1)} MB PNG) in ${ms(performance.now() - t0)}`);
  const { film } = await json<{ film: { id: string; display: { width: number; height: number } } }>(
    await client.fetch(`/api/episodes/${episode.id}/films`, { method: "POST", headers: { "content-type": "image/png", "x-film-filename": "bench-3000.png" }, body: new Uint8Array(png) }),
    "upload",
  );
  console.log(`uploaded: display image ${film.display.width} x ${film.display.height}`);
  return film.id;
}

async function newContext(browser: Browser, cookie: string): Promise<BrowserContext> {
  const ctx = await browser.newContext({ viewport: { width: 1280, height: 860 } });
  await ctx.addCookies(
    cookie.split("; ").map((kv) => {
      const i = kv.indexOf("=");
      return { name: kv.slice(0, i), value: kv.slice(i + 1), url: base as string };
    }),
  );
  return ctx;
}

interface DeskTiming {
  /** Navigation start to the first caliper being placeable. */
  ready: number;
  /** ... to the page's scripts having run (DOMContentLoaded end). */
  scripts: number;
  /** ... to the last byte of the film's display image. */
  image: number;
}

/** Milliseconds from navigation start until the desk says the first caliper can be placed, with two waypoints. */
async function deskReady(page: Page, filmId: string): Promise<DeskTiming> {
  await page.goto(`${base}/films/${filmId}`, { waitUntil: "commit" });
  await page.waitForSelector('[data-desk-ready="true"]', { timeout: 120_000 });
  return page.evaluate(() => {
    const nav = performance.getEntriesByType("navigation")[0] as PerformanceNavigationTiming | undefined;
    const img = performance.getEntriesByType("resource").find((e) => e.name.includes("variant=display")) as PerformanceResourceTiming | undefined;
    return { ready: performance.now(), scripts: nav?.domContentLoadedEventEnd ?? Number.NaN, image: img?.responseEnd ?? Number.NaN };
  });
}

/** Second floor: another clinic page of the same app (the patient list), to its load event. */
async function plainPage(page: Page): Promise<number> {
  await page.goto(`${base}/patients`, { waitUntil: "load" });
  return page.evaluate(() => {
    const nav = performance.getEntriesByType("navigation")[0] as PerformanceNavigationTiming | undefined;
    return nav ? nav.loadEventEnd : performance.now();
  });
}

/** Floor: the same display image opened on its own, to its load event (bytes plus decode). */
async function imageAlone(page: Page, filmId: string): Promise<number> {
  await page.goto(`${base}/api/films/${filmId}/image?variant=display`, { waitUntil: "load" });
  return page.evaluate(() => {
    const nav = performance.getEntriesByType("navigation")[0] as PerformanceNavigationTiming | undefined;
    return nav ? nav.loadEventEnd : performance.now();
  });
}

/** Frame intervals (ms) recorded by requestAnimationFrame while `act` runs. */
async function frames(page: Page, act: () => Promise<void>): Promise<number[]> {
  // A string, so the bundler's helpers never leak into the page.
  // One loop per recording (a generation number stops the previous one).
  await page.evaluate(`(() => {
    const gen = (window.__gen = (window.__gen || 0) + 1);
    window.__rec = true;
    window.__frames = [];
    const tick = (t) => { if (window.__gen !== gen || !window.__rec) return; window.__frames.push(t); requestAnimationFrame(tick); };
    requestAnimationFrame(tick);
  })()`);
  await act();
  const stamps = await page.evaluate(() => {
    const w = window as unknown as { __rec: boolean; __frames: number[] };
    w.__rec = false;
    return w.__frames;
  });
  return stamps.slice(1).map((t, i) => t - (stamps[i] as number));
}

async function stageView(page: Page) {
  const stage = page.getByTestId("film-stage");
  const box = await stage.boundingBox();
  if (!box) throw new Error("no stage");
  const scale = Number(await stage.getAttribute("data-view-scale"));
  const vx = Number(await stage.getAttribute("data-view-x"));
  const vy = Number(await stage.getAttribute("data-view-y"));
  return { box, at: (x: number, y: number) => ({ x: box.x + vx + x * scale, y: box.y + vy + y * scale }) };
}

async function moveAlong(page: Page, from: { x: number; y: number }, to: { x: number; y: number }) {
  for (let i = 1; i <= MOVES; i += 1) await page.mouse.move(from.x + ((to.x - from.x) * i) / MOVES, from.y + ((to.y - from.y) * i) / MOVES);
}

const imageDraws = (page: Page) => page.evaluate(() => (window as unknown as { __filmDeskImageDraws?: number }).__filmDeskImageDraws ?? 0);

async function main() {
  const client = await signIn("registrar@larkmoor.example", DEMO_PASSWORD);
  if (!client.ok) throw new Error(`demo sign-in failed: ${client.error ?? "?"}`);
  const filmId = await setUp(client);
  const browser = await chromium.launch({ executablePath: process.env.CHROMIUM_PATH ?? "/usr/bin/chromium", args: CHROMIUM_ARGS });
  try {
    // 1. Navigation to a placeable first caliper, each run in a fresh context (cold cache); one warm-up.
    const desk: DeskTiming[] = [];
    const floor: number[] = [];
    const plain: number[] = [];
    for (let run = 0; run <= RUNS; run += 1) {
      const a = await newContext(browser, client.cookie);
      const d = await deskReady(await a.newPage(), filmId);
      await a.close();
      const b = await newContext(browser, client.cookie);
      const img = await imageAlone(await b.newPage(), filmId);
      await b.close();
      const c = await newContext(browser, client.cookie);
      const p = await plainPage(await c.newPage());
      await c.close();
      if (run > 0) {
        desk.push(d);
        floor.push(img);
        plain.push(p);
      }
    }
    const ready = desk.map((d) => d.ready);

    // 2-3. Frames while drawing a caliper and dragging its end, against hover moves as the floor.
    const ctx = await newContext(browser, client.cookie);
    const page = await ctx.newPage();
    await deskReady(page, filmId);
    const k = SIZE / 1300; // the synthetic geometry is drawn on a 1,300-pixel-wide base
    const v = await stageView(page);
    const a = v.at(100 * k, 800 * (SIZE / 1500));
    const b = v.at(600 * k, 800 * (SIZE / 1500));
    const hover = await frames(page, async () => {
      await page.mouse.move(a.x, a.y + 40);
      await moveAlong(page, { x: a.x, y: a.y + 40 }, { x: b.x, y: b.y + 40 });
    });
    const drawsBefore = await imageDraws(page);
    const drawing = await frames(page, async () => {
      await page.mouse.move(a.x, a.y);
      await page.mouse.down();
      await moveAlong(page, a, b);
      await page.mouse.up();
    });
    const endDrag = await frames(page, async () => {
      await page.mouse.move(b.x, b.y);
      await page.mouse.down();
      await moveAlong(page, b, { x: b.x - 80, y: b.y + 30 });
      await page.mouse.up();
    });
    const redraws = (await imageDraws(page)) - drawsBefore;

    // 4. Window/level: a drag in window mode, then the full-resolution pass.
    await page.getByRole("button", { name: "Window", exact: true }).click();
    await page.mouse.move(v.box.x + 300, v.box.y + 300);
    await page.mouse.down();
    await moveAlong(page, { x: v.box.x + 300, y: v.box.y + 300 }, { x: v.box.x + 180, y: v.box.y + 260 });
    await page.mouse.up();
    await page.waitForTimeout(1500);
    const wl = await page.evaluate(() => (window as unknown as { __filmDeskWindowMs?: { preview: number[]; full: number[] } }).__filmDeskWindowMs ?? { preview: [], full: [] });
    await ctx.close();

    const readyMed = median(ready);
    const floorMed = median(floor);
    const hoverP95 = quantile(hover, 0.95);
    const drawP95 = quantile(drawing, 0.95);
    const endP95 = quantile(endDrag, 0.95);
    console.log(`film ${SIZE} x ${SIZE}, ${RUNS} cold navigations`);
    console.log(`first caliper placeable: median ${ms(readyMed)} (runs ${ready.map((x) => x.toFixed(0)).join(", ")} ms)`);
    console.log(`  of which: page scripts run by ${ms(median(desk.map((d) => d.scripts)))}, film image received by ${ms(median(desk.map((d) => d.image)))} (medians)`);
    console.log(`floor, the display image alone: median ${ms(floorMed)} (runs ${floor.map((x) => x.toFixed(0)).join(", ")} ms)`);
    console.log(`floor, a clinic page without a film (patient list) to load: median ${ms(median(plain))}`);
    console.log(
      `ratio first-caliper-placeable / image alone: ${(readyMed / floorMed).toFixed(2)}; / plain clinic page: ${(readyMed / median(plain)).toFixed(2)}; ` +
        `median ${ms(readyMed)} (target < ${READY_TARGET_MS} ms) ${readyMed < READY_TARGET_MS ? "OK" : "OVER TARGET"}`,
    );
    console.log(`frame intervals, hover (floor): p50 ${ms(median(hover))}, p95 ${ms(hoverP95)}, max ${ms(Math.max(...hover))}, ${hover.length} frames`);
    console.log(`frame intervals, drawing a caliper: p50 ${ms(median(drawing))}, p95 ${ms(drawP95)}, max ${ms(Math.max(...drawing))}, ${drawing.length} frames`);
    console.log(`frame intervals, dragging a caliper end: p50 ${ms(median(endDrag))}, p95 ${ms(endP95)}, max ${ms(Math.max(...endDrag))}, ${endDrag.length} frames`);
    console.log(`ratio drag p95 / hover p95: drawing ${(drawP95 / hoverP95).toFixed(2)}, end ${(endP95 / hoverP95).toFixed(2)} (target <= 2)`);
    console.log(`film layer redraws during the two caliper drags: ${redraws} (target 0)`);
    console.log(`window/level repaint: quick copy p50 ${ms(median(wl.preview))} over ${wl.preview.length} repaints; full ${SIZE} x ${SIZE} pass p50 ${ms(median(wl.full))} over ${wl.full.length}`);
    const over = drawP95 / hoverP95 > 2 || endP95 / hoverP95 > 2 || redraws > 0 || readyMed >= READY_TARGET_MS;
    if (over) console.log("OVER TARGET");

    const dir = join(process.cwd(), "bench", "results");
    mkdirSync(dir, { recursive: true });
    writeFileSync(
      join(dir, "film-desk.json"),
      JSON.stringify({ size: SIZE, runs: RUNS, desk, imageAloneMs: floor, plainPageMs: plain, hover, drawing, endDrag, redraws, windowLevelMs: wl, overTarget: over }, null, 2),
    );
  } finally {
    await browser.close();
  }
}

main().catch((err: unknown) => {
  console.error(err);
  process.exit(1);
});
