import Link from "next/link";
import { db } from "@/db/knex";
import { getTravelFigures } from "@/lib/travel/load";
import { Card } from "@/components/ui/card";
import { buttonClass } from "@/components/ui/button";
import { factorWords, flyingHeadline } from "@/components/travel/travel-words";
import type { SectionProps } from "./types";

/** Flying and diving in brief, with the printable travel note for the patient. */
export async function TravelSection({ episode, user }: SectionProps) {
  const t = await getTravelFigures(db(), user.teamId, episode.id, new Date());
  const { cabin, flying, remainingGas } = t.figures;
  return (
    <Card title="Travel" action={<Link href={`/episodes/${episode.id}/travel-note`} className={buttonClass("quiet", "px-3 py-1")}>Travel note</Link>}>
      <p className="text-sm font-bold">{flyingHeadline(flying, t.resolvedOn)}</p>
      <dl className="mt-3 grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-sm">
        <dt className="font-bold">Cabin altitude</dt>
        <dd className="figures">{cabin.altitudeFeet.toLocaleString("en-GB")} ft · {cabin.pressureKPa.toFixed(1)} kPa</dd>
        <dt className="font-bold">Gas expansion</dt>
        <dd className="figures">{factorWords(cabin.expansionFactor)}</dd>
        {remainingGas ? (
          <>
            <dt className="font-bold">Latest size in flight</dt>
            <dd className="figures">{remainingGas.percent.toFixed(0)} % → about {remainingGas.expandedPercent.toFixed(0)} %</dd>
          </>
        ) : null}
        <dt className="font-bold">Diving</dt>
        <dd>Not unless bilateral surgical pleurectomy (BTS 2003)</dd>
      </dl>
    </Card>
  );
}
