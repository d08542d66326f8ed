// Writes the demo scenario's synthetic films to a folder, as DICOM (what the demo loads) and as PNG (to
// look at), with a manifest of the sizes each was drawn at and the caliper set at the drawn geometry.
// Usage: node --conditions=react-server --import tsx scripts/make-demo-films.ts [folder]   (default .data/demo-films)
import { mkdirSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import sharp from "sharp";
import { SCENARIO, seedOf } from "../db/demo/scenario";
import { DEMO_SPACING_MM, demoUid, drawChestFilm, gapForCollins, writeDicomFilm } from "../db/demo/synthetic-films";

async function main() {
  const dir = process.argv[2] ?? ".data/demo-films";
  mkdirSync(dir, { recursive: true });
  const manifest: unknown[] = [];
  const started = Date.now();
  for (const s of SCENARIO) {
    for (const [i, f] of s.films.entries()) {
      const film = await drawChestFilm({ gap: gapForCollins(f.collins), side: s.side, seed: seedOf(s.hn, i) });
      const name = `${s.hn}-${i + 1}`;
      const dicom = writeDicomFilm(film, {
        sopInstanceUid: demoUid(`${s.hn}:${i}:sop`), studyInstanceUid: demoUid(`${s.hn}:${i}:study`), seriesInstanceUid: demoUid(`${s.hn}:${i}:series`),
        date: "20261201", time: `${f.time.replace(":", "")}00`, patientName: `${s.family}^${s.given}`, patientId: s.hn, viewPosition: f.projection ?? "PA", institution: "Larkmoor General Hospital",
      });
      writeFileSync(join(dir, `${name}.dcm`), dicom);
      const grey = new Uint8Array(film.values.length);
      for (let k = 0; k < grey.length; k += 1) grey[k] = (film.values[k] ?? 0) >> 4;
      await sharp(grey, { raw: { width: film.width, height: film.height, channels: 1 } }).png().toFile(join(dir, `${name}.png`));
      manifest.push({ file: `${name}.dcm`, side: s.side, targetCollinsPercent: f.collins, drawn: film.drawn, spacingMm: DEMO_SPACING_MM, calipers: film.calipers });
    }
  }
  writeFileSync(join(dir, "manifest.json"), JSON.stringify(manifest, null, 2));
  console.log(`[rimwatch] ${manifest.length} demo films in ${dir} (${((Date.now() - started) / 1000).toFixed(1)} s)`);
}

main().catch((err: unknown) => {
  console.error(err);
  process.exit(1);
});
