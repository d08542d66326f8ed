/**
 * A synthetic frontal chest film with a right pneumothorax at KNOWN geometry: the chest wall, the
 * mediastinum and the edge of the collapsed lung pass through exact pixel positions, so a test can
 * place the caliper set where the film says and know every length. Drawn in code (no patient, no
 * real film); written as a DICOM with dcmtk (tests/support/dicom-fixtures.ts) with Imager Pixel
 * Spacing 0.2 mm, or as an 8-bit PNG with sharp.
 *
 * The film is seen as usual: the patient's right on the viewer's left. Base size 1,300 x 1,500 pixels;
 * `scale` multiplies every coordinate (the bench uses a 3,000 x 3,000 film).
 */
import sharp from 'sharp';
import type { CaliperName, Segment } from '@/measure';
import { writeDicom } from './dicom-fixtures';

/** Detector pixel pitch written to Imager Pixel Spacing (0018,1164), mm, row\column. Typical of DR detectors (from memory: 0.1-0.2 mm). */
export const SYNTHETIC_SPACING_MM = 0.2;

type Table = ReadonlyArray<readonly [number, number]>; // [row y, column x]

/** Piecewise-linear x at row y through a table of (y, x) points; null outside its rows. */
function along(table: Table, y: number): number | null {
  const first = table[0];
  const last = table[table.length - 1];
  if (!first || !last || y < first[0] || y > last[0]) return null;
  for (let i = 0; i < table.length - 1; i += 1) {
    const p = table[i];
    const q = table[i + 1];
    if (!p || !q) continue;
    if (y >= p[0] && y <= q[0]) return q[0] === p[0] ? p[1] : p[1] + ((y - p[0]) / (q[0] - p[0])) * (q[1] - p[1]);
  }
  return null;
}

// Right hemithorax (viewer's left), base coordinates: inner chest wall and mediastinal edge.
const WALL: Table = [[300, 330], [340, 200], [420, 130], [550, 106], [675, 105], [800, 100], [1025, 110], [1150, 130], [1250, 170]];
const MEDIASTINUM: Table = [[300, 410], [400, 560], [500, 600], [1250, 600]];
// The collapsed right lung: its lateral edge (the visceral pleural line) and medial edge.
const LUNG_EDGE: Table = [[500, 400], [540, 300], [600, 255], [675, 230], [800, 215], [950, 195], [1025, 160], [1100, 150], [1200, 170]];
const LUNG_MEDIAL: Table = [[500, 420], [540, 560], [600, 600], [1200, 600]];

/**
 * Where the six calipers go on the base film (pixels), with the lengths they then have:
 * hemithorax 500 px, lung 385 px, apex 200 px, upper 125 px, lower 50 px, hilum 110 px
 * (x 0.2 mm: 100, 77, 40, 25, 10, 22 mm). Each starts where a reader would press.
 */
export const SYNTHETIC_CALIPERS: Record<CaliperName, Segment> = {
  hemithorax: { a: { x: 100, y: 800 }, b: { x: 600, y: 800 } },
  lung: { a: { x: 215, y: 800 }, b: { x: 600, y: 800 } },
  apex: { a: { x: 400, y: 500 }, b: { x: 400, y: 300 } },
  upper: { a: { x: 230, y: 675 }, b: { x: 105, y: 675 } },
  lower: { a: { x: 160, y: 1025 }, b: { x: 110, y: 1025 } },
  // A little below the hemithorax line so its first end is not pressed on another caliper's end.
  hilum: { a: { x: 211, y: 830 }, b: { x: 101.3333, y: 830 } },
};

export interface SyntheticFilm {
  width: number;
  height: number;
  /** 12-bit stored values, MONOCHROME2 (air dark), row by row. */
  values: Uint16Array;
  calipers: Record<CaliperName, Segment>;
}

/**
 * Draws the film: 1,300 x 1,500 by default; any size is scaled from that geometry (aspect may change).
 * `noise` adds deterministic detector-like noise of that many stored values either way (default none).
 */
