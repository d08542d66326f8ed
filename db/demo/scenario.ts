// The demo scenario: invented patients of Larkmoor General Hospital with episodes of every aetiology
// and management, serial synthetic films at known sizes, measurements made through the same server
// code as the API (db/measurements.ts + measure/), sign-offs, drains, oxygen, procedures and bookings,
// so the resorption charts, the deviation board, the follow-up diary and the letters are live.
// Days are counted back from the day the demo is loaded, so the story is always current; the pixels
// and sizes are fixed by the scenario (seeded). Safe to run again: a patient already present is skipped.
import type { Knex } from "knex";
import { createMeasurement, signOffMeasurement } from "@/db/measurements";
import { addObservation, insertDrain, updateDrain } from "@/db/drains";
import { addProcedure, startOxygen, stopOxygen } from "@/db/episodes";
import { createBooking } from "@/db/bookings";
import type { Actor } from "@/db/types";
import type { Trx } from "@/db/knex";
import { ensureBucket } from "@/storage";
import { storeFilm } from "@/lib/films/store-film";
import { evaluateEpisodeFlags } from "@/lib/followup/evaluate";
import { addDays, clinicDate, clinicWallTimeToUtc } from "@/lib/clinic-time";
import { demoUid, drawChestFilm, gapForCollins, writeDicomFilm } from "./synthetic-films";

type Aetiology = "primary-spontaneous" | "secondary-spontaneous" | "iatrogenic" | "traumatic";
type Management = "observation" | "needle-aspiration" | "chest-drain" | "ambulatory-valve" | "surgery";

export interface ScenarioFilm {
  /** Days before the load day (0 = today), and the clinic time of day. */
  daysAgo: number;
  time: string;
  /** Collins percent the film is drawn at; 0 = lung fully up. */
  collins: number;
  projection?: "PA" | "AP";
  /** "registrar" measures it; "signed" is also signed off by the consultant; "none" leaves it for the registrar. */
  read: "none" | "registrar" | "signed";
}

export interface ScenarioEpisode {
  hn: string;
  family: string;
  given: string;
  dob: string;
  sex: "female" | "male";
  email: string | null;
  side: "left" | "right";
  aetiology: Aetiology;
  underlyingDisease?: string;
  procedure?: string;
  management: Management;
  protocol?: string;
  /** What the episode shows in the demo (for people reading this file). */
  story: string;
  films: ScenarioFilm[];
  oxygen?: { fromDaysAgo: number; toDaysAgo: number | null; flow: number };
  procedures?: { kind: "needle-aspiration" | "ambulatory-valve" | "surgery"; daysAgo: number; volumeMl?: number }[];
  drain?: {
    daysAgo: number;
    sizeFr: number;
    indication: "air" | "blood" | "fluid";
    /** Observation every `everyHours` from insertion, bubbling as given, until `hours`. */
    observe: { everyHours: number; hours: number; bubbling: "none" | "on-coughing" | "on-expiration" | "continuous"; swinging: boolean };
    removedAfterHours?: number;
  };
  booking?: { inDays: number; time: string; location: string };
  resolvedOnFilm?: number;
}

