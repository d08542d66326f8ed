// The film desk in a browser: a registrar places the caliper set on a synthetic film of known geometry
// and spacing by dragging on the canvas, uses the keyboard and undo, saves; a stale save is refused and
// loses nothing; a consultant signs the reading off. Figures are checked against the published formulas.
import { readFileSync } from "node:fs";
import { expect, test, type Page } from "@playwright/test";
import { fixtureDir } from "../support/dicom-fixtures";
import { SYNTHETIC_CALIPERS, SYNTHETIC_SPACING_MM, writeSyntheticDicom } from "../support/synthetic-film";
import { signInAs } from "./support";

type Name = keyof typeof SYNTHETIC_CALIPERS;
interface Pt {
  x: number;
  y: number;
}
interface Seg {
  a: Pt;
  b: Pt;
}
interface Measurement {
  id: string;
  version: number;
  calipers: Partial<Record<Name, Seg | null>>;
  figures: { lightPercent: number | null; rheaPercent: number | null; collinsPercent: number | null; aidCm: number | null; apexCm: number | null; hilumCm: number | null };
  results: { guideline: { bts: { size: string }; accp: { size: string } } };
  signedOff: { by: { name: string } } | null;
}

const ORDER: Name[] = ["hemithorax", "lung", "apex", "upper", "lower", "hilum"];
const mm = (s: Seg) => Math.hypot(s.b.x - s.a.x, s.b.y - s.a.y) * SYNTHETIC_SPACING_MM; // square 0.2 mm pixels (Imager Pixel Spacing 0.2\0.2)

/** Rhea nomogram (AID cm -> %): Rhea JT et al., Radiology 1982;144:733-736, as tabulated in Wyatt JP et al., Oxford Handbook of A&E Medicine 1999, p. 114. */
const RHEA: [number, number][] = [[0.5, 10], [1, 14], [1.5, 18], [2, 23], [2.5, 27], [3, 32], [3.5, 36], [4, 40], [5, 49]];
function rhea(aid: number): number {
  for (let i = 0; i < RHEA.length - 1; i += 1) {
    const [x0, y0] = RHEA[i] as [number, number];
    const [x1, y1] = RHEA[i + 1] as [number, number];
    if (aid >= x0 && aid <= x1) return y0 + ((aid - x0) / (x1 - x0)) * (y1 - y0);
  }
  throw new Error(`AID ${aid} outside the nomogram`);
}

/** Where a film pixel is on the screen, from the view the film desk publishes on its stage. */
async function screenOf(page: Page) {
  const stage = page.getByTestId("film-stage");
  const box = await stage.boundingBox();
  if (!box) throw new Error("no stage");
  const scale = Number(await stage.getAttribute("data-view-scale"));
  const vx = Number(await stage.getAttribute("data-view-x"));
  const vy = Number(await stage.getAttribute("data-view-y"));
  return { scale, at: (p: Pt) => ({ x: box.x + vx + p.x * scale, y: box.y + vy + p.y * scale }) };
}

async function drag(page: Page, from: Pt, to: Pt) {
  await page.mouse.move(from.x, from.y);
  await page.mouse.down();
  for (let i = 1; i <= 8; i += 1) await page.mouse.move(from.x + ((to.x - from.x) * i) / 8, from.y + ((to.y - from.y) * i) / 8);
  await page.mouse.up();
}

async function readings(page: Page, filmId: string): Promise<{ versions: Measurement[]; readers: { current: Measurement }[] }> {
  const res = await page.request.get(`/api/films/${filmId}/measurements`);
  expect(res.status()).toBe(200);
  return (await res.json()) as { versions: Measurement[]; readers: { current: Measurement }[] };
}

