// Gathers one episode's facts for the travel note and computes its figures.
import "server-only";
import type { Trx } from "@/db/knex";
import { getEpisode, type EpisodeRow } from "@/db/episodes";
import { getPatient } from "@/db/patients";
import { clinicDate } from "@/lib/clinic-time";
import { loadEpisodeSeries, percentOf } from "@/lib/followup/series";
import { predictionFromSeries } from "@/lib/followup/trend";
import { readDeviationSettings, readTravelSettings } from "@/lib/settings-registry";
import { travelFigures, type TravelFigures } from "./figures";

export interface EpisodeTravel {
  episodeId: string;
  patient: { givenName: string; familyName: string; hospitalNumber: string };
  side: EpisodeRow["side"];
  aetiology: EpisodeRow["aetiology"];
  status: EpisodeRow["status"];
  resolvedOn: string | null;
  predictedResolutionOn: string | null;
  today: string;
  figures: TravelFigures;
}

/** Travel figures of one episode of the caller's team (404 otherwise). */
export async function getTravelFigures(trx: Trx, teamId: string, episodeId: string, now: Date): Promise<EpisodeTravel> {
  const episode = await getEpisode(trx, teamId, episodeId);
  const [patient, settings, deviation, series] = await Promise.all([
    getPatient(trx, teamId, episode.patient_id),
    readTravelSettings(trx, teamId),
    readDeviationSettings(trx, teamId),
    loadEpisodeSeries(trx, [episodeId]),
  ]);
  const data = series.get(episodeId);
  const today = clinicDate(now);
  let latest: { percent: number; method: EpisodeRow["primary_method"]; filmOn: string } | null = null;
  let predicted: string | null = null;
  if (data) {
    for (const p of data.films) {
      const v = percentOf(p, data.primaryMethod);
      if (v !== null) latest = { percent: v, method: data.primaryMethod, filmOn: clinicDate(p.takenAt) };
    }
    const prediction = predictionFromSeries(data, deviation);
    predicted = prediction ? clinicDate(new Date(prediction.resolutionDate)) : null;
  }
  const resolvedOn = episode.resolved_on;
  return {
    episodeId,
    patient: { givenName: patient.given_name, familyName: patient.family_name, hospitalNumber: patient.hospital_number },
    side: episode.side,
    aetiology: episode.aetiology,
    status: episode.status,
    resolvedOn,
    predictedResolutionOn: predicted,
    today,
    figures: travelFigures({ aetiology: episode.aetiology, resolvedOn, latest, predictedResolutionOn: predicted, today, settings }),
  };
}
