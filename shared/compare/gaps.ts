import type { LinkGap } from "./types";

/**
 * Link gaps as both track judges (discrete and angle) read them. Gaps are few (a link that
 * dropped now and then), so a walk over all of them is fine; these run for every piece judged.
 */

/** `b`, or the first gap edge strictly inside (a, b): where a piece starting at `a` must end. */
export function clipToGapEdges(gaps: readonly LinkGap[], a: number, b: number): number {
  for (let i = 0; i < gaps.length; i++) {
    const g = gaps[i];
    if (g.fromMs > a && g.fromMs < b) b = g.fromMs;
    if (g.toMs > a && g.toMs < b) b = g.toMs;
  }
  return b;
}

/** In a gap, or holding a report from before a gap that has ended since: no data either way. */
export function noDataAt(gaps: readonly LinkGap[], t: number, seenT: number): boolean {
  for (let i = 0; i < gaps.length; i++) {
    const g = gaps[i];
    if (t >= g.fromMs && t < g.toMs) return true;
    if (seenT < g.toMs && g.toMs <= t) return true;
  }
  return false;
}
