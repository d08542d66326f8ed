// The episode letter as a PDF (pdfkit, its built-in standard fonts: nothing is fetched): patient,
// episode, measurements with method and calibration, the resorption chart drawn as vector graphics
// from the trend data, plan, bookings, drains, travel advice and the cautions.
import "server-only";
import PDFDocument from "pdfkit";
import { airLeakDefaults, cabinPressureKPa, feetToMetres, flyingClearanceDate, flyingDefaults, gasExpansionFactor, maxCabinAltitudeFeet, standardAtmosphere } from "@/measure";
import { ageOn } from "@/lib/format";
import { AETIOLOGY_LABELS, MANAGEMENT_LABELS, METHOD_LABELS } from "@/lib/validation/episodes";
import { DRAINAGE_LABELS, INDICATION_LABELS, TECHNIQUE_LABELS } from "@/lib/validation/drains";
import { planWords, ruleLabel } from "@/lib/followup/rules";
import { CLINIC_TIME_ZONE } from "@/lib/clinic-time";
import type { EpisodeExport } from "./episode-data";
import { chartGeometry, type ChartGeometry } from "./letter-chart";
import { calibrationWords, CAUTION_WORDS, METHOD_WORDS } from "./words";

type Doc = PDFKit.PDFDocument;

const INK = "#1f2428";
const SOFT = "#4f5860";
const LINE = "#b9b3a6";
const ACCENT = "#15565a";
const BAND = "#cfe6e6";
const ALARM = "#a3261b";

const PAGE = { width: 595.28, height: 841.89, margin: 50 };
const CONTENT_WIDTH = PAGE.width - 2 * PAGE.margin;
const BOTTOM = PAGE.height - PAGE.margin - 30;

const WIN_ANSI_EXTRAS = new Set([..."€‚ƒ„…†‡ˆ‰Š‹ŒŽ‘’“”•–—˜™š›œžŸ"]);
const REPLACEMENTS: Record<string, string> = { "≥": ">=", "≤": "<=", "→": "->", "←": "<-", "−": "-", "±": "+/-", "\u00a0": " " };

/** Text the standard PDF fonts can show (WinAnsi): a few symbols spelled out, anything else as "?". */
export function pdfText(s: string): string {
  let out = "";
  for (const ch of s) {
    const r = REPLACEMENTS[ch];
    if (r !== undefined) out += r;
    else if ((ch.codePointAt(0) ?? 0) <= 0xff || WIN_ANSI_EXTRAS.has(ch)) out += ch;
    else out += "?";
  }
  return out;
}

const fmtDate = (d: Date | string | null): string => {
  if (d === null) return "-";
  const v = typeof d === "string" ? new Date(d.length === 10 ? `${d}T00:00:00Z` : d) : d;
  return v.toLocaleDateString("en-GB", { day: "numeric", month: "short", year: "numeric", timeZone: typeof d === "string" && d.length === 10 ? "UTC" : CLINIC_TIME_ZONE });
};
const fmtDateTime = (d: Date | string | null): string =>
  d === null ? "-" : new Date(d).toLocaleString("en-GB", { day: "numeric", month: "short", year: "numeric", hour: "2-digit", minute: "2-digit", timeZone: CLINIC_TIME_ZONE });
const fig = (v: number | null, digits: number): string => (v === null ? "-" : v.toFixed(digits));

function ensureRoom(doc: Doc, height: number) {
  if (doc.y + height > BOTTOM) doc.addPage();
}

function heading(doc: Doc, title: string) {
  ensureRoom(doc, 60);
  doc.moveDown(0.8);
  doc.font("Helvetica-Bold").fontSize(12.5).fillColor(ACCENT).text(pdfText(title), PAGE.margin, doc.y, { width: CONTENT_WIDTH });
  const y = doc.y + 2;
  doc.moveTo(PAGE.margin, y).lineTo(PAGE.margin + CONTENT_WIDTH, y).lineWidth(0.6).strokeColor(LINE).stroke();
  doc.y = y + 6;
  doc.font("Helvetica").fontSize(10).fillColor(INK);
}

