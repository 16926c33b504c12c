import { execFileSync } from "node:child_process";
import { mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import type { BenchReport } from "./harness";

const here = path.dirname(fileURLToPath(import.meta.url));
const wanted = process.argv.slice(2);
const files = readdirSync(here)
  .filter((f) => f.endsWith(".bench.ts"))
  .filter((f) => wanted.length === 0 || wanted.some((w) => f.startsWith(w)))
  .sort();

/*
 * Each bench file runs in a process of its own: a benchmark measured after another one inherits its
 * heap (the engine's hour of frames, the judges' reports), and the garbage collector's pauses then
 * land in the next one's figures (replay lateness went from 4 to 18 ms that way).
 */
const child = process.env.BENCH_REPORT_OUT;
const reports: BenchReport[] = [];
for (const file of files) {
  if (!child) console.log(`\n## ${file}`);
  let report: BenchReport;
  if (child || files.length === 1) {
    const mod = (await import(path.join(here, file))) as { run: () => Promise<BenchReport> };
    report = await mod.run();
  } else {
    const dir = mkdtempSync(path.join(tmpdir(), "panelproof-bench-"));
    const outFile = path.join(dir, "report.json");
    try {
      execFileSync("npx", ["tsx", fileURLToPath(import.meta.url), file], { stdio: "inherit", env: { ...process.env, BENCH_REPORT_OUT: outFile } });
      report = JSON.parse(readFileSync(outFile, "utf8")) as BenchReport;
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  }
  reports.push(report);
  if (child) {
    writeFileSync(child, JSON.stringify(report));
    continue;
  }
  for (const r of report.rows) {
    const ratio = r.ratio === undefined ? "" : `  ratio ${r.ratio.toFixed(3)}`;
    const base = r.baseline === undefined ? "" : `  (baseline ${fmt(r.baseline)} ${r.unit})`;
    const target = r.target ? `  target ${r.target}: ${r.met ? "met" : "NOT met"}` : "";
    console.log(`  ${r.metric}: ${fmt(r.value)} ${r.unit}${base}${ratio}${target}${r.note ? `  — ${r.note}` : ""}`);
  }
}
if (child) process.exit(0);

function fmt(n: number) {
  return Math.abs(n) >= 1000 ? Math.round(n).toLocaleString("en") : n.toPrecision(4);
}

const out = path.resolve(here, "../.data/bench");
mkdirSync(out, { recursive: true });
writeFileSync(path.join(out, "results.json"), JSON.stringify({ at: new Date().toISOString(), reports }, null, 2));
console.log(`\nwrote ${path.join(out, "results.json")}`);
