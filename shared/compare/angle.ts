import type { AngleTrack } from "../expect/types";
import { MismatchSweep, type Piece } from "./sweep";
import type { LinkGap, Mismatch } from "./types";

/** Signed difference folded into (-180, 180]: the shortest arc, for full-circle pointers. */
function fold(d: number): number {
  const r = ((((d + 180) % 360) + 360) % 360) - 180;
  return r === -180 ? 180 : r;
}

/** Held values are looked at again at least this often (an absolute grid, so batching never matters). */
const RECHECK_MS = 25;

/**
 * Judges a pointer. A needle may trail its value by up to the lag budget, so at each instant
 * the needle's last reported angle is compared with everything the expected needle showed in
 * the window [t − lag budget, t]: it is right if it lies within the tolerance of that stretch
 * (on the shortest arc for full-circle pointers). A healthy panel that reports every few tens
 * of milliseconds therefore passes even while its needle swings fast, and a needle that sticks
 * or reports nothing while the value moves fails as soon as it falls out of the window.
 *
 * Instants looked at: every report, every expected point (and the moment it leaves the window),
 * and a fixed grid while a value is held; all from the data alone, so live batches and offline
 * judging meet the same instants.
 */
export class AngleTrackJudge {
  private readonly sweep: MismatchSweep;
  // Two flat number arrays rather than an object per report: a run holds millions of reports.
  private readonly seenT: number[] = [];
  private readonly seenAngle: number[] = [];
  private readonly gaps: LinkGap[] = [];
  private cursor: number;
  private seenIndex = -1;
  /** The instant the current piece started at, and what was decided there. */
  private readonly piece: Piece = { from: 0, to: 0, noData: false, bad: false, error: 0, errorAt: 0, expected: undefined, seen: undefined, cause: "none" };
  private nextPointIndex = 0;
  private nextLeavingIndex = 0;

  constructor(
    elementId: string,
    private readonly track: AngleTrack,
    private readonly toleranceDeg: number,
    private readonly lagBudgetMs: number,
    startMs: number,
  ) {
    // The lag budget is spent in the window already, so any stretch outside it counts.
    this.sweep = new MismatchSweep(elementId, "angle", 0, false, (v) => `${round(v as number)}°`);
    this.cursor = startMs;
  }

  addSeen(t: number, angle: number) {
    const n = this.seenT.length;
    const lastT = n > 0 ? this.seenT[n - 1] : -Infinity;
    if (t < lastT) throw new RangeError(`seen reports must come in time order (${t} after ${lastT})`);
    if (t < this.cursor) throw new RangeError(`a report at ${t} ms is older than what was already judged (${this.cursor} ms)`);
    if (t === lastT) this.seenAngle[n - 1] = angle;
    else {
      this.seenT.push(t);
      this.seenAngle.push(angle);
    }
  }

  addGap(gap: LinkGap) {
    if (gap.toMs > gap.fromMs) this.gaps.push(gap);
  }

  /** Index of the last expected point at or before t (-1 if none). */
  private pointAt(t: number): number {
    const times = this.track.t;
    let lo = 0;
    let hi = times.length - 1;
    let found = -1;
    while (lo <= hi) {
      const mid = (lo + hi) >> 1;
      if (times[mid] <= t) {
        found = mid;
        lo = mid + 1;
      } else hi = mid - 1;
    }
    return found;
  }

  private valueAt(i: number, t: number): number {
    const { t: times, angle } = this.track;
    if (i + 1 < times.length && times[i + 1] > times[i]) return angle[i] + ((t - times[i]) / (times[i + 1] - times[i])) * (angle[i + 1] - angle[i]);
    return angle[i];
  }

