"use client";
// The figures of one caliper set: each method on its own line, the guideline classes apart, the
// calibration used, the spread between methods, each method's caveats and the standing caution.
import type { CaliperEstimate, GuidelineClass } from "@/measure";

const fmt = (v: number, digits = 1) => v.toFixed(digits);

const PLANE_WORDS = { film: "detector (film) plane", patient: "patient plane" } as const;

const SOURCE_WORDS: Record<string, string> = {
  "imager-pixel-spacing": "Imager Pixel Spacing (0018,1164)",
  "pixel-spacing-uncorrected": "Pixel Spacing (0028,0030), uncorrected",
  "pixel-spacing-unverified": "Pixel Spacing (0028,0030), correction not recorded",
  "nominal-scanned-pixel-spacing": "Nominal Scanned Pixel Spacing (0018,2010)",
  "pixel-spacing-calibrated": "Pixel Spacing (0028,0030), calibrated to the patient",
  "imager-spacing/ermf": "Imager Pixel Spacing / magnification factor",
  "imager-spacing*sod/sid": "Imager Pixel Spacing x source distances",
  "reference-line": "a reference line drawn on the film",
};

function NotMeasured({ reason }: { reason: string }) {
  return (
    <span className="text-ink-soft">
      not measured <span className="block font-sans text-xs">{reason}</span>
    </span>
  );
}

function ClassTag({ g }: { g: GuidelineClass }) {
  if (g.size === "not-measured") return <span className="text-ink-soft">not measured</span>;
  const large = g.size === "large";
  return (
    <span className={`inline-flex rounded border px-1.5 py-0.5 text-xs font-bold ${large ? "border-amber-ink/30 bg-amber-wash text-amber-ink" : "border-moss-ink/30 bg-moss-wash text-moss-ink"}`}>
      {g.size}
    </span>
  );
}