/** A dozen invented patients; none is a real person. */
export const SCENARIO: ScenarioEpisode[] = [
  {
    hn: "LGH-200101", family: "Penhaligon", given: "Rowan", dob: "2001-06-12", sex: "male", email: "rowan.p@example.org", side: "right",
    aetiology: "primary-spontaneous", management: "observation", protocol: "observation",
    story: "Resolving on track: about 1.25 % a day, inside the band (Kircher & Swartzel 1954).",
    films: [
      { daysAgo: 12, time: "09:40", collins: 28, read: "signed" },
      { daysAgo: 6, time: "10:15", collins: 20, read: "signed" },
      { daysAgo: 1, time: "11:05", collins: 14, read: "registrar" },
    ],
    booking: { inDays: 9, time: "09:30", location: "Larkmoor General Hospital, X-ray department, room 2" },
  },
  {
    hn: "LGH-200102", family: "Adebayo-Lindgren", given: "Harriet", dob: "1956-02-03", sex: "female", email: null, side: "left",
    aetiology: "secondary-spontaneous", underlyingDisease: "COPD", management: "observation", protocol: "observation",
    story: "Slower than expected: the film of yesterday is well above the expected course.",
    films: [
      { daysAgo: 14, time: "08:50", collins: 26, read: "signed" },
      { daysAgo: 7, time: "09:20", collins: 25, read: "signed" },
      { daysAgo: 1, time: "10:00", collins: 24, read: "registrar" },
    ],
  },
  {
    hn: "LGH-200103", family: "Moreau-Quist", given: "Elias", dob: "1998-11-30", sex: "male", email: "elias.mq@example.org", side: "right",
    aetiology: "primary-spontaneous", management: "observation", protocol: "early",
    story: "Enlarging: larger on the second film than on the first.",
    films: [
      { daysAgo: 5, time: "14:10", collins: 17, read: "signed" },
      { daysAgo: 2, time: "09:35", collins: 27, read: "registrar" },
    ],
  },
  {
    hn: "LGH-200104", family: "Castellano-Burke", given: "Iris", dob: "1949-08-21", sex: "female", email: null, side: "right",
    aetiology: "secondary-spontaneous", underlyingDisease: "emphysema with bullae", management: "chest-drain", protocol: "drain",
    story: "Persistent air leak: continuous bubbling for four days (BTS 2010: specialist at 48 h, surgical opinion at 3-5 days).",
    films: [
      { daysAgo: 5, time: "08:30", collins: 45, read: "signed" },
      { daysAgo: 4, time: "09:00", collins: 24, read: "signed" },
      { daysAgo: 1, time: "09:10", collins: 18, read: "registrar" },
    ],
    drain: { daysAgo: 5, sizeFr: 12, indication: "air", observe: { everyHours: 12, hours: 96, bubbling: "continuous", swinging: true } },
  },
  {
    hn: "LGH-200105", family: "Oyelaran", given: "Tobias", dob: "1995-03-09", sex: "male", email: "tobias.oyelaran@example.org", side: "left",
    aetiology: "primary-spontaneous", management: "needle-aspiration", protocol: "aspiration",
    story: "Resolved after aspiration and cleared to fly (7 days after the film that confirmed resolution; BTS 2011).",
    films: [
      { daysAgo: 30, time: "13:00", collins: 35, read: "signed" },
      { daysAgo: 29, time: "09:00", collins: 11, read: "signed" },
      { daysAgo: 16, time: "10:30", collins: 0, read: "none" },
    ],
    procedures: [{ kind: "needle-aspiration", daysAgo: 30, volumeMl: 1200 }],
    resolvedOnFilm: 2,
  },
  {
    hn: "LGH-200106", family: "Nakamura-Ellis", given: "Greta", dob: "1967-12-01", sex: "female", email: null, side: "right",
    aetiology: "iatrogenic", procedure: "CT-guided lung biopsy", management: "observation", protocol: "early",
    story: "Small iatrogenic pneumothorax; yesterday's film waits for the registrar.",
    films: [
      { daysAgo: 3, time: "16:20", collins: 12, read: "registrar" },
      { daysAgo: 1, time: "09:45", collins: 10, read: "none" },
    ],
  },
  {
    hn: "LGH-200107", family: "Fitzwilliam", given: "Darius", dob: "1984-05-17", sex: "male", email: "darius.fw@example.org", side: "left",
    aetiology: "traumatic", management: "chest-drain", protocol: "drain",
    story: "Traumatic, drained with a large-bore tube, drain out after two days.",
    films: [
      { daysAgo: 6, time: "22:15", collins: 40, projection: "AP", read: "signed" },
      { daysAgo: 4, time: "09:00", collins: 15, read: "signed" },
    ],
    drain: { daysAgo: 6, sizeFr: 28, indication: "blood", observe: { everyHours: 12, hours: 36, bubbling: "none", swinging: true }, removedAfterHours: 48 },
  },
  {
    hn: "LGH-200108", family: "Delacroix-Obi", given: "Anouk", dob: "2000-09-25", sex: "female", email: "anouk.do@example.org", side: "right",
    aetiology: "primary-spontaneous", management: "ambulatory-valve", protocol: "early",
    story: "Ambulatory valve fitted at presentation.",
    films: [
      { daysAgo: 4, time: "11:30", collins: 32, read: "signed" },
      { daysAgo: 2, time: "10:10", collins: 20, read: "registrar" },
    ],
    procedures: [{ kind: "ambulatory-valve", daysAgo: 4 }],
  },
  {
    hn: "LGH-200109", family: "Sørensen-Achebe", given: "Malik", dob: "1993-01-14", sex: "male", email: null, side: "left",
    aetiology: "primary-spontaneous", management: "surgery", protocol: "observation",
    story: "Second episode, referred for surgery (VATS pleurectomy).",
    films: [
      { daysAgo: 20, time: "10:00", collins: 38, read: "signed" },
      { daysAgo: 18, time: "09:30", collins: 22, read: "signed" },
      { daysAgo: 2, time: "09:30", collins: 6, read: "registrar" },
    ],
    procedures: [{ kind: "surgery", daysAgo: 17 }],
  },
  {
    hn: "LGH-200110", family: "Whitlock", given: "Beatrix", dob: "1952-07-07", sex: "female", email: null, side: "right",
    aetiology: "secondary-spontaneous", underlyingDisease: "cystic fibrosis", management: "observation", protocol: "observation",
    story: "On supplemental oxygen for three days: faster resorption expected (Northfield 1971).",
    films: [
      { daysAgo: 6, time: "09:15", collins: 24, read: "signed" },
      { daysAgo: 3, time: "09:40", collins: 10, read: "registrar" },
    ],
    oxygen: { fromDaysAgo: 6, toDaysAgo: 3, flow: 10 },
  },
  {
    hn: "LGH-200111", family: "Karlsson-Mbeki", given: "Oren", dob: "1990-04-02", sex: "male", email: "oren.km@example.org", side: "left",
    aetiology: "primary-spontaneous", management: "observation", protocol: "observation",
    story: "One film a month ago and nothing since: past the predicted resolution, needs a repeat film.",
    films: [{ daysAgo: 30, time: "10:20", collins: 22, read: "signed" }],
  },
  {
    hn: "LGH-200112", family: "Ferreira-Holt", given: "Lucia", dob: "2004-10-19", sex: "female", email: null, side: "right",
    aetiology: "primary-spontaneous", management: "observation", protocol: "early",
    story: "Presented this morning: the first film is not measured yet.",
    films: [{ daysAgo: 0, time: "08:20", collins: 26, read: "none" }],
  },
];

