// The letter is rendered from an invented episode and read back with pdf.js: the figures, methods,
// calibration, plan, bookings, travel advice and cautions must be in the text, and the chart must be
// drawn as vector paths.
import { createRequire } from "node:module";
import { dirname, join } from "node:path";
import { describe, expect, it } from "vitest";
import { getDocument, OPS } from "pdfjs-dist/legacy/build/pdf.mjs";
import { pdfText, renderEpisodeLetter } from "../../lib/exports/letter";
import { inventedExport } from "../support/export-data";

const NOW = new Date("2026-11-12T10:00:00Z");
const standardFontDataUrl = `${join(dirname(createRequire(import.meta.url).resolve("pdfjs-dist/package.json")), "standard_fonts")}/`;
const FILL_OPS = new Set<number>([OPS.fill, OPS.eoFill, OPS.fillStroke, OPS.eoFillStroke, OPS.closeFillStroke, OPS.closeEOFillStroke]);

async function readPdf(bytes: Buffer) {
  const pdf = await getDocument({ data: new Uint8Array(bytes), useSystemFonts: false, isEvalSupported: false, standardFontDataUrl }).promise;
  const pages: string[] = [];
  let paths = 0;
  let fills = 0;
  for (let i = 1; i <= pdf.numPages; i += 1) {
    const page = await pdf.getPage(i);
    const content = await page.getTextContent();
    pages.push(content.items.map((it) => ("str" in it ? it.str : "")).join(" "));
    const ops = await page.getOperatorList();
    ops.fnArray.forEach((fn, i) => {
      if (fn !== OPS.constructPath) return;
      paths += 1;
      // pdf.js 5 folds the painting operator into constructPath as its first argument.
      const args = ops.argsArray[i] as unknown[] | undefined;
      if (typeof args?.[0] === "number" && FILL_OPS.has(args[0])) fills += 1;
    });
  }
  await pdf.destroy();
  return { text: pages.join("\n").replace(/\s+/g, " "), pages: pdf.numPages, paths, fills };
}

describe("episode letter (PDF)", () => {
  it("carries patient, episode, every figure with its method and calibration, plan, bookings, travel and cautions", async () => {
    const data = inventedExport();
    const pdf = await renderEpisodeLetter(data, { now: NOW, preparedBy: "Dr Imani Castellanos" });
    expect(pdf.subarray(0, 5).toString("latin1")).toBe("%PDF-");
    const { text, pages } = await readPdf(pdf);
    expect(pages).toBeGreaterThanOrEqual(1);
    expect(text).toContain("Larkmoor General Hospital");
    expect(text).toContain("Tamsin Fairweather-Oyelaran");
    expect(text).toContain("LGH-998877");
    // Collins 4.2 + 4.7 x (3 + 2 + 1) = 32.4 % (Collins CD et al., AJR 1995;165:1127)
    expect(text).toContain("32.4");
    // Collins 4.2 + 4.7 x (2 + 1.5 + 0.5) = 23.0 % (Collins 1995)
    expect(text).toContain("23.0");
    // Light 100 x (1 - 0.7^3) = 65.7 % (Light RW, Pleural Diseases)
    expect(text).toContain("65.7");
    // Rhea nomogram: AID 2.0 cm -> 23 % (Rhea JT et al., Radiology 1982; as tabulated by Wyatt JP et al. 1999)
    expect(text).toMatch(/\b23\.0\b/);
    // Interpleural distance at the hilum 2.2 cm: BTS 2010 large (>= 2 cm)
    expect(text).toContain("2.20");
    expect(text).toMatch(/large \/ large/);
    expect(text).toContain("detector (film) plane, from Imager Pixel Spacing (0018,1164)");
    expect(text).toMatch(/Collins: 4\.2 \+ 4\.7 x \(A \+ B \+ C\)/);
    expect(text).toContain("Dr Bartholomew Achterberg");
    expect(text).toContain("Larkmoor radiology, room 3");
    // Expected course from 32.4 % at 1.25 %/day (Kircher LT, Swartzel RL, JAMA 1954): resolution at day 25.9
    expect(text).toContain("day 26");
    // x1.35 at 8,000 ft: ICAO standard atmosphere 75.26 kPa, 101.325/75.26 = 1.346 (ICAO Doc 7488)
    expect(text).toContain("x1.35");
    expect(text).toContain("75.3 kPa");
    // Flying: 7 days after a film confirms resolution (BTS air travel 2011)
    expect(text).toContain("7 days after a film confirms resolution");
    expect(text).toContain("Estimates support, and never replace, clinical judgement");
    // Free-text episode notes stay out of the letter's printed fields
    expect(text).not.toContain("Private note that no export may carry");
  });

  it("draws the resorption chart as vector paths with the band filled", async () => {
    const withChart = await readPdf(await renderEpisodeLetter(inventedExport(), { now: NOW, preparedBy: "x" }));
    const empty = inventedExport();
    const noChart = await readPdf(
      await renderEpisodeLetter({ ...empty, measurements: [], trend: { ...empty.trend, series: { collins: [], light: [], rhea: [] }, band: [], prediction: null } }, { now: NOW, preparedBy: "x" }),
    );
    expect(withChart.text).toContain("Days since the first film");
    expect(noChart.text).toContain("nothing to chart");
    // common practice: a chart of 3 points, an expected line, a band and ticks adds dozens of path operations
    expect(withChart.paths - noChart.paths).toBeGreaterThan(20);
    expect(withChart.fills).toBeGreaterThan(noChart.fills);
  });

  it("prints the flying date once resolution is confirmed, 14 days after a traumatic pneumothorax", async () => {
    const base = inventedExport();
    const data = { ...base, episode: { ...base.episode, aetiology: "traumatic" as const, status: "resolved" as const, resolved_on: "2026-11-20" } };
    const { text } = await readPdf(await renderEpisodeLetter(data, { now: NOW, preparedBy: "x" }));
    // 14 days after a traumatic pneumothorax (BTS air travel recommendations 2011): 20 Nov + 14 = 4 Dec 2026
    expect(text).toContain("Flying is reasonable from 4 Dec 2026");
  });
});

describe("pdfText", () => {
  it("keeps Latin-1 names and spells out symbols the standard fonts lack", () => {
    // WinAnsi covers Latin-1 (PDF 1.7 Annex D); pdfkit's standard fonts use it
    expect(pdfText("Zoë Ångström ≥ 2 cm → ±")).toBe("Zoë Ångström >= 2 cm -> +/-");
    expect(pdfText("Ольга")).toBe("?????");
  });
});