  /** Lowest and highest expected (travel) angle over [a, b]; null before the track starts. */
  private rangeOver(a: number, b: number): { lo: number; hi: number; at: number } | null {
    const times = this.track.t;
    let i = this.pointAt(a);
    let lo: number;
    let hi: number;
    if (i < 0) {
      if (times.length === 0 || times[0] > b) return null;
      i = 0;
      lo = hi = this.track.angle[0];
    } else {
      lo = hi = this.valueAt(i, a);
    }
    for (let k = i + 1; k < times.length && times[k] <= b; k++) {
      const v = this.track.angle[k];
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
    const end = this.valueAt(this.pointAt(b), b);
    if (end < lo) lo = end;
    if (end > hi) hi = end;
    return { lo, hi, at: end };
  }

  /** How far a needle at `seen` is from anything the expected needle showed over the window ending at t. */
  private distance(t: number, seen: number): { error: number; expected: number } | null {
    const r = this.rangeOver(t - this.lagBudgetMs, t);
    if (!r) return null;
    if (!this.track.wrap) {
      if (seen >= r.lo && seen <= r.hi) return { error: 0, expected: seen };
      return seen < r.lo ? { error: r.lo - seen, expected: r.lo } : { error: seen - r.hi, expected: r.hi };
    }
    if (r.hi - r.lo >= 360) return { error: 0, expected: seen };
    // Bring the needle's angle to the turn just above the window's low end.
    const shifted = r.lo + ((((seen - r.lo) % 360) + 360) % 360);
    if (shifted <= r.hi) return { error: 0, expected: seen };
    const toHi = Math.abs(fold(shifted - r.hi));
    const toLo = Math.abs(fold(shifted - r.lo));
    return toHi <= toLo ? { error: toHi, expected: ((r.hi % 360) + 360) % 360 } : { error: toLo, expected: ((r.lo % 360) + 360) % 360 };
  }

  /** In a gap, or holding a report from before a gap that has ended since: no data either way. */
  private noDataAt(t: number, seenT: number) {
    for (const g of this.gaps) {
      if (t >= g.fromMs && t < g.toMs) return true;
      if (seenT < g.toMs && g.toMs <= t) return true;
    }
    return false;
  }

  /** The next instant after `a` at which the verdict may change. */
  private nextInstant(a: number, limit: number): number {
    const times = this.track.t;
    while (this.nextPointIndex < times.length && times[this.nextPointIndex] <= a) this.nextPointIndex++;
    while (this.nextLeavingIndex < times.length && times[this.nextLeavingIndex] + this.lagBudgetMs <= a) this.nextLeavingIndex++;
    let b = limit;
    const grid = (Math.floor(a / RECHECK_MS) + 1) * RECHECK_MS;
    if (grid < b) b = grid;
    if (this.nextPointIndex < times.length && times[this.nextPointIndex] < b) b = times[this.nextPointIndex];
    if (this.nextLeavingIndex < times.length && times[this.nextLeavingIndex] + this.lagBudgetMs < b) b = times[this.nextLeavingIndex] + this.lagBudgetMs;
    const nextSeen = this.seenIndex + 1 < this.seenT.length ? this.seenT[this.seenIndex + 1] : Infinity;
    if (nextSeen < b) b = nextSeen;
    for (const g of this.gaps) {
      if (g.fromMs > a && g.fromMs < b) b = g.fromMs;
      if (g.toMs > a && g.toMs < b) b = g.toMs;
    }
    return b;
  }

  /** True when the last advance stopped between two instants: the verdict made before still holds. */
  private cutShort = false;

  advance(t: number) {
    while (this.cursor < t) {
      const a = this.cursor;
      while (this.seenIndex + 1 < this.seenT.length && this.seenT[this.seenIndex + 1] <= a) this.seenIndex++;
      const natural = this.nextInstant(a, Infinity);
      const b = Math.min(natural, t);
      const p = this.piece;
      if (this.cutShort && !(this.seenIndex >= 0 && this.seenT[this.seenIndex] === a)) {
        // Resume the piece a live batch cut: same verdict, so live equals offline.
        p.from = a;
        p.to = b;
        p.cause = "none";
        this.sweep.feed(p);
        this.cursor = b;
        this.cutShort = b < natural;
        continue;
      }
      p.from = a;
      p.to = b;
      const pi = this.pointAt(a);
      p.cause = this.seenIndex >= 0 && this.seenT[this.seenIndex] === a ? "seen" : pi >= 0 && this.track.t[pi] === a ? "expected" : "none";
      p.noData = false;
      p.bad = false;
      p.error = 0;
      p.errorAt = a;
      p.expected = undefined;
      p.seen = undefined;
      const started = this.track.t.length > 0 && this.track.t[0] <= a;
      if (started && (this.seenIndex < 0 || (this.gaps.length > 0 && this.noDataAt(a, this.seenT[this.seenIndex])))) p.noData = true;
      else if (started) {
        const seen = this.seenAngle[this.seenIndex];
        const d = this.distance(a, seen);
        if (d && d.error > this.toleranceDeg) {
          p.bad = true;
          p.error = d.error;
          p.expected = d.expected;
          p.seen = this.track.wrap ? ((seen % 360) + 360) % 360 : seen;
        }
      }
      this.sweep.feed(p);
      this.cursor = b;
      this.cutShort = b < natural;
    }
  }

  finish(endMs: number): Mismatch[] {
    this.advance(endMs);
    this.sweep.close(endMs, "none", false);
    return this.sweep.take();
  }

  take(): Mismatch[] {
    return this.sweep.take();
  }

  get noDataMs() {
    return this.sweep.noDataMs;
  }
}

const round = (n: number) => Math.round(n * 10) / 10;