interface People {
  teamId: string;
  registrar: Actor & { name: string };
  consultant: Actor & { name: string };
  nurse: Actor & { name: string };
}

/** Clinic wall-clock time `daysAgo` days before `today` (YYYY-MM-DD). */
const at = (today: string, daysAgo: number, time: string) => clinicWallTimeToUtc(addDays(today, -daysAgo), time);
const HOUR = 3_600_000;

export function seedOf(hn: string, i: number): number {
  let h = 17;
  for (const c of hn) h = Math.imul(h ^ c.charCodeAt(0), 31) >>> 0;
  return (h + i * 7919) >>> 0;
}

async function loadEpisode(knex: Knex, s: ScenarioEpisode, p: People, now: Date, today: string): Promise<void> {
  const first = s.films[0];
  const presented = first ? addDays(today, -first.daysAgo) : today;
  const [patient] = await knex("patients")
    .insert({ team_id: p.teamId, hospital_number: s.hn, family_name: s.family, given_name: s.given, date_of_birth: s.dob, sex: s.sex, email: s.email, email_consent: s.email !== null, email_consent_at: s.email ? now : null })
    .returning<{ id: string }[]>("id");
  if (!patient) throw new Error(`patient ${s.hn} not created`);
  const [episode] = await knex("episodes")
    .insert({
      patient_id: patient.id, team_id: p.teamId, side: s.side, onset_on: addDays(presented, -1), presented_on: presented, aetiology: s.aetiology,
      underlying_disease: s.underlyingDisease ?? null, procedure: s.procedure ?? null, management: s.management, follow_up_protocol: s.protocol ?? null,
      consultant_id: p.consultant.id, registrar_id: p.registrar.id, created_by: p.registrar.id,
    })
    .returning<{ id: string }[]>("id");
  if (!episode) throw new Error(`episode of ${s.hn} not created`);
  const episodeId = episode.id;
  const evaluate = async (trx: Trx) => {
    await evaluateEpisodeFlags(trx, episodeId, now, null);
  };

  if (s.oxygen) {
    const o = s.oxygen;
    await knex.transaction(async (trx) => {
      const period = await startOxygen(trx, p.registrar, episodeId, { startedAt: at(today, o.fromDaysAgo, "08:00").toISOString(), flowLMin: o.flow, device: "Non-rebreather mask" });
      if (o.toDaysAgo !== null) await stopOxygen(trx, p.registrar, episodeId, period.id, at(today, o.toDaysAgo, "12:00").toISOString());
    });
  }
  for (const pr of s.procedures ?? []) {
    await knex.transaction((trx) => addProcedure(trx, p.registrar, episodeId, { kind: pr.kind, performedAt: at(today, pr.daysAgo, "15:00").toISOString(), volumeMl: pr.volumeMl ?? null }));
  }

  for (const [i, f] of s.films.entries()) {
    const film = await drawChestFilm({ gap: gapForCollins(f.collins), side: s.side, seed: seedOf(s.hn, i) });
    const date = addDays(today, -f.daysAgo).replace(/-/g, "");
    const bytes = writeDicomFilm(film, {
      sopInstanceUid: demoUid(`${s.hn}:${i}:sop`),
      studyInstanceUid: demoUid(`${s.hn}:${i}:study`),
      seriesInstanceUid: demoUid(`${s.hn}:${i}:series`),
      date,
      time: `${f.time.replace(":", "")}00`,
      patientName: `${s.family}^${s.given}`,
      patientId: s.hn,
      viewPosition: f.projection ?? "PA",
      institution: "Larkmoor General Hospital",
    });
    const stored = await storeFilm({ actor: p.registrar, episodeId, filename: `${s.hn}-${date}-${f.projection ?? "PA"}.dcm`, contentType: "application/dicom", bytes, now }, { knex });
    // Demo films are all erect except a trauma AP film; DICOM carries no erect/supine attribute for DX.
    await knex("films").where({ id: stored.id }).update({ position: f.projection === "AP" ? "supine" : "erect" });
    if (f.read === "none") continue;
    await knex.transaction(async (trx) => {
      const m = await createMeasurement(trx, p.registrar, stored.id, { calipers: film.calipers, plane: "film" }, evaluate);
      if (f.read === "signed") await signOffMeasurement(trx, p.consultant, m.id, evaluate);
    });
  }

  if (s.drain) {
    const d = s.drain;
    const inserted = at(today, d.daysAgo, "10:30");
    await knex.transaction(async (trx) => {
      const drain = await insertDrain(
        trx, p.registrar, episodeId,
        { insertedAt: inserted.toISOString(), insertedBy: p.registrar.name, sizeFr: d.sizeFr, site: "5th intercostal space, mid-axillary line", technique: d.sizeFr >= 20 ? "blunt-dissection" : "seldinger", indication: d.indication, drainage: "underwater-seal", suctionOn: false },
        now,
      );
      for (let h = d.observe.everyHours; h <= d.observe.hours; h += d.observe.everyHours) {
        const t = new Date(inserted.getTime() + h * HOUR);
        if (t > now) break;
        await addObservation(trx, p.registrar, drain.id, { observedAt: t.toISOString(), swinging: d.observe.swinging, bubbling: d.observe.bubbling, fluidMl: d.indication === "blood" ? Math.max(20, 240 - h * 5) : 10 }, now);
      }
      if (d.removedAfterHours !== undefined) {
        await updateDrain(trx, p.registrar, drain.id, { action: "remove", removedAt: new Date(inserted.getTime() + d.removedAfterHours * HOUR).toISOString(), removalReason: "Lung re-expanded, no air leak, drainage under 100 mL a day" }, now);
      }
    });
  }

  if (s.resolvedOnFilm !== undefined) {
    const f = s.films[s.resolvedOnFilm];
    if (f) {
      const on = addDays(today, -f.daysAgo);
      await knex("episodes").where({ id: episodeId }).update({ status: "resolved", resolved_on: on, discharged_on: addDays(presented, 1), version: 2 });
      await knex.transaction(evaluate);
    }
  }
  if (s.booking) {
    const b = s.booking;
    await knex.transaction((trx) =>
      createBooking(trx, p.nurse, { episodeId, kind: "repeat-film", source: "protocol", scheduledAt: at(today, -b.inDays, b.time).toISOString(), dueOn: addDays(today, b.inDays), location: b.location }, now),
    );
  }
  // Flags that depend only on time (overdue, unresolved by prediction) as the nightly sweep would see them.
  await knex.transaction(evaluate);
}

/** Loads the scenario into the team; returns how many episodes were added. */
export async function loadDemoScenario(knex: Knex, teamId: string, now = new Date()): Promise<number> {
  const users = await knex("users").where({ team_id: teamId }).whereNull("disabled_at").select<{ id: string; name: string; role: string }[]>("id", "name", "role");
  const pick = (role: string) => {
    const u = users.find((x) => x.role === role);
    if (!u) throw new Error(`the demo team has no ${role}`);
    return { id: u.id, name: u.name, teamId };
  };
  const people: People = { teamId, registrar: pick("registrar"), consultant: pick("consultant"), nurse: pick("nurse") };
  const present = new Set((await knex("patients").where({ team_id: teamId }).whereIn("hospital_number", SCENARIO.map((s) => s.hn)).select<{ hospital_number: string }[]>("hospital_number")).map((r) => r.hospital_number));
  const today = clinicDate(now);
  if (present.size < SCENARIO.length) await ensureBucket();
  let added = 0;
  for (const s of SCENARIO) {
    if (present.has(s.hn)) continue;
    await loadEpisode(knex, s, people, now, today);
    added += 1;
  }
  return added;
}
