// Synthetic frontal chest films for the demo, drawn in code at KNOWN geometry and spacing: a chest
// outline, both hemithoraces, the mediastinum, and on the side of the pneumothorax a collapsed lung
// whose visceral pleural line stands off the chest wall by the distances the scenario asks for. Seeded,
// so the same scenario draws the same pixels. Written as DICOM (explicit VR little endian, 12 bits
// stored, Imager Pixel Spacing) by the small writer at the end of this file. No patient, no real film.
import sharp from "sharp";
import { collinsPercent, type CaliperName, type Segment } from "@/measure";

/** Detector pixel pitch written to Imager Pixel Spacing (0018,1164), mm (DR detectors: 0.1-0.2 mm, from memory; coarser here to keep the demo quick). */
export const DEMO_SPACING_MM = 0.35;
export const DEMO_WIDTH = 1000;
export const DEMO_HEIGHT = 1200;

/** Fixed landmarks of the drawn chest (pixels, pneumothorax side drawn on the viewer's left, then mirrored for a left one). */
export const LANDMARKS = {
  bodyLeft: 60,
  bodyRight: 940,
  bodyTop: 80,
  wall: 120, // inner chest wall of the affected hemithorax
  mediastinumLeft: 460,
  mediastinumRight: 540,
  otherWall: 880,
  cupolaTop: 200, // highest point of the thoracic cupola, at x = apexX
  apexX: 290,
  diaphragm: 1000,
  upperY: 400, // midpoint of the upper half of the lung (Rhea, Collins)
  hilumY: 600, // level of the hilum: Light widths and the BTS distance
  lowerY: 800, // midpoint of the lower half of the lung
} as const;

/** Interpleural distances of one drawn pneumothorax, cm. All zero = no pneumothorax (lung up). */
export interface Gap {
  apexCm: number;
  upperCm: number;
  lowerCm: number;
  hilumCm: number;
}

/**
 * The distances for a target Collins percent: A : B : C = 1.6 : 1 : 0.7 and the hilum 0.85 of B, so that
 * 4.2 + 4.7 x (A + B + C) = target (Collins CD et al., AJR 1995;165:1127). 0 = no pneumothorax.
 */
export function gapForCollins(targetPercent: number): Gap {
  if (targetPercent <= 0) return { apexCm: 0, upperCm: 0, lowerCm: 0, hilumCm: 0 };
  const sum = Math.max(0, (targetPercent - 4.2) / 4.7);
  const u = sum / 3.3;
  return { apexCm: 1.6 * u, upperCm: u, lowerCm: 0.7 * u, hilumCm: 0.85 * u };
}

export const cmToPx = (cm: number, spacingMm = DEMO_SPACING_MM) => Math.round((cm * 10) / spacingMm);

/** The gaps as drawn (whole pixels) and the Collins percent they make; the scenario's true figures. */
export function drawnGap(gap: Gap): { px: { apex: number; upper: number; lower: number; hilum: number }; cm: Gap; collinsPercent: number | null } {
  const px = { apex: cmToPx(gap.apexCm), upper: cmToPx(gap.upperCm), lower: cmToPx(gap.lowerCm), hilum: cmToPx(gap.hilumCm) };
  const cm = { apexCm: (px.apex * DEMO_SPACING_MM) / 10, upperCm: (px.upper * DEMO_SPACING_MM) / 10, lowerCm: (px.lower * DEMO_SPACING_MM) / 10, hilumCm: (px.hilum * DEMO_SPACING_MM) / 10 };
  const none = px.apex === 0 && px.upper === 0 && px.lower === 0;
  return { px, cm, collinsPercent: none ? null : collinsPercent(cm.apexCm, cm.upperCm, cm.lowerCm).percent };
}

/** Deterministic PRNG (mulberry32). */
export function prng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** The cupola's upper edge: a shallow arch over the hemithorax. */
const cupolaY = (x: number) => LANDMARKS.cupolaTop + 0.0022 * (x - LANDMARKS.apexX) ** 2;

/** Interpleural distance (px) at row y: B above the upper level, H around the hilum, C below the lower level. */
function lateralGapPx(y: number, g: { upper: number; lower: number; hilum: number }): number {
  const { upperY, hilumY, lowerY } = LANDMARKS;
  if (y <= upperY) return g.upper;
  if (y < hilumY - 20) return g.upper + ((y - upperY) / (hilumY - 20 - upperY)) * (g.hilum - g.upper);
  if (y <= hilumY + 20) return g.hilum; // flat around the hilum so the hilum caliper reads H exactly
  if (y < lowerY) return g.hilum + ((y - hilumY - 20) / (lowerY - hilumY - 20)) * (g.lower - g.hilum);
  return g.lower;
}

