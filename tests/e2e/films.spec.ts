import { readFileSync } from "node:fs";
import { randomInt } from "node:crypto";
import { expect, test } from "@playwright/test";
import sharp from "sharp";
import { fixtureDir, syntheticChest, writeDicom } from "../support/dicom-fixtures";
import { signInAs } from "./support";

test("a registrar uploads a DICOM and a PNG film and sees both thumbnails with date, projection and calibration", async ({ page }) => {
  const { dir, cleanup } = fixtureDir("rimwatch-e2e-films-");
  try {
    const stamp = Date.now().toString(36);
    const chest = syntheticChest(256, 320);
    // An invented PA film taken at 08:15 on 22 Nov 2026 (GMT, so London wall time equals UTC), with
    // Imager Pixel Spacing 0.15 mm; dcmtk writes it.
    const dicomPath = writeDicom(dir, `e2e-${stamp}`, {
      rows: 320,
      columns: 256,
      pixels: chest.pixels,
      attributes: { "(0018,1164)": "DS [0.150\\0.150]", "(0018,5101)": "CS [PA]", "(0008,0022)": "DA [20261122]", "(0008,0032)": "TM [081500]" },
    });
    // The same chest as an 8-bit PNG export; one random pixel makes the bytes new on every run.
    const grey = Uint8Array.from(chest.pixels, (v) => Math.min(255, v >> 4));
    grey[0] = randomInt(256);
    const png = await sharp(grey, { raw: { width: 256, height: 320, channels: 1 } }).png().toBuffer();
    const dicomName = `chest-${stamp}.dcm`;
    const pngName = `portable-${stamp}.png`;

    await signInAs(page, "registrar");
    await page.goto("/patients");
    await page.getByRole("link", { name: /Varga/ }).first().click();
    await page.getByRole("link", { name: /pneumothorax, presented/ }).first().click();
    await expect(page.getByRole("heading", { name: /^Films/ })).toBeVisible();

    await page.getByTestId("film-file-input").setInputFiles([
      { name: dicomName, mimeType: "application/dicom", buffer: readFileSync(dicomPath) },
      { name: pngName, mimeType: "image/png", buffer: png },
    ]);
    await expect(page.getByRole("list", { name: "Uploads" }).getByText("stored")).toHaveCount(2, { timeout: 45_000 });

    const dicomCard = page.getByTestId("film-card").filter({ hasText: dicomName });
    const pngCard = page.getByTestId("film-card").filter({ hasText: pngName });
    await expect(dicomCard).toBeVisible();
    await expect(pngCard).toBeVisible();

    // Dates: the DICOM header's acquisition time; the PNG is dated by its upload until someone confirms it.
    await expect(dicomCard.getByTestId("film-taken-at")).toHaveText("22 Nov 2026, 08:15");
    await expect(pngCard.getByText("date of upload — confirm when taken")).toBeVisible();
    // Projection from View Position (0018,5101); none for the PNG.
    await expect(dicomCard.getByTestId("film-view")).toHaveText("PA");
    await expect(pngCard.getByTestId("film-view")).toHaveText("projection and position not recorded");
    // Calibration source in plain words (DICOM PS3.3 10.7: Imager Pixel Spacing is the detector plane).
    await expect(dicomCard.getByTestId("film-calibration")).toHaveText("Calibration: detector plane from Imager Pixel Spacing");
    await expect(pngCard.getByTestId("film-calibration")).toHaveText("Calibration: no calibration: Light index only");

    // Both thumbnails really load (a decoded image, 256 px wide as the pipeline makes them).
    for (const card of [dicomCard, pngCard]) {
      const img = card.locator("img");
      await expect(img).toHaveJSProperty("complete", true);
      await expect.poll(() => img.evaluate((el: HTMLImageElement) => el.naturalWidth)).toBe(256);
    }

    // Time order: the November film comes before the one dated today.
    const names = await page.getByTestId("film-card").allTextContents();
    const at = (name: string) => names.findIndex((t) => t.includes(name));
    expect(at(dicomName)).toBeGreaterThanOrEqual(0);
    expect(at(dicomName)).toBeLessThan(at(pngName));

    // The measure link leads to the film desk for that film.
    await expect(dicomCard.getByRole("link", { name: "Measure" })).toHaveAttribute("href", /^\/films\/[0-9a-f-]{36}$/);
  } finally {
    cleanup();
  }
});