export function syntheticChestFilm(opts: { width?: number; height?: number; noise?: number } = {}): SyntheticFilm {
  const width = opts.width ?? 1300;
  const height = opts.height ?? 1500;
  const sx = width / 1300;
  const sy = height / 1500;
  const v = new Float32Array(width * height);
  // Lung markings: vessels fading from the hilum (600, 800) outwards.
  const markings = (dx: number, dy: number, y: number) => {
    const r = Math.sqrt(dx * dx + dy * dy);
    return 150 * Math.max(0, 1 - r / 430) * (0.5 + 0.5 * Math.sin(y * 0.11 + r * 0.045) * Math.sin(r * 0.09 - y * 0.03));
  };
  // Diaphragm domes: the hemithorax ends here (base coordinates; right dome at x 330, left mirrored).
  const dome = (x: number) => 1150 + 100 * ((x - 330) / 270) ** 2;
  for (let row = 0; row < height; row += 1) {
    const y = row / sy; // base coordinates
    const wall = along(WALL, y);
    const med = along(MEDIASTINUM, y);
    const lungL = along(LUNG_EDGE, y);
    const lungM = along(LUNG_MEDIAL, y);
    for (let col = 0; col < width; col += 1) {
      const x = col / sx;
      const xm = 1300 - x; // the left hemithorax (viewer's right) is the mirror image, lung fully expanded
      let val = 150; // air outside the patient
      const body = ((x - 650) / 640) ** 2 + ((y - 820) / 790) ** 2 <= 1;
      if (body) val = 2300;
      const inRight = wall !== null && med !== null && x > wall && x < med && y < dome(x);
      const inLeft = wall !== null && med !== null && xm > wall && xm < med && y < dome(xm);
      if (inLeft) val = 1000 + markings(xm - 600, y - 800, y);
      if (inRight) {
        const inLung = lungL !== null && lungM !== null && x > lungL && x < lungM;
        val = inLung ? 1000 + markings(x - 600, y - 800, y) : 430; // the rim of air: darkest, no markings
        if (lungL !== null && Math.abs(x - lungL) < 2.5) val = 1500; // visceral pleural line
      }
      if (inLeft || inRight) {
        const dx = inRight ? x - 350 : xm - 350;
        const ribPhase = (y - 0.0009 * dx * dx - 260) / 78; // ribs: gentle bright arcs
        if (ribPhase > 0 && ribPhase - Math.floor(ribPhase) < 0.16) val += 240;
      }
      if (x >= 600 && x <= 700 && y >= 120 && y <= 1250) val = 2900; // mediastinum and spine
      if (x >= 638 && x <= 662 && y >= 120 && y <= 560) val = 800; // trachea
      if (((x - 770) / 160) ** 2 + ((y - 1040) / 180) ** 2 <= 1) val = 2750; // heart
      v[row * width + col] = val;
    }
  }
  const blurred = boxBlur(boxBlur(v, width, height, 2), width, height, 2);
  const values = new Uint16Array(width * height);
  const noise = opts.noise ?? 0;
  let seed = 20261202;
  for (let i = 0; i < values.length; i += 1) {
    let n = 0;
    if (noise > 0) {
      seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0; // LCG (Numerical Recipes constants)
      n = ((seed >>> 8) / 0x1000000 - 0.5) * 2 * noise;
    }
    values[i] = Math.max(0, Math.min(4095, Math.round((blurred[i] ?? 0) + n)));
  }
  const calipers = {} as Record<CaliperName, Segment>;
  for (const [name, s] of Object.entries(SYNTHETIC_CALIPERS) as [CaliperName, Segment][]) {
    calipers[name] = { a: { x: s.a.x * sx, y: s.a.y * sy }, b: { x: s.b.x * sx, y: s.b.y * sy } };
  }
  return { width, height, values, calipers };
}

function boxBlur(src: Float32Array, w: number, h: number, r: number): Float32Array {
  const tmp = new Float32Array(src.length);
  const out = new Float32Array(src.length);
  const n = 2 * r + 1;
  for (let y = 0; y < h; y += 1) {
    for (let x = 0; x < w; x += 1) {
      let s = 0;
      for (let k = -r; k <= r; k += 1) s += src[y * w + Math.min(w - 1, Math.max(0, x + k))] ?? 0;
      tmp[y * w + x] = s / n;
    }
  }
  for (let y = 0; y < h; y += 1) {
    for (let x = 0; x < w; x += 1) {
      let s = 0;
      for (let k = -r; k <= r; k += 1) s += tmp[Math.min(h - 1, Math.max(0, y + k)) * w + x] ?? 0;
      out[y * w + x] = s / n;
    }
  }
  return out;
}

/** The film as a DICOM (explicit VR little endian, 12 bits stored) with Imager Pixel Spacing 0.2\0.2 and View Position PA. */
export function writeSyntheticDicom(dir: string, name = 'synthetic-chest', film = syntheticChestFilm()): string {
  return writeDicom(dir, name, {
    rows: film.height,
    columns: film.width,
    pixels: film.values,
    attributes: {
      '(0018,1164)': `DS [${SYNTHETIC_SPACING_MM}\\${SYNTHETIC_SPACING_MM}]`,
      '(0018,5101)': 'CS [PA]',
      '(0028,1050)': 'DS [1500]',
      '(0028,1051)': 'DS [3000]',
    },
  });
}

/** The film as an 8-bit greyscale PNG (no calibration: Light index only). */
export async function syntheticChestPng(film = syntheticChestFilm()): Promise<Buffer> {
  const grey = new Uint8Array(film.values.length);
  for (let i = 0; i < grey.length; i += 1) grey[i] = Math.round(((film.values[i] ?? 0) / 4095) * 255);
  return sharp(grey, { raw: { width: film.width, height: film.height, channels: 1 } }).toColourspace('b-w').png({ compressionLevel: 6 }).toBuffer();
}
