// The demo generator's films, measured the way a reader would: the chest wall, the visceral pleural line,
// the cupola and the mediastinum are found in the PIXELS along the caliper lines, the spacing is read
// back from the written DICOM, and measure/ turns the lengths into sizes. They must match the sizes the
// scenario asked for.
import dicomParser from "dicom-parser";
import { describe, expect, it } from "vitest";
import { calibrationFromDicom, estimateFromCalipers, lightPercent, type Segment } from "../../measure";
import { DEMO_SPACING_MM, LANDMARKS, demoUid, drawChestFilm, gapForCollins, writeDicomFilm, type SyntheticFilm } from "../../db/demo/synthetic-films";
import { SCENARIO } from "../../db/demo/scenario";

/** Tissue 2500, pneumothorax 420, lung about 1150-1450, pleural line 2300, mediastinum 3000 (the drawing's grey levels). */
const WALL_BELOW = 1460;
const PLEURA_ABOVE = 1700;
const MEDIASTINUM_ABOVE = 2650;

function reader(film: SyntheticFilm, side: "left" | "right") {
  const W = film.width;
  // Work in the drawing's frame (pneumothorax on the viewer's left) and map x back for a left film.
  const v = (x: number, y: number) => film.values[y * W + (side === "right" ? x : W - 1 - x)] ?? 0;
  const toImage = (x: number) => (side === "right" ? x : W - 1 - x);
  const seg = (ax: number, ay: number, bx: number, by: number): Segment => ({ a: { x: toImage(ax), y: ay }, b: { x: toImage(bx), y: by } });
  /** Chest wall and lung edge along row y: the first dark pixel after tissue, then the first bright pleural pixel. */
  const row = (y: number) => {
    let x = LANDMARKS.bodyLeft + 5;
    while (x < LANDMARKS.mediastinumLeft && v(x, y) >= WALL_BELOW) x += 1;
    const wall = x;
    while (x < LANDMARKS.mediastinumLeft && v(x, y) <= PLEURA_ABOVE) x += 1;
    return { wall, edge: x };
  };
  const column = (x: number) => {
    let y = LANDMARKS.bodyTop + 5;
    while (y < LANDMARKS.hilumY && v(x, y) >= WALL_BELOW) y += 1;
    const cupola = y;
    while (y < LANDMARKS.hilumY && v(x, y) <= PLEURA_ABOVE) y += 1;
    return { cupola, apex: y };
  };
  const mediastinum = (y: number, from: number) => {
    let x = from + 5;
    while (x < film.width && v(x, y) <= MEDIASTINUM_ABOVE) x += 1;
    return x;
  };
  const upper = row(LANDMARKS.upperY);
  const lower = row(LANDMARKS.lowerY);
  const hilum = row(LANDMARKS.hilumY + 10);
  const light = row(LANDMARKS.hilumY);
  const med = mediastinum(LANDMARKS.hilumY, light.edge);
  const top = column(LANDMARKS.apexX);
  return {
    hemithorax: seg(light.wall, LANDMARKS.hilumY, med, LANDMARKS.hilumY),
    lung: seg(light.edge, LANDMARKS.hilumY, med, LANDMARKS.hilumY),
    apex: seg(LANDMARKS.apexX, top.cupola, LANDMARKS.apexX, top.apex),
    upper: seg(upper.wall, LANDMARKS.upperY, upper.edge, LANDMARKS.upperY),
    lower: seg(lower.wall, LANDMARKS.lowerY, lower.edge, LANDMARKS.lowerY),
    hilum: seg(hilum.wall, LANDMARKS.hilumY + 10, hilum.edge, LANDMARKS.hilumY + 10),
  };
}

function spacingFromDicom(bytes: Buffer): [number, number] {
  const ds = dicomParser.parseDicom(new Uint8Array(bytes));
  const raw = ds.string("x00181164") ?? "";
  const [r, c] = raw.split("\\").map(Number);
  return [r ?? NaN, c ?? NaN];
}

const header = { sopInstanceUid: demoUid("t:sop"), studyInstanceUid: demoUid("t:study"), seriesInstanceUid: demoUid("t:series"), date: "20261201", time: "093000", patientName: "Test^Film", patientId: "LGH-TEST", viewPosition: "PA" as const, institution: "Larkmoor General Hospital" };

