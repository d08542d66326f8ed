/**
 * Writes bench/results.md (to stdout) from what bench/run.sh collected: one row per benchmark with its
 * outcome, the lines in which it states its ratio to the floor, and the run's date and machine.
 * Usage: node --import tsx bench/report.ts bench/results/status.txt
 */
import { execFileSync } from "node:child_process";
import { existsSync, readFileSync } from "node:fs";
import { cpus, totalmem } from "node:os";
import { dirname, join } from "node:path";

const statusFile = process.argv[2] ?? "bench/results/status.txt";
const dir = dirname(statusFile);

function postgresVersion(): string {
  try {
    const url = process.env.DATABASE_URL;
    if (!url) return "unknown";
    return execFileSync("psql", [url, "-tAc", "show server_version"], { encoding: "utf8" }).trim().split(" ")[0] ?? "unknown";
  } catch {
    return "unknown";
  }
}

const cell = (s: string) => s.replace(/\|/g, "\\|").replace(/\s+/g, " ").trim();

const rows: string[] = [];
for (const line of readFileSync(statusFile, "utf8").split("\n").filter(Boolean)) {
  const [name = "", rc = "", seconds = ""] = line.split(" ");
  if (rc === "missing") {
    rows.push(`| ${name} | not run: bench/${name}.ts does not exist yet | | |`);
    continue;
  }
  const log = join(dir, `${name}.log`);
  const text = existsSync(log) ? readFileSync(log, "utf8") : "";
  // Each script states its comparison with the floor in lines that name the ratio.
  const ratioLines = text.split("\n").filter((l) => /ratio/i.test(l)).map(cell);
  const over = /OVER TARGET/.test(text);
  const outcome = rc !== "0" ? `failed (exit ${rc})` : over ? "over target" : "within target";
  rows.push(`| ${name} | ${outcome} | ${ratioLines.join("<br>") || "(no ratio printed)"} | ${seconds} s |`);
}

const cpu = cpus()[0]?.model ?? "unknown CPU";
const out = [
  "# Benchmark results",
  "",
  `Run on ${new Date().toISOString().slice(0, 16).replace("T", " ")} UTC by \`npm run bench\` (bench/run.sh), on ${cpus().length} cores (nproc) of ${cell(cpu)}, ${(totalmem() / 2 ** 30).toFixed(0)} GB memory, Node ${process.version}, PostgreSQL ${postgresVersion()}.`,
  "Each benchmark compares Rimwatch's own code with a floor measured in the same run on the same machine (see the top of each script); full output in bench/results/<name>.log (not committed).",
  "",
  "| benchmark | outcome | ratio to the floor (as the script prints it) | time |",
  "|---|---|---|---|",
  ...rows,
  "",
];
process.stdout.write(out.join("\n"));
