// An invented episode as the exports see it (EpisodeExport), for unit tests of the letter and the FHIR
// bundle without a database. The figures are those of a caliper set at known lengths (see the tests).
import { collinsPercent, expectedBand, lightPercent, rheaPercent } from "@/measure";
import type { EpisodeExport, ExportMeasurement } from "@/lib/exports/episode-data";
import type { TrendData } from "@/lib/followup/trend";

const DAY = 86_400_000;
export const ORIGIN = new Date("2026-11-02T09:00:00Z");

/** Interpleural distances (cm) of the three films: apex, upper, lower, hilum; widths (mm) for Light. */
export const FILMS = [
  { day: 0, apex: 3.0, upper: 2.0, lower: 1.0, hilum: 2.2, lung: 70, hemi: 100, signedOff: true },
  { day: 4, apex: 2.0, upper: 1.5, lower: 0.5, hilum: 1.4, lung: 80, hemi: 100, signedOff: true },
  { day: 9, apex: 1.0, upper: 0.5, lower: 0.5, hilum: 0.6, lung: 90, hemi: 100, signedOff: false },
] as const;

export function inventedExport(overrides: Partial<EpisodeExport> = {}): EpisodeExport {
  const measurements: ExportMeasurement[] = FILMS.map((f, i) => {
    const takenAt = new Date(ORIGIN.getTime() + f.day * DAY);
    return {
      id: `00000000-0000-4000-8000-00000000000${i + 1}`,
      filmId: `00000000-0000-4000-8000-0000000000f${i + 1}`,
      chainId: `00000000-0000-4000-8000-0000000000c${i + 1}`,
      version: 1,
      readerName: "Dr Imani Castellanos",
      createdAt: new Date(takenAt.getTime() + 3_600_000),
      signedOffAt: f.signedOff ? new Date(takenAt.getTime() + 7_200_000) : null,
      signedOffByName: f.signedOff ? "Dr Bartholomew Achterberg" : null,
      plane: "film",
      calibrationSource: "imager-pixel-spacing",
      light: lightPercent(f.lung, f.hemi),
      rhea: rheaPercent(f.apex, f.upper, f.lower).percent,
      collins: collinsPercent(f.apex, f.upper, f.lower).percent,
      hilumCm: f.hilum,
      apexCm: f.apex,
      aidCm: (f.apex + f.upper + f.lower) / 3,
      btsClass: f.hilum >= 2 ? "large" : "small",
      accpClass: f.apex >= 3 ? "large" : "small",
      film: { takenAt, createdAt: takenAt, projection: "PA", position: "erect" },
    };
  });
  const collinsSeries = measurements.map((m, i) => ({
    filmId: m.filmId,
    day: FILMS[i]?.day ?? 0,
    takenAt: (m.film.takenAt ?? ORIGIN).toISOString(),
    percent: m.collins ?? 0,
    projection: "PA",
    position: "erect",
    signedOff: m.signedOffAt !== null,
  }));
  const baseline = measurements[0]?.collins ?? 0;
  const band = Array.from({ length: 31 }, (_, d) => {
    const b = expectedBand(baseline, d, { tolerancePoints: 10 });
    return { day: d, expected: b.expected, lower: b.lower, upper: b.upper };
  }).filter((b, i, all) => i === 0 || (all[i - 1]?.expected ?? 0) > 0);
  const trend: TrendData = {
    episodeId: "00000000-0000-4000-8000-0000000000e1",
    primaryMethod: "collins",
    origin: ORIGIN.toISOString(),
    nowDay: 10,
    films: [],
    series: {
      collins: collinsSeries,
      light: measurements.map((m, i) => ({ ...collinsSeries[i]!, percent: m.light ?? 0 })),
      rhea: [],
    },
    band,
    prediction: { baselineFilmId: measurements[0]!.filmId, baselineDay: 0, baselinePercent: baseline, resolutionDay: baseline / 1.25, resolutionDate: new Date(ORIGIN.getTime() + (baseline / 1.25) * DAY).toISOString() },
    model: { ratePerDay: 1.25, oxygenMultiplier: 4, tolerancePoints: 10, sources: ["Kircher LT, Swartzel RL, JAMA 1954;155:24-29"] },
    events: [{ kind: "drain-in", day: 0.2, at: new Date(ORIGIN.getTime() + 0.2 * DAY).toISOString(), label: "Drain in (12 Fr)" }],
    flags: [],
  };
  return {
    hospital: "Larkmoor General Hospital",
    teamName: "Larkmoor respiratory team",
    patient: {
      id: "00000000-0000-4000-8000-0000000000a1",
      team_id: "00000000-0000-4000-8000-0000000000b1",
      hospital_number: "LGH-998877",
      family_name: "Fairweather-Oyelaran",
      given_name: "Tamsin",
      date_of_birth: "1996-07-14",
      sex: "female",
      email: null,
      phone: null,
      email_consent: false,
      email_consent_at: null,
      version: 1,
      created_at: ORIGIN,
      updated_at: ORIGIN,
    },
    episode: {
      id: "00000000-0000-4000-8000-0000000000e1",
      patient_id: "00000000-0000-4000-8000-0000000000a1",
      team_id: "00000000-0000-4000-8000-0000000000b1",
      side: "right",
      onset_on: "2026-11-01",
      presented_on: "2026-11-02",
      aetiology: "primary-spontaneous",
      underlying_disease: null,
      procedure: null,
      management: "chest-drain",
      status: "active",
      primary_method: "collins",
      follow_up_protocol: "drain",
      consultant_id: null,
      registrar_id: null,
      discharged_on: null,
      resolved_on: null,
      notes: "Private note that no export may carry",
      version: 1,
      created_at: ORIGIN,
      updated_at: ORIGIN,
    },
    consultantName: "Dr Bartholomew Achterberg",
    registrarName: "Dr Imani Castellanos",
    measurements,
    filmCount: 3,
    oxygen: [],
    procedures: [],
    drains: [],
    bookings: [{ id: "00000000-0000-4000-8000-0000000000d1", kind: "repeat-film", scheduledAt: new Date("2026-11-24T09:30:00Z"), dueOn: "2026-11-24", location: "Larkmoor radiology, room 3", state: "booked" }],
    flags: [],
    trend,
    ...overrides,
  };
}