describe("demo films at known geometry", () => {
  for (const [target, side] of [[12, "right"], [28, "left"], [45, "right"]] as const) {
    it(`measures ${target} % Collins on a ${side} film from its pixels`, async () => {
      const film = await drawChestFilm({ gap: gapForCollins(target), side, seed: 11 });
      const dicom = writeDicomFilm(film, header);
      const spacing = spacingFromDicom(dicom);
      expect(spacing).toEqual([DEMO_SPACING_MM, DEMO_SPACING_MM]);
      const calipers = reader(film, side);
      const est = estimateFromCalipers(calipers, calibrationFromDicom({ imagerPixelSpacingMm: spacing }), { plane: "film", projection: "PA", position: "erect" });
      const want = gapForCollins(target);
      // Tolerance: each distance is drawn to the nearest whole pixel (0.35 mm) and found to within one more
      // pixel through the blur, so 0.1 cm per distance; 3 distances x 0.1 cm x 4.7 = 1.41, so 1.5 points for
      // Collins (Collins CD et al., AJR 1995: 4.2 + 4.7 x (A + B + C)).
      expect(est.collins.status).toBe("ok");
      if (est.collins.status === "ok") expect(Math.abs(est.collins.percent - target)).toBeLessThanOrEqual(1.5);
      expect(Math.abs((est.lengths.apex.mm ?? 0) / 10 - want.apexCm)).toBeLessThanOrEqual(0.1);
      expect(Math.abs((est.lengths.upper.mm ?? 0) / 10 - want.upperCm)).toBeLessThanOrEqual(0.1);
      expect(Math.abs((est.lengths.lower.mm ?? 0) / 10 - want.lowerCm)).toBeLessThanOrEqual(0.1);
      expect(Math.abs((est.lengths.hilum.mm ?? 0) / 10 - want.hilumCm)).toBeLessThanOrEqual(0.1);
      // Light index from the widths at the hilum: hemithorax 340 px (wall 120 to mediastinum 460), lung 340 px less
      // the hilum gap (Light RW: 100 x (1 - L^3 / H^3)); the same tolerance of a pixel at each end.
      const hPx = LANDMARKS.mediastinumLeft - LANDMARKS.wall;
      const expectedLight = lightPercent(hPx - Math.round((want.hilumCm * 10) / DEMO_SPACING_MM), hPx);
      expect(est.light.status).toBe("ok");
      if (est.light.status === "ok") expect(Math.abs(est.light.percent - expectedLight)).toBeLessThanOrEqual(1.5);
      // and the generator's own calipers say the same as the pixels
      const own = estimateFromCalipers(film.calipers, calibrationFromDicom({ imagerPixelSpacingMm: spacing }), { plane: "film" });
      if (own.collins.status === "ok" && est.collins.status === "ok") expect(Math.abs(own.collins.percent - est.collins.percent)).toBeLessThanOrEqual(1.5);
    });
  }

  it("draws no gap when the lung is up", async () => {
    const film = await drawChestFilm({ gap: gapForCollins(0), side: "right", seed: 3 });
    // no dark (air-only) pixel anywhere between the chest wall and the mediastinum on the caliper rows:
    // the pneumothorax grey level is 420, the lung's 1,000-1,500 (the drawing's levels)
    for (const y of [LANDMARKS.upperY, LANDMARKS.hilumY, LANDMARKS.lowerY]) {
      let darkest = 4095;
      for (let x = LANDMARKS.wall + 2; x < LANDMARKS.mediastinumLeft - 2; x += 1) darkest = Math.min(darkest, film.values[y * film.width + x] ?? 0);
      expect(darkest).toBeGreaterThan(800);
    }
    expect(film.drawn.collinsPercent).toBeNull();
  });

  it("is deterministic: the same seed draws the same pixels, another seed other lung markings", async () => {
    // house rule: the demo is seeded
    const a = await drawChestFilm({ gap: gapForCollins(20), side: "left", seed: 5 });
    const b = await drawChestFilm({ gap: gapForCollins(20), side: "left", seed: 5 });
    const c = await drawChestFilm({ gap: gapForCollins(20), side: "left", seed: 6 });
    expect(Buffer.from(a.values.buffer).equals(Buffer.from(b.values.buffer))).toBe(true);
    expect(Buffer.from(a.values.buffer).equals(Buffer.from(c.values.buffer))).toBe(false);
    expect(demoUid("x")).toBe(demoUid("x"));
    expect(demoUid("x")).toMatch(/^2\.25\.\d+$/);
  });
});

describe("the scenario", () => {
  it("has a dozen invented patients covering every aetiology and management, with the promised stories", () => {
    // product brief: every aetiology and management, a resolving, a slow, an enlarging, an air leak and a resolved episode
    expect(SCENARIO).toHaveLength(12);
    expect(new Set(SCENARIO.map((s) => s.aetiology))).toEqual(new Set(["primary-spontaneous", "secondary-spontaneous", "iatrogenic", "traumatic"]));
    expect(new Set(SCENARIO.map((s) => s.management))).toEqual(new Set(["observation", "needle-aspiration", "chest-drain", "ambulatory-valve", "surgery"]));
    expect(SCENARIO.some((s) => s.drain?.observe.bubbling === "continuous" && s.drain.observe.hours >= 72)).toBe(true);
    expect(SCENARIO.some((s) => s.resolvedOnFilm !== undefined)).toBe(true);
    expect(SCENARIO.some((s) => s.films.some((f) => f.read === "none"))).toBe(true);
    expect(new Set(SCENARIO.map((s) => s.hn)).size).toBe(12);
  });
});