test("the caliper set on a synthetic film: drags, keys, undo, save, a stale save kept, sign-off", async ({ page, browser }, testInfo) => {
  test.setTimeout(240_000);
  const { dir, cleanup } = fixtureDir("rimwatch-e2e-desk-");
  try {
    // Setup through the API: an invented patient with a right pneumothorax, and the synthetic PA film.
    await signInAs(page, "registrar");
    const stamp = Date.now().toString(36).toUpperCase().slice(-8);
    const patientRes = await page.request.post("/api/patients", {
      data: { hospitalNumber: `FD-${stamp}`, familyName: "Quenby", givenName: "Aurelio", dateOfBirth: "1994-06-11", sex: "male" },
    });
    expect(patientRes.status()).toBe(201);
    const { patient } = (await patientRes.json()) as { patient: { id: string } };
    const episodeRes = await page.request.post(`/api/patients/${patient.id}/episodes`, {
      data: { side: "right", presentedOn: "2026-11-28", aetiology: "primary-spontaneous", management: "observation" },
    });
    expect(episodeRes.status()).toBe(201);
    const { episode } = (await episodeRes.json()) as { episode: { id: string } };
    const bytes = readFileSync(writeSyntheticDicom(dir, `desk-${stamp}`));
    const upload = await page.request.post(`/api/episodes/${episode.id}/films`, {
      headers: { "content-type": "application/dicom", "x-film-filename": "synthetic-chest.dcm" },
      data: bytes,
    });
    expect(upload.status()).toBe(201);
    const { film } = (await upload.json()) as { film: { id: string; columns: number; rows: number; calibration: { film: { rowMm: number } | null } } };
    expect(film.columns).toBe(1300);
    expect(film.calibration.film?.rowMm).toBe(SYNTHETIC_SPACING_MM);
    expect((await page.request.patch(`/api/films/${film.id}`, { data: { position: "erect" } })).status()).toBe(200);

    // The desk opens with the guide asking for the hemithorax width.
    await page.goto(`/films/${film.id}`);
    const stage = page.getByTestId("film-stage");
    await expect(stage).toHaveAttribute("data-desk-ready", "true", { timeout: 60_000 });
    await expect(page.getByTestId("next-caliper")).toContainText("Hemithorax width");

    // Six drags, one per caliper, at the screen positions of the film's known edges.
    const view = await screenOf(page);
    for (const name of ORDER) {
      const s = SYNTHETIC_CALIPERS[name];
      await drag(page, view.at(s.a), view.at(s.b));
    }
    await expect(page.getByTestId("next-caliper")).toContainText("Caliper set complete");
    await expect(page.getByRole("listitem").filter({ hasText: "Hemithorax width" })).toContainText(/\d+\.\d mm/);

    // Keyboard: Escape clears the selection, Tab selects the first end (hemithorax, first end);
    // Shift+Left moves it 10 film pixels = 2 mm at 0.2 mm a pixel.
    const hemiItem = page.getByRole("listitem").filter({ hasText: "Hemithorax width" });
    const hemiBefore = (await hemiItem.textContent()) ?? "";
    const hemiMm = Number(/([\d.]+) mm/.exec(hemiBefore)?.[1]);
    await stage.focus();
    await page.keyboard.press("Escape");
    await page.keyboard.press("Tab");
    await page.keyboard.press("Shift+ArrowLeft");
    await expect(hemiItem).toContainText(`${(hemiMm + 10 * SYNTHETIC_SPACING_MM).toFixed(1)} mm`);
    await page.keyboard.press("ControlOrMeta+z");
    await expect(hemiItem).toContainText(`${hemiMm.toFixed(1)} mm`);
    await page.keyboard.press("ControlOrMeta+Shift+z");
    await expect(hemiItem).toContainText(`${(hemiMm + 10 * SYNTHETIC_SPACING_MM).toFixed(1)} mm`);
    await page.keyboard.press("ControlOrMeta+y");
    await page.keyboard.press("ControlOrMeta+z");
    await expect(hemiItem).toContainText(`${hemiMm.toFixed(1)} mm`);

    await page.getByRole("button", { name: "Save measurement" }).click();
    await expect(page.getByText("saved, version 1")).toBeVisible({ timeout: 30_000 });

    // The stored figures are the published formulas applied to the stored caliper lengths.
    const v1 = (await readings(page, film.id)).readers[0]?.current;
    if (!v1) throw new Error("no reading stored");
    const len = Object.fromEntries(ORDER.map((n) => [n, mm(v1.calipers[n] as Seg)])) as Record<Name, number>;
    // Light RW, Pleural Diseases (textbook, 1980s editions): 100 (1 - L^3 / H^3).
    expect(v1.figures.lightPercent).toBeCloseTo(100 * (1 - len.lung ** 3 / len.hemithorax ** 3), 6);
    // Collins CD et al., AJR 1995;165:1127-1130: 4.2 + 4.7 (A + B + C), cm.
    const sumCm = (len.apex + len.upper + len.lower) / 10;
    expect(v1.figures.collinsPercent).toBeCloseTo(4.2 + 4.7 * sumCm, 6);
    // Rhea JT et al., Radiology 1982: the nomogram read at AID = (A + B + C) / 3.
    expect(v1.figures.aidCm).toBeCloseTo(sumCm / 3, 6);
    expect(v1.figures.rheaPercent).toBeCloseTo(rhea(sumCm / 3), 6);
    expect(v1.figures.apexCm).toBeCloseTo(len.apex / 10, 6);
    expect(v1.figures.hilumCm).toBeCloseTo(len.hilum / 10, 6);
    // And the drags landed on the film's known geometry (within a screen pixel or two at this zoom):
    // H 100 mm, L 77 mm, apex 40, upper 25, lower 10 mm; Light 100 (1 - 0.77^3) = 54.3 %, Collins
    // 4.2 + 4.7 x 7.5 = 39.45 %, Rhea at AID 2.5 cm = 27 % (same sources as above).
    const tol = 2.5 / view.scale * SYNTHETIC_SPACING_MM; // mm for 2.5 screen pixels
    expect(Math.abs(len.hemithorax - 100)).toBeLessThan(tol);
    expect(Math.abs(len.lung - 77)).toBeLessThan(tol);
    expect(Math.abs(len.apex - 40)).toBeLessThan(tol);
    expect(Math.abs(len.upper - 25)).toBeLessThan(tol);
    expect(Math.abs(len.lower - 10)).toBeLessThan(tol);
    expect(Math.abs((v1.figures.lightPercent ?? 0) - 54.35)).toBeLessThan(2);
    expect(Math.abs((v1.figures.collinsPercent ?? 0) - 39.45)).toBeLessThan(1.5);
    expect(Math.abs((v1.figures.rheaPercent ?? 0) - 27)).toBeLessThan(1);
    // BTS 2010 (hilum >= 2 cm) and ACCP 2001 (apex >= 3 cm): both large here, shown separately.
    expect(v1.results.guideline.bts.size).toBe("large");
    expect(v1.results.guideline.accp.size).toBe("large");
    // The panel shows the server's figures.
    await expect(page.getByTestId("figure-light")).toContainText(`${(v1.figures.lightPercent ?? 0).toFixed(1)} %`);
    await expect(page.getByTestId("figure-collins")).toContainText(`${(v1.figures.collinsPercent ?? 0).toFixed(1)} %`);

    // A stale save: the reader moves an end here while version 2 is saved elsewhere (another tab).
    await stage.focus();
    await page.keyboard.press("Escape");
    await page.keyboard.press("Tab");
    await page.keyboard.press("Tab");
    await page.keyboard.press("Tab"); // hemithorax first end, second end, then the lung caliper's first end
    await page.keyboard.press("Shift+ArrowRight");
    const lungItem = page.getByRole("listitem").filter({ hasText: "Lung width" });
    const mine = `${(len.lung - 10 * SYNTHETIC_SPACING_MM).toFixed(1)} mm`;
    await expect(lungItem).toContainText(mine);
    const elsewhere = await page.request.put(`/api/measurements/${v1.id}`, {
      data: { calipers: v1.calipers, basedOnVersion: 1, reason: "saved from another tab" },
    });
    expect(elsewhere.status()).toBe(200);
    await page.getByRole("button", { name: "Save as version 2" }).click();
    const conflict = page.getByTestId("save-conflict");
    await expect(conflict).toContainText("Version 2 of this measurement was saved by");
    await expect(conflict).toContainText("Your calipers are kept");
    await expect(lungItem).toContainText(mine); // nothing lost
    await conflict.getByRole("button", { name: "Save mine on top" }).click();
    await expect(page.getByText("saved, version 3")).toBeVisible({ timeout: 30_000 });
    const after = await readings(page, film.id);
    const v3 = after.readers[0]?.current;
    expect(v3?.version).toBe(3);
    expect(mm(v3?.calipers.lung as Seg).toFixed(1)).toBe(mine.replace(" mm", ""));
    expect(after.versions.map((v) => v.version).sort()).toEqual([1, 2, 3]);

    // The picture of the workspace for the README (docs/film-desk.png when RIMWATCH_DOCS_SHOTS is set).
    await page.setViewportSize({ width: 1440, height: 1000 });
    await page.evaluate(() => window.scrollTo(0, 0));
    await expect(stage).toHaveAttribute("data-desk-ready", "true");
    await page.screenshot({ path: process.env.RIMWATCH_DOCS_SHOTS ? "docs/film-desk.png" : testInfo.outputPath("film-desk.png") });

    // A consultant signs the current version off.
    const consultantContext = await browser.newContext();
    const cp = await consultantContext.newPage();
    await signInAs(cp, "consultant");
    await cp.goto(`/films/${film.id}`);
    await expect(cp.getByTestId("film-stage")).toHaveAttribute("data-desk-ready", "true", { timeout: 60_000 });
    await cp.getByRole("button", { name: "Sign off version 3" }).click();
    await expect(cp.getByTestId("signed-off")).toContainText("Signed off by Dr Faisal Orme");
    const signed = (await readings(cp, film.id)).readers[0]?.current;
    expect(signed?.signedOff?.by.name).toBe("Dr Faisal Orme");
    await consultantContext.close();
  } finally {
    cleanup();
  }
});
