// Reads the vitest and Playwright JSON reports and prints one line per suite, then "N passed, N failed".
import { readFileSync, existsSync } from "node:fs";

const [vitestPath, playwrightPath, staticPath] = process.argv.slice(2);
let passed = 0, failed = 0, skipped = 0;
const lines = [];

if (vitestPath && existsSync(vitestPath)) {
  const v = JSON.parse(readFileSync(vitestPath, "utf8"));
  const bySuite = { unit: [0, 0, 0], integration: [0, 0, 0] };
  for (const file of v.testResults ?? []) {
    const suite = file.name.includes("/tests/integration/") ? "integration" : "unit";
    for (const t of file.assertionResults ?? []) {
      if (t.status === "passed") bySuite[suite][0]++;
      else if (t.status === "failed") bySuite[suite][1]++;
      else bySuite[suite][2]++;
    }
    if ((file.assertionResults ?? []).length === 0 && file.status === "failed") bySuite[suite][1]++; // a file that failed to load
  }
  for (const [suite, [p, f, s]] of Object.entries(bySuite)) {
    lines.push(`${suite}: ${p} passed, ${f} failed, ${s} skipped`);
    passed += p; failed += f; skipped += s;
  }
} else {
  lines.push("unit and integration: no report (vitest did not run)");
  failed++;
}

if (playwrightPath && existsSync(playwrightPath)) {
  const p = JSON.parse(readFileSync(playwrightPath, "utf8"));
  const s = p.stats ?? {};
  const pp = (s.expected ?? 0) + (s.flaky ?? 0), ff = s.unexpected ?? 0, ss = s.skipped ?? 0;
  lines.push(`browser: ${pp} passed, ${ff} failed, ${ss} skipped`);
  passed += pp; failed += ff; skipped += ss;
  if ((p.errors ?? []).length > 0) { failed += p.errors.length; lines.push(`browser: ${p.errors.length} errors outside tests`); }
} else {
  lines.push("browser: no report (Playwright did not run)");
  failed++;
}

if (staticPath && existsSync(staticPath)) {
  const st = JSON.parse(readFileSync(staticPath, "utf8"));
  lines.push(`static checks (tsc, eslint): ${st.passed} passed, ${st.failed} failed`);
  passed += st.passed; failed += st.failed;
}

console.log("");
for (const l of lines) console.log(l);
console.log(`${passed} passed, ${failed} failed${skipped ? `, ${skipped} skipped` : ""}`);
process.exit(failed > 0 || passed === 0 ? 1 : 0);
