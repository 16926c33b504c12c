import type { AngleTrack } from "../expect/types";
import { MismatchSweep, type Piece } from "./sweep";
import type { LinkGap, Mismatch } from "./types";

/** Signed difference folded into (-180, 180]: the shortest arc, for full-circle pointers. */
function fold(d: number): number {
  const r = ((((d + 180) % 360) + 360) % 360) - 180;
  return r === -180 ? 180 : r;
}

/**
 * Judges a pointer: expected angle piecewise linear (after slew limiting), seen angle held
 * from each report. Within a piece the difference is linear in time, so the instants where it
 * crosses the tolerance are solved exactly rather than sampled; full-circle pointers compare on
 * the shortest arc, crossings found on every turn the difference passes through.
 */
export class AngleTrackJudge {
  private readonly sweep: MismatchSweep;
  // Two flat number arrays rather than an object per report: a run holds millions of reports.
  private readonly seenT: number[] = [];
  private readonly seenAngle: number[] = [];
  private readonly gaps: LinkGap[] = [];
  private cursor: number;
  private expIndex = -1;
  private seenIndex = -1;

  constructor(
    elementId: string,
    private readonly track: AngleTrack,
    private readonly toleranceDeg: number,
    lagBudgetMs: number,
    startMs: number,
  ) {
    this.sweep = new MismatchSweep(elementId, "angle", lagBudgetMs, false, (v) => `${round(v as number)}°`);
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

  /** The expected (travel) angle at t, approaching from the right of a jump (or from the left with `left`). */
  private expectedAt(i: number, t: number): number {
    const { t: times, angle } = this.track;
    if (i + 1 < times.length && times[i + 1] > times[i]) {
      return angle[i] + ((t - times[i]) / (times[i + 1] - times[i])) * (angle[i + 1] - angle[i]);
    }
    return angle[i];
  }

  private error(d: number) {
    return Math.abs(this.track.wrap ? fold(d) : d);
  }

  advance(t: number) {
    const times = this.track.t;
    while (this.cursor < t) {
      const a = this.cursor;
      while (this.expIndex + 1 < times.length && times[this.expIndex + 1] <= a) this.expIndex++;
      while (this.seenIndex + 1 < this.seenT.length && this.seenT[this.seenIndex + 1] <= a) this.seenIndex++;
      let b = t;
      const nextExp = times[this.expIndex + 1];
      const nextSeen = this.seenIndex + 1 < this.seenT.length ? this.seenT[this.seenIndex + 1] : undefined;
      if (nextExp !== undefined && nextExp < b) b = nextExp;
      if (nextSeen !== undefined && nextSeen < b) b = nextSeen;
      for (const g of this.gaps) {
        if (g.fromMs > a && g.fromMs < b) b = g.fromMs;
        if (g.toMs > a && g.toMs < b) b = g.toMs;
      }
      const expChanged = this.expIndex >= 0 && times[this.expIndex] === a;
      const hasSeen = this.seenIndex >= 0;
      const seenChanged = hasSeen && this.seenT[this.seenIndex] === a;
      const cause = expChanged && seenChanged ? "both" : expChanged ? "expected" : seenChanged ? "seen" : "none";
      if (this.expIndex < 0) {
        this.feedPart(a, b, false, 0, a, undefined, undefined, cause);
      } else if (!hasSeen || (this.gaps.length > 0 && this.gaps.some((g) => a >= g.fromMs && a < g.toMs))) {
        this.feedPart(a, b, false, 0, a, undefined, undefined, cause, true);
      } else {
        this.judgeLinearPiece(a, b, this.seenAngle[this.seenIndex], cause);
      }
      this.cursor = b;
    }
  }

  /** One reused piece: a run judges millions of pieces, so none is allocated per piece. */
  private readonly piece: Piece = { from: 0, to: 0, noData: false, bad: false, error: 0, errorAt: 0, expected: undefined, seen: undefined, cause: "none" };

  private feedPart(from: number, to: number, bad: boolean, error: number, errorAt: number, expected: unknown, seen: unknown, cause: Piece["cause"], noData = false) {
    const p = this.piece;
    p.from = from;
    p.to = to;
    p.noData = noData;
    p.bad = bad;
    p.error = error;
    p.errorAt = errorAt;
    p.expected = expected;
    p.seen = seen;
    p.cause = cause;
    this.sweep.feed(p);
  }

  /**
   * Splits [a, b) where |difference| crosses the tolerance and feeds each part. Every instant
   * and difference is computed from the expected track's own points, never from a, b, so the
   * result does not depend on where live batches cut the piece.
   */
  private judgeLinearPiece(a: number, b: number, seenAngle: number, cause: Piece["cause"]) {
    const i = this.expIndex;
    const { t: times, angle } = this.track;
    const tol = this.toleranceDeg;
    const da = this.expectedAt(i, a) - seenAngle;
    const moving = i + 1 < times.length && times[i + 1] > times[i] && angle[i + 1] !== angle[i];
    if (!moving) {
      const e = this.error(da);
      const bad = e > tol;
      this.feedPart(a, b, bad, bad ? e : 0, a, bad ? da + seenAngle : undefined, seenAngle, cause);
      return;
    }
    const db = this.expectedAt(i, b) - seenAngle;
    // Fast path: the difference stays inside the tolerance band at both ends and, being linear,
    // in between (a full-circle pointer additionally must not wrap round within the piece).
    if (Math.abs(da) <= tol && Math.abs(db) <= tol) {
      this.feedPart(a, b, false, 0, a, undefined, undefined, cause);
      return;
    }
    const t0 = times[i];
    const rate = (angle[i + 1] - angle[i]) / (times[i + 1] - t0);
    const lo = Math.min(da, db);
    const hi = Math.max(da, db);
    const cuts: number[] = [];
    const addCut = (level: number) => {
      if (level > lo && level < hi) {
        const c = t0 + (level + seenAngle - angle[i]) / rate;
        if (c > a && c < b) cuts.push(c);
      }
    };
    if (this.track.wrap) {
      // Crossings of +tol, -tol and the far side (180) on every turn the difference spans.
      for (let k = Math.floor((lo - 180) / 360); k <= Math.ceil((hi + 180) / 360); k++) {
        addCut(tol + 360 * k);
        addCut(-tol + 360 * k);
        addCut(180 + 360 * k);
      }
    } else {
      addCut(tol);
      addCut(-tol);
    }
    cuts.sort((x, y) => x - y);
    let from = a;
    for (let k = 0; k <= cuts.length; k++) {
      const to = k < cuts.length ? cuts[k] : b;
      const bad = this.error(this.expectedAt(i, (from + to) / 2) - seenAngle) > tol;
      const partCause = k === 0 ? cause : "none";
      if (!bad) {
        this.feedPart(from, to, false, 0, from, undefined, undefined, partCause);
      } else {
        // The worst error in a part is at one of its ends (cuts include the 180-degree far side).
        const ef = this.error(this.expectedAt(i, from) - seenAngle);
        const et = this.error(this.expectedAt(i, to) - seenAngle);
        const worstAtTo = et > ef + 1e-9;
        const worstAt = worstAtTo ? to : from;
        const expectedWorst = this.expectedAt(i, worstAt);
        this.feedPart(from, to, true, worstAtTo ? et : ef, worstAt, this.track.wrap ? ((expectedWorst % 360) + 360) % 360 : expectedWorst, seenAngle, partCause);
      }
      from = to;
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
