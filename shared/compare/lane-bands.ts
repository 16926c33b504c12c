/**
 * Bands for a timeline lane (the report's one lane per element): intervals of recording time
 * merged wherever they are closer than one drawn column, so a lane with 10,000 mismatches draws
 * at most a few hundred rectangles and stays quick to draw and to scrub over. Each band counts
 * the intervals it holds, so nothing kept is lost from the picture's words.
 */
export interface TimeInterval {
  startMs: number;
  endMs: number;
}

export interface LaneBand {
  fromMs: number;
  toMs: number;
  /** How many intervals this band holds. */
  count: number;
}

/**
 * Merges `intervals` (in any order) within [fromMs, toMs] drawn `columns` wide: two intervals
 * whose gap is less than one column's time join one band. Bands are at least one column wide.
 */
export function laneBands(intervals: readonly TimeInterval[], fromMs: number, toMs: number, columns: number): LaneBand[] {
  const span = Math.max(1, toMs - fromMs);
  const column = span / Math.max(1, Math.floor(columns));
  const sorted = intervals.filter((i) => i.endMs >= fromMs && i.startMs <= toMs).sort((a, b) => a.startMs - b.startMs || a.endMs - b.endMs);
  const out: LaneBand[] = [];
  for (const i of sorted) {
    const start = Math.max(fromMs, i.startMs);
    const end = Math.min(toMs, Math.max(i.endMs, start + column));
    const last = out[out.length - 1];
    if (last && start - last.toMs < column) {
      last.toMs = Math.max(last.toMs, end);
      last.count++;
    } else out.push({ fromMs: start, toMs: end, count: 1 });
  }
  return out;
}

/** Covered share of [fromMs, toMs] by `intervals` (overlaps counted once), 0..1. */
export function coveredShare(intervals: readonly TimeInterval[], fromMs: number, toMs: number): number {
  const span = toMs - fromMs;
  if (span <= 0) return 0;
  const sorted = intervals
    .map((i) => ({ s: Math.max(fromMs, i.startMs), e: Math.min(toMs, i.endMs) }))
    .filter((i) => i.e > i.s)
    .sort((a, b) => a.s - b.s);
  let total = 0;
  let s = -Infinity;
  let e = -Infinity;
  for (const i of sorted) {
    if (i.s > e) {
      if (e > s) total += e - s;
      s = i.s;
      e = i.e;
    } else e = Math.max(e, i.e);
  }
  if (e > s) total += e - s;
  return total / span;
}
