import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { requireUser } from "@/lib/auth/session";
import { db } from "@/db/knex";
import { getTeam } from "@/db/users";
import { getTravelFigures } from "@/lib/travel/load";
import { isUuid, orNotFound } from "@/lib/pages";
import { formatDate, sideLabel } from "@/lib/format";
import { PrintButton } from "@/components/travel/print-button";
import { factorWords, flyingHeadline, remainingGasWords } from "@/components/travel/travel-words";

export const metadata: Metadata = { title: "Travel note" };

const nf = (v: number, digits: number) => v.toLocaleString("en-GB", { minimumFractionDigits: digits, maximumFractionDigits: digits });

export default async function TravelNotePage({ params }: { params: Promise<{ id: string }> }) {
  const user = await requireUser("episode.read");
  const { id } = await params;
  if (!isUuid(id)) notFound();
  const [t, team] = await Promise.all([orNotFound(getTravelFigures(db(), user.teamId, id, new Date())), getTeam(db(), user.teamId)]);
  const { cabin, flying, remainingGas, diving } = t.figures;

  return (
    <article className="travel-note mx-auto max-w-3xl space-y-6 rounded-lg border border-line bg-card p-8 print:max-w-none print:border-0 print:p-0">
      <div className="no-print flex flex-wrap items-center justify-between gap-3">
        <Link href={`/episodes/${t.episodeId}`} className="text-sm text-estuary-700 underline">Back to the episode</Link>
        <PrintButton label="Print the travel note" />
      </div>

      <header className="border-b-2 border-estuary-900 pb-3">
        <p className="text-sm text-ink-soft">{team?.name} · {team?.hospital}</p>
        <h1 className="text-2xl font-bold">Travel note for {t.patient.givenName} {t.patient.familyName}</h1>
        <p className="figures text-sm">Hospital number {t.patient.hospitalNumber} · {sideLabel(t.side).toLowerCase()} side · printed {formatDate(t.today)}</p>
      </header>

      <section aria-labelledby="fly">
        <h2 id="fly" className="text-xl font-bold text-estuary-900">Flying</h2>
        <p className="mt-2 text-lg font-bold" data-testid="flying-headline">{flyingHeadline(flying, t.resolvedOn)}</p>
        {flying.state === "not-yet" && flying.earliestOn ? (
          <p className="mt-2">
            If the air clears as expected (the estimate is around {formatDate(t.predictedResolutionOn)}), the earliest date would be {formatDate(flying.earliestOn)}, {flying.waitDays} days
            later. This is an estimate only: the date counts from the X-ray that actually shows the lung fully re-expanded.
          </p>
        ) : null}
        {flying.traumatic ? <p className="mt-2">After an injury to the chest the wait is longer: {flying.waitDays} days after that X-ray.</p> : null}
      </section>

      <section aria-labelledby="why">
        <h2 id="why" className="text-xl font-bold text-estuary-900">Why the wait: air expands in flight</h2>
        <p className="mt-2">
          Aircraft cabins are kept at the air pressure of a place up to {nf(cabin.altitudeFeet, 0)} feet ({nf(cabin.altitudeMetres, 0)} m) high. There the pressure is about{" "}
          {nf(cabin.pressureKPa, 1)} kPa instead of {nf(cabin.seaLevelKPa, 1)} kPa at sea level, so any trapped air grows by{" "}
          <strong className="figures" data-testid="expansion-factor">{factorWords(cabin.expansionFactor)}</strong> (Boyle&apos;s law; moist air at body temperature {factorWords(cabin.expansionFactorBodyGas)}):
          about {Math.round((cabin.expansionFactor - 1) * 100)} % more.
        </p>
        {remainingGas ? <p className="mt-2" data-testid="remaining-gas">{remainingGasWords(remainingGas, cabin.expansionFactor)}</p> : null}
        {!remainingGas && flying.state === "not-yet" ? <p className="mt-2">No measured X-ray is on record yet, so the size of the remaining air is not known.</p> : null}
      </section>

      <section aria-labelledby="dive">
        <h2 id="dive" className="text-xl font-bold text-estuary-900">Diving</h2>
        <p className="mt-2">{diving.advice} Snorkelling at the surface is not diving with compressed air; ask your respiratory team if unsure.</p>
      </section>

      <section aria-labelledby="help" className="rounded-md border-2 border-rust-ink p-4">
        <h2 id="help" className="text-xl font-bold text-rust-ink">Get help at once</h2>
        <p className="mt-2">
          If you become more short of breath or have new chest pain, do not travel: go to the nearest emergency department (in the UK call 999). On a plane, tell the cabin crew
          straight away.
        </p>
      </section>

      <footer className="space-y-2 border-t border-line pt-3 text-xs text-ink-soft">
        <p>
          This note is general advice prepared by your respiratory team. Their judgement, your airline&apos;s rules and local protocols come first; check with them before you book.
        </p>
        <p>
          Sources: {flying.source}. Cabin pressure: {cabin.source}. Diving: {diving.source}.
        </p>
      </footer>
    </article>
  );
}
