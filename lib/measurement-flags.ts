// After a measurement is saved or signed off, the follow-up engine re-evaluates the episode's flags in
// the same transaction, so a figure and the flags it raises land together or not at all.
import "server-only";
import type { AfterChange } from "@/db/measurements";
import type { Actor } from "@/db/types";
import { evaluateEpisodeFlags } from "@/lib/followup/evaluate";

export function reevaluateFlags(actor: Actor): AfterChange {
  return async (trx, episodeId) => {
    await evaluateEpisodeFlags(trx, episodeId, new Date(), actor);
  };
}