export interface SyntheticFilm {
  width: number;
  height: number;
  /** 12-bit stored values, MONOCHROME2 (air dark), row by row. */
  values: Uint16Array;
  calipers: Record<CaliperName, Segment>;
  /** The distances as drawn, and their Collins percent (null without a pneumothorax). */
  drawn: ReturnType<typeof drawnGap>;
}

const V = { air: 150, tissue: 2500, mediastinum: 3000, lung: 1150, pneumothorax: 420, pleura: 2300 } as const;

/**
 * Draws one film. `side` is the patient's side of the pneumothorax: a right one is drawn on the viewer's
 * left (films are viewed facing the patient), a left one mirrored.
 */
export async function drawChestFilm(opts: { gap: Gap; side: "left" | "right"; seed: number }): Promise<SyntheticFilm> {
  const W = DEMO_WIDTH;
  const H = DEMO_HEIGHT;
  const L = LANDMARKS;
  const d = drawnGap(opts.gap);
  const rand = prng(opts.seed);
  // Lung markings: smooth value noise on a coarse grid.
  const step = 24;
  const gw = Math.ceil(W / step) + 2;
  const gh = Math.ceil(H / step) + 2;
  const grid = new Float32Array(gw * gh);
  for (let i = 0; i < grid.length; i += 1) grid[i] = rand() - 0.5;
  const noise = (x: number, y: number) => {
    const gx = x / step;
    const gy = y / step;
    const x0 = Math.floor(gx);
    const y0 = Math.floor(gy);
    const fx = gx - x0;
    const fy = gy - y0;
    const at = (i: number, j: number) => grid[j * gw + i] ?? 0;
    return (at(x0, y0) * (1 - fx) + at(x0 + 1, y0) * fx) * (1 - fy) + (at(x0, y0 + 1) * (1 - fx) + at(x0 + 1, y0 + 1) * fx) * fy;
  };
  const px = new Float32Array(W * H);
  // Per-column constants: the cupola's edge and the shading of the lung towards the hilum.
  const cup = new Float32Array(W);
  const shade = new Float32Array(W);
  for (let x = 0; x < W; x += 1) {
    cup[x] = x > L.mediastinumRight ? cupolaY(W - 1 - x) : cupolaY(x); // the other cupola, mirrored
    shade[x] = x > L.mediastinumRight ? 180 * Math.exp(-((x - L.mediastinumRight) / 70)) : 180 * Math.exp(-((L.mediastinumLeft - x) / 70));
  }
  for (let y = 0; y < H; y += 1) {
    const gapX = lateralGapPx(y, d.px);
    for (let x = 0; x < W; x += 1) {
      let v: number;
      const inBody = x >= L.bodyLeft && x <= L.bodyRight && y >= L.bodyTop;
      if (!inBody) v = V.air;
      else if (y >= L.diaphragm || y < (cup[x] ?? 0) || x < L.wall || x > L.otherWall) v = V.tissue;
      else if (x >= L.mediastinumLeft && x <= L.mediastinumRight) v = V.mediastinum;
      else if (x > L.mediastinumRight) {
        // the other lung, fully expanded
        v = V.lung + 260 * noise(x, y) + (shade[x] ?? 0);
      } else {
        // the affected hemithorax: lung inside the edge, dark pneumothorax outside it
        const edgeX = L.wall + gapX;
        const topY = (cup[x] ?? 0) + d.px.apex;
        if (x < edgeX || y < topY) v = V.pneumothorax;
        else v = V.lung + 260 * noise(x, y) + (shade[x] ?? 0);
        // the visceral pleural line: two bright pixels along the lung's edge, where there is air outside it
        const onSide = gapX > 0 && x >= edgeX && x < edgeX + 2 && y >= topY;
        const onTop = d.px.apex > 0 && y >= topY && y < topY + 2 && x >= edgeX;
        if (onSide || onTop) v = V.pleura;
      }
      px[y * W + x] = v;
    }
  }
  // Soften with sharp (a film is never pixel-sharp), then back to 12-bit values.
  // (Plain loops: TypedArray.from with a map function is very slow in V8 on a million samples.)
  const soft16 = new Uint16Array(W * H);
  for (let i = 0; i < soft16.length; i += 1) soft16[i] = Math.max(0, Math.min(4095, Math.round(px[i] ?? 0))) * 16;
  // A Uint16Array (not a Buffer) tells sharp the raw samples are 16-bit.
  const blurred = await sharp(soft16, { raw: { width: W, height: H, channels: 1 } })
    .blur(0.8)
    .toColourspace("grey16")
    .raw({ depth: "ushort" })
    .toBuffer();
  if (blurred.byteLength !== W * H * 2) throw new Error(`sharp returned ${blurred.byteLength} bytes for a ${W} x ${H} 16-bit film`);
  const out16 = new Uint16Array(blurred.buffer, blurred.byteOffset, blurred.byteLength / 2);
  const values = new Uint16Array(W * H);
  for (let i = 0; i < values.length; i += 1) values[i] = Math.min(4095, Math.round((out16[i] ?? 0) / 16));

  const seg = (ax: number, ay: number, bx: number, by: number): Segment => ({ a: { x: ax, y: ay }, b: { x: bx, y: by } });
  let calipers: Record<CaliperName, Segment> = {
    hemithorax: seg(L.wall, L.hilumY, L.mediastinumLeft, L.hilumY),
    lung: seg(L.wall + d.px.hilum, L.hilumY, L.mediastinumLeft, L.hilumY),
    apex: seg(L.apexX, L.cupolaTop, L.apexX, L.cupolaTop + d.px.apex),
    upper: seg(L.wall, L.upperY, L.wall + d.px.upper, L.upperY),
    lower: seg(L.wall, L.lowerY, L.wall + d.px.lower, L.lowerY),
    hilum: seg(L.wall, L.hilumY + 10, L.wall + d.px.hilum, L.hilumY + 10),
  };
  let values2 = values;
  if (opts.side === "left") {
    values2 = new Uint16Array(values.length);
    for (let y = 0; y < H; y += 1) for (let x = 0; x < W; x += 1) values2[y * W + (W - 1 - x)] = values[y * W + x] ?? 0;
    const m = (s: Segment): Segment => ({ a: { x: W - 1 - s.a.x, y: s.a.y }, b: { x: W - 1 - s.b.x, y: s.b.y } });
    calipers = { hemithorax: m(calipers.hemithorax), lung: m(calipers.lung), apex: m(calipers.apex), upper: m(calipers.upper), lower: m(calipers.lower), hilum: m(calipers.hilum) };
  }
  return { width: W, height: H, values: values2, calipers, drawn: d };
}

