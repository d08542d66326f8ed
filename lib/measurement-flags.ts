// After a measurement is saved or signed off, or the episode's status, method or oxygen changes, the
// follow-up engine re-evaluates the episode's flags in the same transaction, so a change and the
// flags it raises or clears land together or not at all.
import "server-only";
import type { AfterChange } from "@/db/measurements";
import type { Actor } from "@/db/types";
import { evaluateEpisodeFlags } from "@/lib/followup/evaluate";

export function reevaluateFlags(actor: Actor): AfterChange {
  return async (trx, episodeId) => {
    await evaluateEpisodeFlags(trx, episodeId, new Date(), actor);
  };
}
