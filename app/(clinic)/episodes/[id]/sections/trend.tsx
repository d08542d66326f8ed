import { db } from "@/db/knex";
import { getEpisodeTrend } from "@/lib/followup/trend";
import { formatDate } from "@/lib/format";
import { METHOD_LABELS } from "@/lib/validation/episodes";
import { Card, Empty } from "@/components/ui/card";
import { TrendChart } from "@/components/followup/trend-chart";
import type { SectionProps } from "./types";

// The resorption chart: the episode's measured sizes against the expected course.
export async function TrendSection({ episode, user }: SectionProps) {
  const trend = await getEpisodeTrend(db(), user.teamId, episode.id, new Date());
  const measured = trend.series[trend.primaryMethod].length;
  return (
    <Card
      title="Resorption chart"
      action={
        trend.prediction ? (
          <p className="text-sm">
            Predicted resolution <strong>{formatDate(trend.prediction.resolutionDate)}</strong>
            <span className="text-ink-soft"> (day {trend.prediction.resolutionDay.toFixed(0)})</span>
          </p>
        ) : null
      }
    >
      {trend.films.length === 0 ? (
        <Empty>No film yet. Upload the first chest film below; once it is measured on the film desk, its size appears here.</Empty>
      ) : measured === 0 ? (
        <Empty>
          {trend.films.length} film{trend.films.length === 1 ? "" : "s"}, none measured by the {METHOD_LABELS[trend.primaryMethod]} method yet. Measure a film on the film desk to start the chart.
        </Empty>
      ) : (
        <>
          <TrendChart data={trend} />
          <p className="mt-3 text-xs text-ink-soft">
            Expected course from the {trend.prediction ? `${trend.prediction.baselinePercent.toFixed(0)} % film of day ${trend.prediction.baselineDay.toFixed(0)}` : "first measured film"}, at{" "}
            {trend.model.ratePerDay} % of the hemithorax per day on air and {trend.model.oxygenMultiplier}x faster on oxygen (Kircher &amp; Swartzel, JAMA 1954; BTS 2010;
            Northfield, BMJ 1971). Chart method: {METHOD_LABELS[trend.primaryMethod]} (Collins by default on erect PA films: fitted to CT volume, closest to it on
            average, and the method the published serial resorption rate was measured with). Methods read differently from each other; compare films of the same
            projection and position. An estimate to support, never replace, clinical judgement.
          </p>
          <details className="mt-2 text-sm">
            <summary className="cursor-pointer font-bold text-estuary-900">Figures as a table</summary>
            <table className="mt-2 w-full text-left text-xs">
              <thead>
                <tr><th className="py-1">Day</th><th>Taken</th><th>View</th><th>Collins</th><th>Light</th><th>Rhea</th><th>Hilum</th><th>Apex</th></tr>
              </thead>
              <tbody className="figures">
                {trend.films.map((f) => (
                  <tr key={f.filmId} className="border-t border-line">
                    <td className="py-1">{f.day.toFixed(1)}</td>
                    <td>{formatDate(f.takenAt)}</td>
                    <td>{[f.position, f.projection].filter(Boolean).join(" ") || "not recorded"}</td>
                    <td>{f.collins === null ? "—" : `${f.collins.toFixed(1)} %`}</td>
                    <td>{f.light === null ? "—" : `${f.light.toFixed(1)} %`}</td>
                    <td>{f.rhea === null ? "—" : `${f.rhea.toFixed(1)} %`}</td>
                    <td>{f.hilumCm === null ? "—" : `${f.hilumCm.toFixed(1)} cm`}</td>
                    <td>{f.apexCm === null ? "—" : `${f.apexCm.toFixed(1)} cm`}</td>
                  </tr>
                ))}
              </tbody>
            </table>
            {trend.events.length > 0 ? (
              <ul className="mt-2 text-xs">
                {trend.events.map((e, i) => <li key={i}>Day {e.day.toFixed(1)}: {e.label}</li>)}
              </ul>
            ) : null}
          </details>
        </>
      )}
    </Card>
  );
}
