// Sums every runner's results into the one closing line CI reads: "N passed, N failed[, N skipped]".
// A runner that crashed before writing its report counts as one failure, so a broken runner never reads as green.
import { existsSync, readFileSync } from "node:fs";
import path from "node:path";

const dir = process.argv[2] ?? ".data/test-results";
const read = (name) => (existsSync(path.join(dir, name)) ? readFileSync(path.join(dir, name), "utf8") : null);
const exitOf = (name) => Number((read(`${name}.exit`) ?? "1").trim());

let passed = 0, failed = 0, skipped = 0;
const lines = [];

// Type-check: one check, passing or failing as a whole.
if (exitOf("tsc") === 0) passed += 1; else failed += 1;
lines.push(`type-check: ${exitOf("tsc") === 0 ? "clean" : "errors"}`);

for (const name of ["vitest", "vitest-timing"]) {
  const report = read(`${name}.json`);
  if (!report) {
    failed += 1;
    lines.push(`${name}: no report (runner crashed)`);
    continue;
  }
  const r = JSON.parse(report);
  const p = r.numPassedTests ?? 0, f = r.numFailedTests ?? 0, s = (r.numPendingTests ?? 0) + (r.numTodoTests ?? 0);
  // Files that failed to load have no tests counted; count each as a failure.
  const brokenFiles = (r.testResults ?? []).filter((t) => t.status === "failed" && (t.assertionResults ?? []).length === 0).length;
  passed += p; failed += f + brokenFiles; skipped += s;
  lines.push(`${name}: ${p} passed, ${f + brokenFiles} failed, ${s} skipped`);
  if (exitOf(name) !== 0 && f + brokenFiles === 0) { failed += 1; lines.push(`${name}: non-zero exit`); }
}

const pw = read("playwright.json");
if (pw) {
  const s = JSON.parse(pw).stats ?? {};
  // Flaky: failed once, passed on its retry. Counted as passed, and named in the runner's line.
  const flaky = s.flaky ?? 0;
  const p = (s.expected ?? 0) + flaky, f = s.unexpected ?? 0, k = s.skipped ?? 0;
  const errors = (JSON.parse(pw).errors ?? []).length;
  passed += p; failed += f + errors; skipped += k;
  lines.push(`playwright: ${p} passed (${flaky} only on retry), ${f + errors} failed, ${k} skipped`);
  if (exitOf("playwright") !== 0 && f + errors === 0) { failed += 1; lines.push("playwright: non-zero exit"); }
} else { failed += 1; lines.push("playwright: no report (runner crashed)"); }

console.log("");
for (const l of lines) console.log(`  ${l}`);
console.log(`${passed} passed, ${failed} failed${skipped ? `, ${skipped} skipped` : ""}`);
process.exit(failed > 0 ? 1 : 0);
