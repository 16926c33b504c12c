import { mkdirSync, readdirSync, writeFileSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import type { BenchReport } from "./harness";

const here = path.dirname(fileURLToPath(import.meta.url));
const wanted = process.argv.slice(2);
const files = readdirSync(here)
  .filter((f) => f.endsWith(".bench.ts"))
  .filter((f) => wanted.length === 0 || wanted.some((w) => f.startsWith(w)))
  .sort();

const reports: BenchReport[] = [];
for (const file of files) {
  const mod = (await import(path.join(here, file))) as { run: () => Promise<BenchReport> };
  console.log(`\n## ${file}`);
  const report = await mod.run();
  reports.push(report);
  for (const r of report.rows) {
    const ratio = r.ratio === undefined ? "" : `  ratio ${r.ratio.toFixed(3)}`;
    const base = r.baseline === undefined ? "" : `  (baseline ${fmt(r.baseline)} ${r.unit})`;
    const target = r.target ? `  target ${r.target}: ${r.met ? "met" : "NOT met"}` : "";
    console.log(`  ${r.metric}: ${fmt(r.value)} ${r.unit}${base}${ratio}${target}${r.note ? `  — ${r.note}` : ""}`);
  }
}

function fmt(n: number) {
  return Math.abs(n) >= 1000 ? Math.round(n).toLocaleString("en") : n.toPrecision(4);
}

const out = path.resolve(here, "../.data/bench");
mkdirSync(out, { recursive: true });
writeFileSync(path.join(out, "results.json"), JSON.stringify({ at: new Date().toISOString(), reports }, null, 2));
console.log(`\nwrote ${path.join(out, "results.json")}`);
