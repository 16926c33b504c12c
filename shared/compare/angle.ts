import type { AngleTrack } from "../expect/types";
import { forgetFront, seenMemory, shouldForget } from "./seen-memory";
import { clipToGapEdges, noDataAt } from "./gaps";
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
      if (n + 1 >= seenMemory.keep) this.advance(t);
    }
  }

  addGap(gap: LinkGap) {
    if (gap.toMs > gap.fromMs) this.gaps.push(gap);
  }

  /**
   * Index of the last expected point at or before t (-1 if none). Judging walks forward in time,
   * so each caller keeps a hint (`slot`) and usually moves it a step or two instead of searching.
   */
  private readonly hints = [0, 0, 0];
  private pointAt(t: number, slot = 0): number {
    const times = this.track.t;
    const n = times.length;
    let h = this.hints[slot];
    if (h < n && times[h] <= t) {
      // Walk forward a few points; beyond that a search is cheaper.
      for (let steps = 0; steps < 8; steps++) {
        if (h + 1 >= n || times[h + 1] > t) {
          this.hints[slot] = h;
          return h;
        }
        h++;
      }
    }
    let lo = 0;
    let hi = n - 1;
    let found = -1;
    while (lo <= hi) {
      const mid = (lo + hi) >> 1;
      if (times[mid] <= t) {
        found = mid;
        lo = mid + 1;
      } else hi = mid - 1;
    }
    if (found >= 0) this.hints[slot] = found;
    return found;
  }

  private valueAt(i: number, t: number): number {
    const { t: times, angle } = this.track;
    if (i + 1 < times.length && times[i + 1] > times[i]) return angle[i] + ((t - times[i]) / (times[i + 1] - times[i])) * (angle[i + 1] - angle[i]);
    return angle[i];
  }

  // Results of rangeOver and distance, kept in fields: they run for every instant judged
  // (millions in an hour-long run) and an object per call kept the collector busy.
  private rangeLo = 0;
  private rangeHi = 0;
  private distError = 0;
  private distExpected = 0;

  /** Lowest and highest expected (travel) angle over [a, b] into rangeLo/rangeHi; false before the track starts. */
  private rangeOver(a: number, b: number): boolean {
    const times = this.track.t;
    let i = this.pointAt(a, 1);
    let lo: number;
    let hi: number;
    if (i < 0) {
      if (times.length === 0 || times[0] > b) return false;
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
    const end = this.valueAt(this.pointAt(b, 2), b);
    if (end < lo) lo = end;
    if (end > hi) hi = end;
    this.rangeLo = lo;
    this.rangeHi = hi;
    return true;
  }

  /**
   * How far a needle at `seen` is from anything the expected needle showed over the window
   * ending at t, into distError/distExpected; false before the track starts.
   */
  private distance(t: number, seen: number): boolean {
    if (!this.rangeOver(t - this.lagBudgetMs, t)) return false;
    const lo = this.rangeLo;
    const hi = this.rangeHi;
    if (!this.track.wrap) {
      if (seen >= lo && seen <= hi) return this.distanceIs(0, seen);
      return seen < lo ? this.distanceIs(lo - seen, lo) : this.distanceIs(seen - hi, hi);
    }
    if (hi - lo >= 360) return this.distanceIs(0, seen);
    // Bring the needle's angle to the turn just above the window's low end.
    const shifted = lo + ((((seen - lo) % 360) + 360) % 360);
    if (shifted <= hi) return this.distanceIs(0, seen);
    const toHi = Math.abs(fold(shifted - hi));
    const toLo = Math.abs(fold(shifted - lo));
    return toHi <= toLo ? this.distanceIs(toHi, ((hi % 360) + 360) % 360) : this.distanceIs(toLo, ((lo % 360) + 360) % 360);
  }

  private distanceIs(error: number, expected: number): true {
    this.distError = error;
    this.distExpected = expected;
    return true;
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
    b = clipToGapEdges(this.gaps, a, b);
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
      if (started && (this.seenIndex < 0 || (this.gaps.length > 0 && noDataAt(this.gaps, a, this.seenT[this.seenIndex])))) p.noData = true;
      else if (started) {
        const seen = this.seenAngle[this.seenIndex];
        if (this.distance(a, seen) && this.distError > this.toleranceDeg) {
          p.bad = true;
          p.error = this.distError;
          p.expected = this.distExpected;
          p.seen = this.track.wrap ? ((seen % 360) + 360) % 360 : seen;
        }
      }
      this.sweep.feed(p);
      this.cursor = b;
      this.cutShort = b < natural;
    }
    // Reports behind the one held at the cursor are never read again.
    if (shouldForget(this.seenIndex, this.seenT.length)) {
      forgetFront(this.seenT, this.seenIndex);
      forgetFront(this.seenAngle, this.seenIndex);
      this.seenIndex = 0;
    }
  }

  finish(endMs: number): readonly Mismatch[] {
    this.advance(endMs);
    this.sweep.close(endMs, "none", false);
    return this.sweep.take();
  }

  take(): readonly Mismatch[] {
    return this.sweep.take();
  }

  /** An open interval at `t` already longer than the lag budget (see MismatchSweep.failingAt). */
  failingAt(t: number): boolean {
    return this.sweep.failingAt(t);
  }

  get noDataMs() {
    return this.sweep.noDataMs;
  }
}

const round = (n: number) => Math.round(n * 10) / 10;
