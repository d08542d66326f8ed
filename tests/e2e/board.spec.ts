// The resorption chart and the deviation board in a browser: an episode of the demo team with three
// serial films, measured through the API as a registrar would (the server computes the figures and
// raises the flag); a consultant sees the chart with its band, finds the flag on the board, and
// resolves it with a plan; the flag leaves the board without a reload.
import { randomUUID } from "node:crypto";
import { expect, test, type Page } from "@playwright/test";
import { testDb, closeTestDb } from "../support/db";
import { signInAs } from "./support";

const DAY = 86_400_000;
const PITCH_MM = 0.2; // detector pitch of the invented films (typical DR 0.1-0.2 mm: from memory)
const FAMILY = "Marchetti-Byrne";
const GIVEN = "Ines";
let episodeId = "";
const HOSPITAL_NUMBER = `LGH-9${randomUUID().slice(0, 5).toUpperCase()}`;

/**
 * Calipers for a wanted Collins % and Light index %:
 * Collins CD et al., AJR 1995;165:1127: % = 4.2 + 4.7 (A + B + C), so each of three equal gaps is (% - 4.2) / 14.1 cm;
 * Light RW, Pleural Diseases: % = 100 (1 - L^3 / H^3), so L = H (1 - %/100)^(1/3) with H = 100 mm.
 */
function calipers(collins: number, light: number) {
  const gapPx = (((collins - 4.2) / 14.1) * 10) / PITCH_MM;
  const lungPx = (100 * Math.cbrt(1 - light / 100)) / PITCH_MM;
  return {
    hemithorax: { a: { x: 100, y: 800 }, b: { x: 600, y: 800 } },
    lung: { a: { x: 600 - lungPx, y: 800 }, b: { x: 600, y: 800 } },
    apex: { a: { x: 400, y: 300 }, b: { x: 400, y: 300 + gapPx } },
    upper: { a: { x: 105, y: 675 }, b: { x: 105 + gapPx, y: 675 } },
    lower: { a: { x: 110, y: 1025 }, b: { x: 110 + gapPx, y: 1025 } },
  };
}

async function filmAt(teamId: string, takenAt: Date): Promise<string> {
  const id = randomUUID();
  await testDb()("films").insert({
    id, episode_id: episodeId, team_id: teamId, kind: "dicom",
    original_key: `films/${id}/original`, display_key: `films/${id}/display`, thumb_key: `films/${id}/thumb`,
    content_type: "application/dicom", filename: "serial.dcm", size_bytes: 1000, sha256: randomUUID().replace(/-/g, "").padEnd(64, "0"),
    taken_at: takenAt.toISOString(), projection: "PA", position: "erect", rows: 1500, columns: 1300,
    display_width: 1300, display_height: 1500, display_scale: 1,
    calibration: JSON.stringify({ film: { rowMm: PITCH_MM, columnMm: PITCH_MM, source: "imager-pixel-spacing" }, patient: null, correctionUnknown: false, notes: [] }),
  });
  return id;
}

test.beforeAll(async ({ browser }) => {
  const k = testDb();
  const team = await k("teams").where({ name: "Larkmoor respiratory team" }).first<{ id: string }>("id");
  if (!team) throw new Error("demo team missing: load the demo data first");
  const consultant = await k("users").where({ team_id: team.id, role: "consultant" }).first<{ id: string }>("id");
  const [patient] = await k("patients")
    .insert({ team_id: team.id, hospital_number: HOSPITAL_NUMBER, family_name: FAMILY, given_name: GIVEN, date_of_birth: "1994-03-11", sex: "female" })
    .returning<{ id: string }[]>("id");
  const [episode] = await k("episodes")
    .insert({ patient_id: patient!.id, team_id: team.id, side: "left", presented_on: new Date(Date.now() - 12 * DAY).toISOString().slice(0, 10), aetiology: "primary-spontaneous", management: "observation", consultant_id: consultant?.id ?? null })
    .returning<{ id: string }[]>("id");
  episodeId = episode!.id;
  const now = Date.now();
  const first = new Date(now - 11.5 * DAY);
  // Oxygen for the first day (Northfield, BMJ 1971: about x4 faster resorption on oxygen).
  await k("oxygen_periods").insert({ episode_id: episodeId, started_at: first.toISOString(), ended_at: new Date(first.getTime() + DAY).toISOString(), device: "nasal cannula" });
  const films = [await filmAt(team.id, first), await filmAt(team.id, new Date(now - 5.5 * DAY)), await filmAt(team.id, new Date(now - 0.25 * DAY))];

  // Measured by the registrar through the API; each save re-evaluates the episode's flags.
  // Expected (Kircher & Swartzel 1954, 1.25 %/day; x4 for the oxygen day): day 6 -> 30 - 1.25 x 9 = 18.75 % (27 % is 8.25 over, within
  // the 10-point band); day 11.25 -> 30 - 1.25 x 14.25 = 12.2 % (26 % is 13.8 over: slower than expected).
  const ctx = await browser.newContext();
  const page = await ctx.newPage();
  await signInAs(page, "registrar");
  const figures: [number, number][] = [[30, 38], [27, 35], [26, 34]];
  for (const [i, filmId] of films.entries()) {
    const [collins, light] = figures[i]!;
    const res = await page.request.post(`/api/films/${filmId}/measurements`, { data: { calipers: calipers(collins, light) } });
    expect(res.status(), await res.text()).toBe(201);
  }
  await ctx.close();
});

test.afterAll(async () => {
  await closeTestDb();
});

const boardRow = (page: Page) => page.locator("tbody tr", { hasText: HOSPITAL_NUMBER });

test("the resorption chart shows the serial films against the expected course and band", async ({ page }) => {
  await signInAs(page, "consultant");
  await page.goto(`/episodes/${episodeId}`);
  const chart = page.getByTestId("resorption-chart");
  await expect(chart).toBeVisible();
  await expect(chart.locator('[data-method="collins"]')).toHaveCount(3);
  await expect(chart.locator('[data-method="light"]')).toHaveCount(3);
  await expect(chart.locator(".recharts-area-area")).toHaveCount(1);
  await expect(page.getByText(/Predicted resolution/).first()).toBeVisible();
  await expect(page.getByText("Shrinking slower than expected").first()).toBeVisible();
});

test("a consultant finds the flag on the deviation board and resolves it with a plan", async ({ page }) => {
  await signInAs(page, "consultant");
  await page.goto("/board");
  const row = boardRow(page);
  await expect(row).toHaveCount(1);
  await expect(row.getByText("Shrinking slower than expected")).toBeVisible();
  await expect(row.getByRole("img")).toBeVisible(); // the sparkline

  await row.getByRole("button", { name: /^Resolve:/ }).click();
  const form = row.getByRole("form");
  await form.getByLabel("Decision note").fill("Well in clinic; earlier film to confirm the trend.");
  await form.getByLabel("Plan", { exact: true }).selectOption("repeat-film");
  await form.getByLabel("Repeat film in (days)").fill("7");
  await form.getByRole("button", { name: "Resolve flag" }).click();

  await expect(page.getByText(/^Resolved: Shrinking slower than expected/)).toBeVisible();
  await expect(boardRow(page)).toHaveCount(0);

  const flag: unknown = await testDb()("flags").where({ episode_id: episodeId, rule: "slower-than-expected" }).first("state", "plan", "resolution_note");
  expect(flag).toEqual({ state: "resolved", plan: { kind: "repeat-film", days: 7 }, resolution_note: "Well in clinic; earlier film to confirm the trend." });
});