function para(doc: Doc, text: string, opts: { size?: number; color?: string; bold?: boolean } = {}) {
  doc.font(opts.bold ? "Helvetica-Bold" : "Helvetica").fontSize(opts.size ?? 10).fillColor(opts.color ?? INK);
  const t = pdfText(text);
  ensureRoom(doc, doc.heightOfString(t, { width: CONTENT_WIDTH }) + 2);
  doc.text(t, PAGE.margin, doc.y, { width: CONTENT_WIDTH });
}

/** Label-value pairs in two columns. */
function pairs(doc: Doc, items: [string, string][]) {
  const labelW = 120;
  for (const [label, value] of items) {
    doc.font("Helvetica").fontSize(10);
    const v = pdfText(value);
    const h = Math.max(doc.heightOfString(v, { width: CONTENT_WIDTH - labelW }), 12);
    ensureRoom(doc, h + 2);
    const y = doc.y;
    doc.font("Helvetica-Bold").fillColor(SOFT).text(pdfText(label), PAGE.margin, y, { width: labelW - 6 });
    doc.font("Helvetica").fillColor(INK).text(v, PAGE.margin + labelW, y, { width: CONTENT_WIDTH - labelW });
    doc.y = Math.max(doc.y, y + h) + 2;
  }
}

interface Column {
  header: string;
  width: number;
  align?: "left" | "right";
}

function table(doc: Doc, columns: Column[], rows: { cells: string[]; note?: string }[]) {
  const drawHeader = () => {
    const y = doc.y;
    let x = PAGE.margin;
    doc.font("Helvetica-Bold").fontSize(8.5).fillColor(SOFT);
    for (const c of columns) {
      doc.text(pdfText(c.header), x, y, { width: c.width - 4, align: c.align ?? "left" });
      x += c.width;
    }
    doc.y = y + 13;
    doc.moveTo(PAGE.margin, doc.y - 2).lineTo(PAGE.margin + CONTENT_WIDTH, doc.y - 2).lineWidth(0.4).strokeColor(LINE).stroke();
  };
  ensureRoom(doc, 40);
  drawHeader();
  for (const r of rows) {
    doc.font("Helvetica").fontSize(9);
    const heights = r.cells.map((c, i) => doc.heightOfString(pdfText(c), { width: (columns[i]?.width ?? 40) - 4 }));
    const noteH = r.note ? doc.fontSize(8).heightOfString(pdfText(r.note), { width: CONTENT_WIDTH - 10 }) + 2 : 0;
    const h = Math.max(11, ...heights) + noteH + 4;
    if (doc.y + h > BOTTOM) {
      doc.addPage();
      drawHeader();
    }
    const y = doc.y;
    let x = PAGE.margin;
    doc.font("Helvetica").fontSize(9).fillColor(INK);
    r.cells.forEach((c, i) => {
      const col = columns[i];
      if (!col) return;
      doc.text(pdfText(c), x, y, { width: col.width - 4, align: col.align ?? "left" });
      x += col.width;
    });
    let next = y + Math.max(11, ...heights) + 1;
    if (r.note) {
      doc.font("Helvetica").fontSize(8).fillColor(SOFT).text(pdfText(r.note), PAGE.margin + 10, next, { width: CONTENT_WIDTH - 10 });
      next = doc.y;
    }
    doc.y = next + 3;
  }
  doc.font("Helvetica").fontSize(10).fillColor(INK);
}