// ---- a small DICOM writer: explicit VR little endian, one greyscale frame ----

interface Element {
  tag: [number, number];
  vr: string;
  value: string | Buffer | number[];
}

const LONG_VRS = new Set(["OB", "OW", "OF", "SQ", "UT", "UN", "UC", "UR"]);

function encodeValue(vr: string, value: Element["value"]): Buffer {
  if (Buffer.isBuffer(value)) return value.length % 2 ? Buffer.concat([value, Buffer.from([0])]) : value;
  if (Array.isArray(value)) {
    // US values
    const b = Buffer.alloc(value.length * 2);
    value.forEach((v, i) => b.writeUInt16LE(v, i * 2));
    return b;
  }
  const pad = vr === "UI" ? "\0" : " ";
  const s = value.length % 2 ? value + pad : value;
  return Buffer.from(s, "latin1");
}

function encodeElement(e: Element): Buffer {
  const body = encodeValue(e.vr, e.value);
  const long = LONG_VRS.has(e.vr);
  const head = Buffer.alloc(long ? 12 : 8);
  head.writeUInt16LE(e.tag[0], 0);
  head.writeUInt16LE(e.tag[1], 2);
  head.write(e.vr, 4, "latin1");
  if (long) head.writeUInt32LE(body.length, 8);
  else head.writeUInt16LE(body.length, 6);
  return Buffer.concat([head, body]);
}

export interface DicomHeader {
  sopInstanceUid: string;
  studyInstanceUid: string;
  seriesInstanceUid: string;
  /** Clinic-local acquisition date and time: YYYYMMDD and HHMMSS. */
  date: string;
  time: string;
  patientName: string;
  patientId: string;
  viewPosition: "PA" | "AP";
  institution: string;
}

/** Digital X-Ray Image Storage - For Presentation (DICOM PS3.4). */
const DX_PRESENTATION = "1.2.840.10008.5.1.4.1.1.1.1";
const EXPLICIT_VR_LE = "1.2.840.10008.1.2.1";

