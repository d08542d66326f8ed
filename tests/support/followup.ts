// Helpers for the follow-up tests: film rows at chosen times (the upload pipeline has its own tests) and
// caliper sets whose Collins and Rhea figures are known from the published formulas.
import { randomUUID } from "node:crypto";
import { testDb } from "./db";
import type { TestTeam } from "./fixtures";

/** Detector pixel pitch of the test films, mm (typical DR pitch 0.1-0.2 mm: from memory). */
export const PITCH_MM = 0.2;
const DAY = 86_400_000;

/** A 1,300 x 1,500 px erect PA film row with detector-plane calibration at PITCH_MM, taken at `takenAt`. */
export async function makeFilmAt(team: TestTeam, episodeId: string, takenAt: Date, extra: Record<string, unknown> = {}): Promise<string> {
  const id = randomUUID();
  await testDb()("films").insert({
    id,
    episode_id: episodeId,
    team_id: team.id,
    kind: "dicom",
    original_key: `films/${id}/original`,
    display_key: `films/${id}/display`,
    thumb_key: `films/${id}/thumb`,
    content_type: "application/dicom",
    filename: "follow-up-test.dcm",
    size_bytes: 1000,
    sha256: randomUUID().replace(/-/g, "").padEnd(64, "0"),
    taken_at: takenAt.toISOString(),
    projection: "PA",
    position: "erect",
    rows: 1500,
    columns: 1300,
    display_width: 1300,
    display_height: 1500,
    display_scale: 1,
    calibration: JSON.stringify({ film: { rowMm: PITCH_MM, columnMm: PITCH_MM, source: "imager-pixel-spacing" }, patient: null, correctionUnknown: false, notes: [] }),
    ...extra,
  });
  return id;
}

export const daysAgo = (now: Date, days: number) => new Date(now.getTime() - days * DAY);

/**
 * The three interpleural distances (apex, upper, lower) each `cm` long, vertical/horizontal segments at PITCH_MM;
 * no hemithorax, lung or hilum caliper (so no Light index and no BTS class).
 * Collins CD et al., AJR 1995;165:1127: % = 4.2 + 4.7 (A + B + C) -> 4.2 + 14.1 cm.
 */
export function threeGaps(cm: number) {
  const px = (cm * 10) / PITCH_MM;
  return {
    apex: { a: { x: 400, y: 300 }, b: { x: 400, y: 300 + px } },
    upper: { a: { x: 105, y: 675 }, b: { x: 105 + px, y: 675 } },
    lower: { a: { x: 110, y: 1025 }, b: { x: 110 + px, y: 1025 } },
  };
}

export async function flagsOf(episodeId: string): Promise<{ id: string; rule: string; state: string; figures: Record<string, unknown>; film_id: string | null; measurement_id: string | null }[]> {
  return testDb()("flags").where({ episode_id: episodeId }).select("id", "rule", "state", "figures", "film_id", "measurement_id").orderBy("raised_at");
}

export async function auditCount(action: string, entityId: string): Promise<number> {
  const [r] = await testDb()("audit_log").where({ action, entity: "flag", entity_id: entityId }).count<{ count: string }[]>({ count: "*" });
  return Number(r?.count ?? 0);
}