function drawChart(doc: Doc, g: ChartGeometry, methodLabel: string) {
  const { box } = g;
  doc.save();
  // Band and expected line.
  if (g.band.length > 2) {
    doc.polygon(...g.band.map((p): [number, number] => [p.x, p.y])).fillColor(BAND).fill();
  }
  // Axes and grid.
  doc.lineWidth(0.3).strokeColor(LINE);
  for (const t of g.yTicks) doc.moveTo(box.x, t.y).lineTo(box.x + box.width, t.y).stroke();
  doc.lineWidth(0.8).strokeColor(INK);
  doc.moveTo(box.x, box.y).lineTo(box.x, box.y + box.height).lineTo(box.x + box.width, box.y + box.height).stroke();
  doc.font("Helvetica").fontSize(7.5).fillColor(SOFT);
  for (const t of g.xTicks) {
    doc.moveTo(t.x, box.y + box.height).lineTo(t.x, box.y + box.height + 3).lineWidth(0.6).strokeColor(INK).stroke();
    doc.text(t.label, t.x - 15, box.y + box.height + 5, { width: 30, align: "center" });
  }
  for (const t of g.yTicks) doc.text(t.label, box.x - 30, t.y - 3.5, { width: 25, align: "right" });
  doc.fontSize(8).fillColor(INK);
  doc.text("Days since the first film", box.x, box.y + box.height + 16, { width: box.width, align: "center" });
  doc.text(pdfText(`${methodLabel} %`), box.x - 45, box.y - 14, { width: 120 });

  if (g.expected.length > 1) {
    doc.lineWidth(1).strokeColor(ACCENT).dash(4, { space: 3 });
    const [first, ...rest] = g.expected;
    if (first) {
      doc.moveTo(first.x, first.y);
      for (const p of rest) doc.lineTo(p.x, p.y);
      doc.stroke();
    }
    doc.undash();
  }
  // Events: short ticks above the axis with labels, alternating heights so they do not collide.
  g.events.forEach((e, i) => {
    const top = box.y + 4 + (i % 3) * 10;
    doc.lineWidth(0.5).strokeColor(SOFT).dash(1.5, { space: 2 }).moveTo(e.x, top + 8).lineTo(e.x, box.y + box.height).stroke().undash();
    doc.font("Helvetica").fontSize(6.5).fillColor(SOFT).text(pdfText(e.label), e.x + 2, top, { width: 90, lineBreak: false });
  });
  if (g.resolution) {
    doc.lineWidth(0.8).strokeColor(ACCENT).moveTo(g.resolution.x, box.y + box.height - 6).lineTo(g.resolution.x, box.y + box.height + 0).stroke();
    doc.font("Helvetica").fontSize(6.5).fillColor(ACCENT).text("predicted resolution", g.resolution.x - 72, box.y + box.height - 16, { width: 70, align: "right", lineBreak: false });
  }
  // Other methods: small grey squares.
  for (const o of g.others) {
    for (const p of o.points) doc.rect(p.x - 1.8, p.y - 1.8, 3.6, 3.6).fillColor("#8a9299").fill();
  }
  // The primary method: line and points (filled = signed off).
  if (g.points.length > 1) {
    const [first, ...rest] = g.points;
    if (first) {
      doc.lineWidth(1.4).strokeColor(INK).moveTo(first.x, first.y);
      for (const p of rest) doc.lineTo(p.x, p.y);
      doc.stroke();
    }
  }
  for (const p of g.points) {
    doc.circle(p.x, p.y, 3.2).lineWidth(1.2);
    if (p.signedOff) doc.fillAndStroke(INK, INK);
    else doc.fillAndStroke("#ffffff", INK);
    doc.font("Helvetica").fontSize(7).fillColor(INK).text(`${p.percent.toFixed(0)}`, p.x + 4, p.y - 10, { width: 24, lineBreak: false });
  }
  doc.restore();
}

