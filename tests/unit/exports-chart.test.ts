// The letter's chart geometry: days and percent mapped onto the page, the expected course from the
// published resorption rate, and the band around it.
import { describe, expect, it } from "vitest";
import { chartGeometry } from "../../lib/exports/letter-chart";
import { inventedExport } from "../support/export-data";

const box = { x: 100, y: 200, width: 400, height: 200 };

describe("resorption chart geometry", () => {
  const trend = inventedExport().trend;
  const g = chartGeometry(trend, box);

  it("spans the films and the predicted resolution on the day axis and 0 to the next 10 on the percent axis", () => {
    // Collins 32.4 % (Collins 1995, 4.2 + 4.7 x 6 cm) at 1.25 %/day (Kircher & Swartzel 1954) resolves on day 25.92
    expect(trend.prediction?.resolutionDay).toBeCloseTo(25.92, 2);
    expect(g.maxDay).toBe(26);
    // Light 100 x (1 - 0.7^3) = 65.7 % (Light RW) is the largest value, so the axis runs to 70
    expect(g.maxPercent).toBe(70);
    expect(g.xTicks[0]?.x).toBe(box.x);
    expect(g.yTicks[0]?.y).toBe(box.y + box.height);
  });

  it("places each point at its day and percent", () => {
    // Collins 4.2 + 4.7 x (2 + 1.5 + 0.5) = 23.0 % on day 4 (Collins CD et al., AJR 1995)
    const p = g.points[1];
    expect(p?.percent).toBeCloseTo(23.0, 6);
    expect(p?.x).toBeCloseTo(box.x + (4 / 26) * box.width, 6);
    expect(p?.y).toBeCloseTo(box.y + box.height - (23.0 / 70) * box.height, 6);
    expect(g.points.map((q) => q.signedOff)).toEqual([true, true, false]);
    expect(g.others.map((o) => o.method)).toEqual(["light"]);
  });

  it("draws the expected line from the published rate, with the band 10 points either side", () => {
    // 32.4 % - 8 days x 1.25 %/day = 22.4 % on day 8 (Kircher LT, Swartzel RL, JAMA 1954)
    const i = trend.band.findIndex((b) => b.day === 8);
    const day8 = g.expected[i];
    expect(day8?.y).toBeCloseTo(box.y + box.height - (22.4 / 70) * box.height, 6);
    // band: a local setting with no published figure (suggestion: 10 points), upper edge then lower edge
    const upper = g.band[i];
    const lower = g.band[g.band.length - 1 - i];
    expect(upper?.y).toBeCloseTo(box.y + box.height - (32.4 / 70) * box.height, 6);
    expect(lower?.y).toBeCloseTo(box.y + box.height - (12.4 / 70) * box.height, 6);
    expect(g.resolution?.day).toBeCloseTo(25.92, 2);
    expect(g.events.map((e) => e.label)).toEqual(["Drain in (12 Fr)"]);
  });
});