export function Estimates({ estimate, heading }: { estimate: CaliperEstimate; heading: React.ReactNode }) {
  const e = estimate;
  const anyDrawn = Object.values(e.lengths).some((l) => l.status !== "missing");
  if (!anyDrawn) {
    return (
      <div data-testid="estimates">
        <div className="mb-1 flex items-center justify-between gap-2">{heading}</div>
        <p className="text-sm text-ink-soft">Figures appear here as you place the calipers, and change while you drag them.</p>
      </div>
    );
  }
  const row = "grid grid-cols-[8.5rem_1fr] gap-2 py-1.5";
  return (
    <div data-testid="estimates">
      <div className="mb-1 flex items-center justify-between gap-2">{heading}</div>
      <dl className="divide-y divide-line text-sm">
        <div className={row}>
          <dt className="font-bold">Light index</dt>
          <dd className="figures" data-testid="figure-light">
            {e.light.status === "ok" ? (
              <>
                <span className="text-lg font-bold">{fmt(e.light.percent)} %</span>
                <span className="ml-2 text-xs text-ink-soft">
                  L {fmt(e.light.lungLength, e.light.unit === "px" ? 0 : 1)} / H {fmt(e.light.hemithoraxLength, e.light.unit === "px" ? 0 : 1)} {e.light.unit}
                </span>
              </>
            ) : (
              <NotMeasured reason={e.light.reason} />
            )}
          </dd>
        </div>
        <div className={row}>
          <dt className="font-bold">Rhea</dt>
          <dd className="figures" data-testid="figure-rhea">
            {e.rhea.status === "ok" ? (
              <>
                <span className="text-lg font-bold">{e.rhea.outsideNomogram ? (e.rhea.outsideSide === "below" ? "< " : "> ") : ""}{fmt(e.rhea.percent)} %</span>
                {e.rhea.outsideNomogram ? <span className="ml-2 text-xs text-amber-ink">outside the nomogram</span> : null}
              </>
            ) : (
              <NotMeasured reason={e.rhea.reason} />
            )}
          </dd>
        </div>
        <div className={row}>
          <dt className="font-bold">Collins</dt>
          <dd className="figures" data-testid="figure-collins">
            {e.collins.status === "ok" ? (
              <>
                <span className="text-lg font-bold">{fmt(e.collins.percent)} %</span>
                <span className="ml-2 text-xs text-ink-soft">A+B+C {fmt(e.collins.sumCm, 2)} cm</span>
                {e.collins.clampedAt100 ? <span className="ml-2 text-xs text-amber-ink">capped at 100 %</span> : null}
              </>
            ) : (
              <NotMeasured reason={e.collins.reason} />
            )}
          </dd>
        </div>
        <div className={row}>
          <dt className="font-bold">AID</dt>
          <dd className="figures" data-testid="figure-aid">{e.aidCm === null ? <span className="text-ink-soft">not measured</span> : `${fmt(e.aidCm, 2)} cm`}</dd>
        </div>
        <div className={row}>
          <dt className="font-bold">Apex to cupola</dt>
          <dd className="figures" data-testid="figure-apex">
            {e.guideline.accp.valueCm !== null ? `${fmt(e.guideline.accp.valueCm, 2)} cm` : <span className="text-ink-soft">—</span>}
            <span className="ml-2 text-xs">ACCP 2001: </span>
            <ClassTag g={e.guideline.accp} />
            <span className="block font-sans text-xs text-ink-soft">{e.guideline.accp.size === "not-measured" ? e.guideline.accp.reason : e.guideline.accp.rule}</span>
          </dd>
        </div>
        <div className={row}>
          <dt className="font-bold">Gap at the hilum</dt>
          <dd className="figures" data-testid="figure-hilum">
            {e.guideline.bts.valueCm !== null ? `${fmt(e.guideline.bts.valueCm, 2)} cm` : <span className="text-ink-soft">—</span>}
            <span className="ml-2 text-xs">BTS 2010: </span>
            <ClassTag g={e.guideline.bts} />
            <span className="block font-sans text-xs text-ink-soft">{e.guideline.bts.size === "not-measured" ? e.guideline.bts.reason : e.guideline.bts.rule}</span>
          </dd>
        </div>
        <div className={row}>
          <dt className="font-bold">Calibration</dt>
          <dd className="text-xs" data-testid="figure-calibration">
            {e.calibrationSource ? (
              <>
                {SOURCE_WORDS[e.calibrationSource] ?? e.calibrationSource}; centimetres in the {PLANE_WORDS[e.plane]}
              </>
            ) : (
              <>No spacing in the {PLANE_WORDS[e.plane]}: centimetre methods are not measured; Light index works without it.</>
            )}
            {e.correctionUnknown && e.calibrationSource ? <span className="block text-amber-ink">Magnification correction status unknown.</span> : null}
          </dd>
        </div>
        <div className={row}>
          <dt className="font-bold">Spread</dt>
          <dd className="text-sm" data-testid="figure-spread">
            {e.spread.points === null ? (
              <span className="text-ink-soft">needs two methods</span>
            ) : (
              <span className="figures">
                {fmt(e.spread.points)} points across {e.spread.methodsCompared} methods
              </span>
            )}
            {e.spread.warning ? (
              <p role="status" className="mt-1 rounded border border-amber-ink/30 bg-amber-wash px-2 py-1 text-xs text-amber-ink">
                {e.spread.warning}
              </p>
            ) : null}
          </dd>
        </div>
      </dl>
      <details className="mt-2 text-xs">
        <summary className="cursor-pointer font-bold text-estuary-700">Caveats of each method</summary>
        {(
          [
            ["This film", e.caveats.general],
            ["Light index", e.caveats.light],
            ["Rhea", e.caveats.rhea],
            ["Collins", e.caveats.collins],
            ["BTS and ACCP classes", e.caveats.guideline],
            ["Calibration", e.calibrationNotes],
          ] as const
        ).map(([title, items]) =>
          items.length ? (
            <div key={title} className="mt-2">
              <p className="font-bold">{title}</p>
              <ul className="ml-4 list-disc">
                {items.map((c) => (
                  <li key={c}>{c}</li>
                ))}
              </ul>
            </div>
          ) : null,
        )}
      </details>
    </div>
  );
}
