// The film desk's pure parts: the window/level table, the view mapping, undo/redo, and the caliper
// input rules shared with the server.
import { describe, expect, it } from "vitest";
import { applyLut, buildLut, dragWindow, greyFromRgba, IDENTITY_WINDOW } from "@/components/film-desk/window-level";
import { fitView, toImage, toScreen, zoomAt, ZOOM } from "@/components/film-desk/view";
import { historyReducer, initHistory, nextCaliper, type DeskSnapshot } from "@/components/film-desk/history";
import { calipersOutsideFilm, measurementCreate, measurementUpdate, toCaliperSet } from "@/lib/validation/measurements";

describe("window/level lookup table", () => {
  it("is the identity for centre 127.5, width 255", () => {
    const lut = buildLut(IDENTITY_WINDOW);
    for (let v = 0; v < 256; v += 1) expect(lut[v]).toBe(v); // linear window over the full range (common practice)
  });

  it("maps below the window to black, above to white, and linearly between", () => {
    // Centre 100, width 50: window 75..125; 100 is mid-grey, 87.5 a quarter (linear window, common practice).
    const lut = buildLut({ center: 100, width: 50, invert: false });
    expect(lut[0]).toBe(0);
    expect(lut[75]).toBe(0);
    expect(lut[100]).toBe(128); // (100 - 75) / 50 x 255 = 127.5, rounded half up
    expect(lut[125]).toBe(255);
    expect(lut[200]).toBe(255);
    for (let v = 1; v < 256; v += 1) expect(lut[v] as number).toBeGreaterThanOrEqual(lut[v - 1] as number);
  });

  it("inverts by mirroring the table", () => {
    const plain = buildLut({ center: 90, width: 120, invert: false });
    const inverted = buildLut({ center: 90, width: 120, invert: true });
    for (let v = 0; v < 256; v += 1) expect((plain[v] as number) + (inverted[v] as number)).toBe(255);
  });

  it("writes opaque grey RGBA through the table", () => {
    const grey = Uint8Array.from([0, 100, 255]);
    const out = new Uint8ClampedArray(12);
    applyLut(grey, buildLut({ center: 100, width: 50, invert: false }), out);
    expect([...out]).toEqual([0, 0, 0, 255, 128, 128, 128, 255, 255, 255, 255, 255]);
    expect([...greyFromRgba(out)]).toEqual([0, 128, 255]);
    expect(() => applyLut(grey, buildLut(IDENTITY_WINDOW), new Uint8ClampedArray(8))).toThrow(RangeError);
  });

  it("drag right widens the window, drag down lowers the centre, within limits", () => {
    expect(dragWindow(IDENTITY_WINDOW, 45, 0)).toMatchObject({ width: 300, center: 127.5 });
    expect(dragWindow(IDENTITY_WINDOW, 0, 27.5)).toMatchObject({ width: 255, center: 100 });
    expect(dragWindow(IDENTITY_WINDOW, -1000, 0).width).toBe(2);
  });
});

describe("view mapping", () => {
  it("fits a 1,300 x 1,500 film into an 800 x 600 stage, centred", () => {
    // Height limits: 600 / 1500 = 0.4, x 0.97 margin = 0.388 (plane geometry).
    const v = fitView({ width: 800, height: 600 }, { width: 1300, height: 1500 });
    expect(v.scale).toBeCloseTo(0.388, 12);
    expect(v.x).toBeCloseTo((800 - 1300 * 0.388) / 2, 9);
    expect(v.y).toBeCloseTo((600 - 1500 * 0.388) / 2, 9);
  });

  it("maps screen to film pixels and back", () => {
    const v = { scale: 0.5, x: 30, y: -10 };
    expect(toImage(v, { x: 130, y: 40 })).toEqual({ x: 200, y: 100 });
    expect(toScreen(v, { x: 200, y: 100 })).toEqual({ x: 130, y: 40 });
  });

  it("zooms about the pointer: the film point under it stays put", () => {
    const v = { scale: 0.4, x: 12, y: 7 };
    const anchor = { x: 300, y: 220 };
    const before = toImage(v, anchor);
    const z = zoomAt(v, ZOOM.step, anchor, 0.4);
    expect(z.scale).toBeCloseTo(0.5, 12);
    const after = toImage(z, anchor);
    expect(after.x).toBeCloseTo(before.x, 9);
    expect(after.y).toBeCloseTo(before.y, 9);
    expect(zoomAt(v, 1e-6, anchor, 0.4).scale).toBeCloseTo(0.4 * ZOOM.minOfFit, 12);
    expect(zoomAt(v, 1e6, anchor, 0.4).scale).toBe(ZOOM.maxScale);
  });
});

