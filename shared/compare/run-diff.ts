import type { ElementStatus } from "./types";

/**
 * Comparing two runs of the same panel and recording (issue 6, history): which elements the
 * later run fixed, which still fail, which newly fail. Pure, so the route, the e-mail and tests
 * share one definition of "fixed".
 *
 * An element is *failing* when its verdict is `fail` or `no_data` (a link gap is never a pass,
 * docs/judging.md). Elements are matched by panel and element id; an element only one run knows
 * (the definition changed between the runs, each run keeps its own snapshot) is listed as
 * `added` or `removed`, never counted as fixed or new.
 */

export interface ElementOutcome {
  panelId: string;
  elementId: string;
  label: string;
  status: ElementStatus;
  mismatchCount: number;
}

export interface ElementChange {
  panelId: string;
  elementId: string;
  label: string;
  before: ElementStatus | null;
  after: ElementStatus | null;
  mismatchesBefore: number;
  mismatchesAfter: number;
}

export interface RunDiff {
  /** Failing in the earlier run, not failing in the later one. */
  fixed: ElementChange[];
  /** Failing in both. */
  stillFailing: ElementChange[];
  /** Not failing in the earlier run, failing in the later one. */
  newlyFailing: ElementChange[];
  /** Failing in neither, but the verdict changed (pass to untested, untested to pass...). */
  otherwiseChanged: ElementChange[];
  /** Same verdict, not failing. */
  unchanged: ElementChange[];
  /** In the later run's panel only. */
  added: ElementChange[];
  /** In the earlier run's panel only. */
  removed: ElementChange[];
}

export const isFailing = (status: ElementStatus | null | undefined): boolean => status === "fail" || status === "no_data";

const keyOf = (e: { panelId: string; elementId: string }) => `${e.panelId}\u0000${e.elementId}`;

/** Groups every element of two runs; the order within a group is the later run's (then the earlier's for `removed`). */
export function diffRuns(earlier: readonly ElementOutcome[], later: readonly ElementOutcome[]): RunDiff {
  const out: RunDiff = { fixed: [], stillFailing: [], newlyFailing: [], otherwiseChanged: [], unchanged: [], added: [], removed: [] };
  const before = new Map(earlier.map((e) => [keyOf(e), e]));
  const seen = new Set<string>();
  for (const a of later) {
    const key = keyOf(a);
    seen.add(key);
    const b = before.get(key);
    const change: ElementChange = {
      panelId: a.panelId,
      elementId: a.elementId,
      label: a.label,
      before: b?.status ?? null,
      after: a.status,
      mismatchesBefore: b?.mismatchCount ?? 0,
      mismatchesAfter: a.mismatchCount,
    };
    if (!b) out.added.push(change);
    else if (isFailing(b.status) && isFailing(a.status)) out.stillFailing.push(change);
    else if (isFailing(b.status)) out.fixed.push(change);
    else if (isFailing(a.status)) out.newlyFailing.push(change);
    else if (b.status !== a.status) out.otherwiseChanged.push(change);
    else out.unchanged.push(change);
  }
  for (const b of earlier) {
    if (seen.has(keyOf(b))) continue;
    out.removed.push({ panelId: b.panelId, elementId: b.elementId, label: b.label, before: b.status, after: null, mismatchesBefore: b.mismatchCount, mismatchesAfter: 0 });
  }
  return out;
}

/** "fixed 3, still failing 2, new 1" */
export function diffHeadline(diff: Pick<RunDiff, "fixed" | "stillFailing" | "newlyFailing">): string {
  return `fixed ${diff.fixed.length}, still failing ${diff.stillFailing.length}, new ${diff.newlyFailing.length}`;
}

/**
 * A run's pass rate: passed elements among the judged ones (pass, fail, no data). Untested
 * elements and placeholders prove nothing either way and are left out; null when nothing was judged.
 */
export function passRate(counts: Partial<Record<ElementStatus, number>>): number | null {
  const pass = counts.pass ?? 0;
  const judged = pass + (counts.fail ?? 0) + (counts.no_data ?? 0);
  return judged === 0 ? null : pass / judged;
}
