// Downloads for the episode: the letter (PDF), the FHIR bundle, and the team's audit CSV files.
import { can } from "@/lib/auth/permissions";
import { Card } from "@/components/ui/card";
import { buttonClass } from "@/components/ui/button";
import type { SectionProps } from "./types";

export async function ExportsSection({ episode, user }: SectionProps) {
  if (!can(user.role, "export.read")) return null;
  const link = (href: string, label: string, hint: string) => (
    <li>
      <a href={href} download className={buttonClass("quiet", "w-full justify-start")}>{label}</a>
      <p className="mt-1 text-xs text-ink-soft">{hint}</p>
    </li>
  );
  return (
    <Card title="Letter and exports">
      <ul className="space-y-3 text-sm">
        {link(`/api/episodes/${episode.id}/letter`, "Letter (PDF)", "Patient, episode, measurements with method and calibration, resorption chart, plan, bookings, travel advice and cautions.")}
        {link(`/api/episodes/${episode.id}/fhir`, "FHIR R4 bundle (JSON)", "The current measurements as Observations, with the Patient; preliminary until signed off.")}
      </ul>
      <h3 className="mt-4 text-sm font-bold">For clinical audit (whole team)</h3>
      <ul className="mt-2 space-y-3 text-sm">
        {link("/api/exports/episodes.csv", "Episodes (CSV)", "One row per episode: coded fields and figures, no free-text notes.")}
        {link("/api/exports/measurements.csv", "Measurements (CSV)", "Every version of every reading, with calibration and sign-off.")}
      </ul>
    </Card>
  );
}