describe("undo and redo", () => {
  const seg = (x: number) => ({ a: { x, y: 10 }, b: { x: x + 50, y: 10 } });
  const s0: DeskSnapshot = { calipers: {}, skipped: [] };
  const s1: DeskSnapshot = { calipers: { hemithorax: seg(10) }, skipped: [] };
  const s2: DeskSnapshot = { calipers: { hemithorax: seg(10), lung: seg(20) }, skipped: [] };

  it("makes one step of a whole drag, and walks back and forth", () => {
    let h = initHistory(s0);
    h = historyReducer(h, { type: "live", snapshot: { calipers: { hemithorax: seg(5) }, skipped: [] } });
    h = historyReducer(h, { type: "live", snapshot: s1 });
    h = historyReducer(h, { type: "commit", before: s0, snapshot: s1 });
    h = historyReducer(h, { type: "commit", before: s1, snapshot: s2 });
    expect(h.past).toHaveLength(2);
    h = historyReducer(h, { type: "undo" });
    expect(h.present).toEqual(s1);
    h = historyReducer(h, { type: "undo" });
    expect(h.present).toEqual(s0);
    h = historyReducer(h, { type: "undo" });
    expect(h.present).toEqual(s0);
    h = historyReducer(h, { type: "redo" });
    h = historyReducer(h, { type: "redo" });
    expect(h.present).toEqual(s2);
    // A new change after an undo drops the redo branch.
    h = historyReducer(historyReducer(h, { type: "undo" }), { type: "commit", before: s1, snapshot: { calipers: { hemithorax: seg(30) }, skipped: [] } });
    expect(h.future).toHaveLength(0);
  });

  it("asks for the first caliper neither drawn nor skipped", () => {
    expect(nextCaliper(s0)).toBe("hemithorax");
    expect(nextCaliper(s2)).toBe("apex");
    expect(nextCaliper({ calipers: s2.calipers, skipped: ["apex", "upper"] })).toBe("lower");
  });
});

describe("caliper input", () => {
  const ok = { a: { x: 10, y: 10 }, b: { x: 60, y: 10 } };

  it("keeps segments and nulls (skipped), drops anything else the client sends", () => {
    const parsed = measurementCreate.parse({ calipers: { lung: ok, apex: null }, lightPercent: 80, results: {} });
    expect(parsed).toEqual({ calipers: { lung: ok, apex: null }, plane: "film" });
    expect(toCaliperSet(parsed.calipers)).toEqual({ lung: ok, apex: null });
  });

  it("names the caliper that has no length", () => {
    const r = measurementCreate.safeParse({ calipers: { upper: { a: { x: 5, y: 5 }, b: { x: 5, y: 5 } } } });
    expect(r.success).toBe(false);
    expect(r.error?.issues[0]?.message).toMatch(/upper gap caliper has no length/);
  });

  it("needs the version a change starts from", () => {
    expect(measurementUpdate.safeParse({ calipers: { lung: ok } }).success).toBe(false);
    expect(measurementUpdate.parse({ calipers: { lung: ok }, basedOnVersion: 2, reason: "  " }).reason).toBeNull();
  });

  it("finds ends outside the film, inclusive of its edge", () => {
    expect(calipersOutsideFilm({ lung: { a: { x: 0, y: 0 }, b: { x: 1300, y: 1500 } } }, 1300, 1500)).toEqual({});
    const fields = calipersOutsideFilm({ lung: ok, hilum: { a: { x: 10, y: 10 }, b: { x: 1300.5, y: 10 } } }, 1300, 1500);
    expect(Object.keys(fields)).toEqual(["calipers.hilum"]);
    expect(fields["calipers.hilum"]).toMatch(/gap at the hilum caliper's second end/);
  });
});
