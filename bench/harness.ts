/**
 * Benchmarks measure speed and memory as ratios against a baseline measured in the
 * same run on the same machine, never as absolute timings in unit tests.
 *
 * Each `bench/<topic>.bench.ts` exports `run(): Promise<BenchReport>`; `npm run bench`
 * runs them all (or those named: `npm run bench -- link expected`), prints a table and
 * writes `.data/bench/results.json`.
 */
export interface BenchRow {
  /** What was measured, in words: "decode value updates", "p99 lateness at 1x". */
  metric: string;
  value: number;
  unit: string;
  /** The same work done the plain way in this run, when the figure is a ratio's numerator. */
  baseline?: number;
  /** value / baseline (or as the bench defines it, said in `note`). */
  ratio?: number;
  /** The target in words, e.g. ">= 0.4 of bare parse" and whether it was met. */
  target?: string;
  met?: boolean;
  note?: string;
}

export interface BenchReport {
  topic: string;
  rows: BenchRow[];
}

/** Runs `work` repeatedly for at least `minMs` and returns operations per second. */
export function opsPerSecond(work: () => void, opsPerCall: number, minMs = 500): number {
  for (let i = 0; i < 3; i++) work(); // warm up the JIT
  let calls = 0;
  const start = performance.now();
  let elapsed = 0;
  while (elapsed < minMs) {
    work();
    calls++;
    elapsed = performance.now() - start;
  }
  return (calls * opsPerCall) / (elapsed / 1000);
}

/** Peak resident set size of this process so far, in MB (Linux: from the kernel's high-water mark). */
export function peakRssMb(): number {
  return process.resourceUsage().maxRSS / 1024;
}