function legend(doc: Doc, x: number, y: number, methodLabel: string, hasOthers: boolean) {
  doc.save();
  doc.circle(x + 4, y + 4, 3).lineWidth(1.2).fillAndStroke(INK, INK);
  doc.font("Helvetica").fontSize(8).fillColor(INK).text(pdfText(`${methodLabel}, signed off`), x + 12, y, { lineBreak: false });
  doc.circle(x + 134, y + 4, 3).lineWidth(1.2).fillAndStroke("#ffffff", INK);
  doc.fillColor(INK).text("not yet signed off", x + 142, y, { lineBreak: false });
  doc.lineWidth(1).strokeColor(ACCENT).dash(4, { space: 3 }).moveTo(x + 235, y + 4).lineTo(x + 255, y + 4).stroke().undash();
  doc.rect(x + 235, y + 7, 20, 4).fillColor(BAND).fill();
  doc.fillColor(INK).text("expected course and band", x + 260, y, { lineBreak: false });
  if (hasOthers) {
    doc.rect(x + 388, y + 2.2, 3.6, 3.6).fillColor("#8a9299").fill();
    doc.fillColor(INK).text("other methods", x + 396, y, { lineBreak: false });
  }
  doc.restore();
}

export interface LetterOptions {
  now: Date;
  preparedBy: string;
}

