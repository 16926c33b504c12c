/**
 * Quantile of sorted samples by linear interpolation between order statistics, position
 * (n - 1)·p: Hyndman and Fan's type 7, the default of R and numpy, and what the reference
 * package (simple-statistics' quantileSorted) computes; the tests compare the two.
 */
export function quantileOfSorted(sorted: readonly number[], p: number): number {
  const n = sorted.length;
  if (n === 0) return Number.NaN;
  if (p <= 0) return sorted[0];
  if (p >= 1) return sorted[n - 1];
  const idx = (n - 1) * p;
  const lower = Math.floor(idx);
  if (idx === lower) return sorted[idx];
  return sorted[lower] + (idx - lower) * (sorted[lower + 1] - sorted[lower]);
}

export interface LagSummary {
  count: number;
  p50: number | null;
  p95: number | null;
  max: number | null;
}

export function summarizeLags(lags: readonly number[]): LagSummary {
  if (lags.length === 0) return { count: 0, p50: null, p95: null, max: null };
  const sorted = [...lags].sort((a, b) => a - b);
  return { count: sorted.length, p50: quantileOfSorted(sorted, 0.5), p95: quantileOfSorted(sorted, 0.95), max: sorted[sorted.length - 1] };
}