/** Writes the film as a DICOM Part 10 file (PS3.10): preamble, file meta, data set in tag order. */
export function writeDicomFilm(film: Pick<SyntheticFilm, "width" | "height" | "values">, h: DicomHeader, spacingMm = DEMO_SPACING_MM): Buffer {
  const meta: Element[] = [
    { tag: [0x0002, 0x0001], vr: "OB", value: Buffer.from([0, 1]) },
    { tag: [0x0002, 0x0002], vr: "UI", value: DX_PRESENTATION },
    { tag: [0x0002, 0x0003], vr: "UI", value: h.sopInstanceUid },
    { tag: [0x0002, 0x0010], vr: "UI", value: EXPLICIT_VR_LE },
    { tag: [0x0002, 0x0012], vr: "UI", value: "2.25.101010101" },
    { tag: [0x0002, 0x0013], vr: "SH", value: "RIMWATCH_DEMO" },
  ];
  const metaBody = Buffer.concat(meta.map(encodeElement));
  const groupLength = encodeElement({ tag: [0x0002, 0x0000], vr: "UL", value: Buffer.alloc(4) });
  groupLength.writeUInt32LE(metaBody.length, 8);
  const pixels = Buffer.from(film.values.buffer, film.values.byteOffset, film.values.byteLength);
  const spacing = `${spacingMm}\\${spacingMm}`;
  const data: Element[] = [
    { tag: [0x0008, 0x0016], vr: "UI", value: DX_PRESENTATION },
    { tag: [0x0008, 0x0018], vr: "UI", value: h.sopInstanceUid },
    { tag: [0x0008, 0x0020], vr: "DA", value: h.date },
    { tag: [0x0008, 0x0022], vr: "DA", value: h.date },
    { tag: [0x0008, 0x0030], vr: "TM", value: h.time },
    { tag: [0x0008, 0x0032], vr: "TM", value: h.time },
    { tag: [0x0008, 0x0060], vr: "CS", value: "DX" },
    { tag: [0x0008, 0x0068], vr: "CS", value: "FOR PRESENTATION" },
    { tag: [0x0008, 0x0080], vr: "LO", value: h.institution },
    { tag: [0x0010, 0x0010], vr: "PN", value: h.patientName },
    { tag: [0x0010, 0x0020], vr: "LO", value: h.patientId },
    { tag: [0x0018, 0x1164], vr: "DS", value: spacing },
    { tag: [0x0018, 0x5101], vr: "CS", value: h.viewPosition },
    { tag: [0x0020, 0x000d], vr: "UI", value: h.studyInstanceUid },
    { tag: [0x0020, 0x000e], vr: "UI", value: h.seriesInstanceUid },
    { tag: [0x0028, 0x0002], vr: "US", value: [1] },
    { tag: [0x0028, 0x0004], vr: "CS", value: "MONOCHROME2" },
    { tag: [0x0028, 0x0010], vr: "US", value: [film.height] },
    { tag: [0x0028, 0x0011], vr: "US", value: [film.width] },
    { tag: [0x0028, 0x0100], vr: "US", value: [16] },
    { tag: [0x0028, 0x0101], vr: "US", value: [12] },
    { tag: [0x0028, 0x0102], vr: "US", value: [11] },
    { tag: [0x0028, 0x0103], vr: "US", value: [0] },
    { tag: [0x0028, 0x1050], vr: "DS", value: "1700" },
    { tag: [0x0028, 0x1051], vr: "DS", value: "3400" },
    { tag: [0x7fe0, 0x0010], vr: "OW", value: pixels },
  ];
  const preamble = Buffer.concat([Buffer.alloc(128), Buffer.from("DICM", "latin1")]);
  return Buffer.concat([preamble, groupLength, metaBody, ...data.map(encodeElement)]);
}

/** A UID under the UUID-derived root 2.25 (PS3.5 B.2) from a seeded name, so reruns give the same UIDs. */
export function demoUid(name: string): string {
  let h1 = 0x811c9dc5;
  let h2 = 0x01000193;
  for (let i = 0; i < name.length; i += 1) {
    h1 = Math.imul(h1 ^ name.charCodeAt(i), 16777619) >>> 0;
    h2 = Math.imul(h2 ^ name.charCodeAt(i), 2246822519) >>> 0;
  }
  return `2.25.${BigInt(h1) * 4294967296n + BigInt(h2)}`;
}