/** Renders the letter; resolves with the PDF bytes. */
export function renderEpisodeLetter(data: EpisodeExport, opts: LetterOptions): Promise<Buffer> {
  const { patient, episode, trend } = data;
  const doc = new PDFDocument({
    size: "A4",
    margin: PAGE.margin,
    bufferPages: true,
    info: {
      Title: pdfText(`Pneumothorax follow-up summary: ${patient.given_name} ${patient.family_name} (${patient.hospital_number})`),
      Author: pdfText(`${data.hospital} respiratory team`),
      Creator: "Rimwatch",
      CreationDate: opts.now,
    },
  });
  const chunks: Buffer[] = [];
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on("data", (c: Buffer) => chunks.push(c));
    doc.on("end", () => resolve(Buffer.concat(chunks)));
    doc.on("error", reject);
  });

  // Letterhead.
  doc.font("Helvetica-Bold").fontSize(16).fillColor(ACCENT).text(pdfText(data.hospital || "Respiratory team"), PAGE.margin, PAGE.margin, { width: CONTENT_WIDTH });
  doc.font("Helvetica").fontSize(10).fillColor(SOFT).text(pdfText(`${data.teamName} - pneumothorax follow-up`), { width: CONTENT_WIDTH });
  doc.text(pdfText(`Prepared ${fmtDateTime(opts.now)} by ${opts.preparedBy} with Rimwatch`), { width: CONTENT_WIDTH });
  doc.moveDown(0.6);
  doc.font("Helvetica-Bold").fontSize(14).fillColor(INK).text("Pneumothorax follow-up summary", { width: CONTENT_WIDTH });

  heading(doc, "Patient");
  pairs(doc, [
    ["Name", `${patient.given_name} ${patient.family_name}`],
    ["Hospital number", patient.hospital_number],
    ["Date of birth", `${fmtDate(patient.date_of_birth)} (${ageOn(patient.date_of_birth, opts.now)} years)`],
    ["Sex", patient.sex],
  ]);

  heading(doc, "Episode");
  const cause = episode.underlying_disease ? ` (${episode.underlying_disease})` : episode.procedure ? ` after ${episode.procedure}` : "";
  pairs(doc, [
    ["Pneumothorax", `${episode.side === "left" ? "Left" : "Right"}, ${AETIOLOGY_LABELS[episode.aetiology].toLowerCase()}${cause}`],
    ["Management", MANAGEMENT_LABELS[episode.management]],
    ["Onset / presented", `${fmtDate(episode.onset_on)} / ${fmtDate(episode.presented_on)}`],
    ["Status", `${episode.status}${episode.resolved_on ? `, resolution confirmed on a film of ${fmtDate(episode.resolved_on)}` : ""}${episode.discharged_on ? `; discharged ${fmtDate(episode.discharged_on)}` : ""}`],
    ["Consultant / registrar", `${data.consultantName ?? "-"} / ${data.registrarName ?? "-"}`],
    ["Chart method", METHOD_WORDS[episode.primary_method]],
  ]);

  heading(doc, "Size measurements");
  if (data.measurements.length === 0) {
    para(doc, `${data.filmCount} film(s) on record, none measured yet.`, { color: SOFT });
  } else {
    table(
      doc,
      [
        { header: "Film", width: 70 },
        { header: "View", width: 58 },
        { header: "Reader", width: 112 },
        { header: "Light %", width: 42, align: "right" },
        { header: "Rhea %", width: 42, align: "right" },
        { header: "Collins %", width: 48, align: "right" },
        { header: "Hilum cm", width: 50, align: "right" },
        { header: "Apex cm", width: 48, align: "right" },
        { header: "BTS / ACCP", width: 25.28 + 45 },
      ],
      data.measurements.map((m) => ({
        cells: [
          fmtDate(m.film.takenAt ?? m.film.createdAt),
          [m.film.position, m.film.projection].filter(Boolean).join(" ") || "not recorded",
          `${m.readerName} v${m.version}${m.signedOffAt ? ", signed off" : ""}`,
          fig(m.light, 1),
          fig(m.rhea, 1),
          fig(m.collins, 1),
          fig(m.hilumCm, 2),
          fig(m.apexCm, 2),
          `${m.btsClass ?? "-"} / ${m.accpClass ?? "-"}`,
        ],
        note: `Calibration: ${calibrationWords(m.plane, m.calibrationSource)}.`,
      })),
    );
    para(doc, `Methods: ${METHOD_WORDS.light}; ${METHOD_WORDS.rhea}; ${METHOD_WORDS.collins}. BTS 2010 class from the interpleural distance at the hilum (large from 2 cm); ACCP 2001 class from apex to cupola (large from 3 cm). Each guideline's class is shown on its own; they are not merged.`, { size: 8, color: SOFT });
  }

  const hasChart = trend.series[trend.primaryMethod].length > 0;
  if (hasChart) ensureRoom(doc, 300); // keep the heading with its chart
  heading(doc, "Resorption chart");
  const methodLabel = METHOD_LABELS[trend.primaryMethod];
  if (!hasChart) {
    para(doc, `No film measured by the ${methodLabel} method yet: nothing to chart.`, { color: SOFT });
  } else {
    const box = { x: PAGE.margin + 40, y: doc.y + 22, width: CONTENT_WIDTH - 55, height: 170 };
    const g = chartGeometry(trend, box);
    drawChart(doc, g, methodLabel);
    legend(doc, PAGE.margin, box.y + box.height + 30, methodLabel, g.others.length > 0);
    doc.y = box.y + box.height + 46;
    const p = trend.prediction;
    para(
      doc,
      `Expected course from the first measured film: ${trend.model.ratePerDay} % of the hemithorax per day on air, ${trend.model.oxygenMultiplier} times faster on supplemental oxygen, band +/- ${trend.model.tolerancePoints} points.` +
        (p ? ` Predicted resolution around ${fmtDate(p.resolutionDate)} (day ${p.resolutionDay.toFixed(0)}).` : "") +
        ` Sources: ${trend.model.sources.join("; ")}.`,
      { size: 8, color: SOFT },
    );
  }

  if (data.drains.length > 0) {
    heading(doc, "Chest drains");
    for (const d of data.drains) {
      const leak = d.assessment.airLeak;
      para(
        doc,
        `${d.size_fr} Fr, ${TECHNIQUE_LABELS[d.technique].toLowerCase()}, ${d.site}; for ${INDICATION_LABELS[d.indication].toLowerCase()}; ${DRAINAGE_LABELS[d.drainage].toLowerCase()}${d.suction_on ? `, suction ${d.suction_kpa} kPa` : ""}. In ${fmtDateTime(d.inserted_at)} by ${d.inserted_by}` +
          (d.removed_at ? `; out ${fmtDateTime(d.removed_at)} (${d.removal_reason ?? ""}).` : "; still in place."),
      );
      if (d.assessment.size.verdict === "smaller-than-guidance" || d.assessment.size.verdict === "larger-than-guidance") para(doc, `Size: ${d.assessment.size.reason}`, { size: 9, color: ALARM });
      if (leak.advice !== "none") para(doc, `Air leak: ${leak.reason} (${airLeakDefaults.source}).`, { size: 9, color: ALARM });
      if (d.assessment.check.prompt) para(doc, `Check: ${d.assessment.check.reason}`, { size: 9, color: ALARM });
    }
  }

  heading(doc, "Plan");
  const live = data.flags.filter((f) => f.state === "open" || f.state === "acknowledged");
  const decided = data.flags.filter((f) => f.state === "resolved");
  if (live.length === 0 && decided.length === 0) para(doc, "No deviation raised for this episode.", { color: SOFT });
  for (const f of decided) para(doc, `Decided ${fmtDate(f.resolvedAt)}${f.resolvedByName ? ` by ${f.resolvedByName}` : ""} (${ruleLabel(f.rule).toLowerCase()}): ${planWords(f.plan)}.`);
  for (const f of live) para(doc, `Awaiting a decision: ${ruleLabel(f.rule)}. ${f.reason}`, { color: ALARM });
  if (episode.follow_up_protocol) para(doc, `Follow-up protocol: ${episode.follow_up_protocol}.`);

  heading(doc, "Bookings");
  if (data.bookings.length === 0) para(doc, "No repeat film or clinic booked.", { color: SOFT });
  for (const b of data.bookings) {
    para(doc, `${b.kind === "clinic" ? "Clinic" : "Repeat film"}: ${fmtDateTime(b.scheduledAt)}${b.location ? `, ${b.location}` : ""} - ${b.state}.`);
  }

  heading(doc, "Travel advice");
  const traumatic = episode.aetiology === "traumatic";
  const cabinKPa = cabinPressureKPa(feetToMetres(maxCabinAltitudeFeet));
  const expansion = gasExpansionFactor(standardAtmosphere.seaLevelPressureKPa, cabinKPa);
  if (episode.resolved_on) {
    para(doc, `Flying is reasonable from ${fmtDate(flyingClearanceDate(episode.resolved_on, { traumatic }))}: ${traumatic ? flyingDefaults.daysAfterTraumatic : flyingDefaults.daysAfterResolution} days after the film of ${fmtDate(episode.resolved_on)} that confirmed resolution.`);
  } else {
    para(doc, `Do not fly while the pneumothorax is present. Flying becomes reasonable ${traumatic ? flyingDefaults.daysAfterTraumatic : flyingDefaults.daysAfterResolution} days after a film confirms resolution.`);
  }
  para(doc, `At an airliner's highest cabin altitude (${maxCabinAltitudeFeet.toLocaleString("en-GB")} ft, ${cabinKPa.toFixed(1)} kPa) any gas left in the pleural space expands about x${expansion.toFixed(2)} (Boyle's law, ICAO standard atmosphere).`);
  para(doc, "Diving: avoid permanently unless both lungs have had a surgical pleurectomy (BTS fitness to dive, Thorax 2003, from memory).");
  para(doc, `Source: ${flyingDefaults.source}.`, { size: 8, color: SOFT });

  heading(doc, "Cautions");
  for (const c of CAUTION_WORDS) para(doc, `- ${c}`, { size: 9 });

  // Footer on every page.
  const range = doc.bufferedPageRange();
  for (let i = range.start; i < range.start + range.count; i += 1) {
    doc.switchToPage(i);
    // The footer sits in the bottom margin: lift the margin so pdfkit does not start a new page for it.
    doc.page.margins.bottom = 0;
    const y = PAGE.height - PAGE.margin + 10;
    doc.font("Helvetica").fontSize(7.5).fillColor(SOFT);
    doc.text(
      pdfText(`${patient.given_name} ${patient.family_name} - ${patient.hospital_number} - page ${i + 1} of ${range.count}. Estimates support, and never replace, clinical judgement.`),
      PAGE.margin,
      y,
      { width: CONTENT_WIDTH, align: "center", lineBreak: false },
    );
  }
  doc.end();
  return done;
}
