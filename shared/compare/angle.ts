import type { AngleTrack } from "../expect/types";
import { MismatchSweep } from "./sweep";
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
  private readonly seen: { t: number; angle: number }[] = [];
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
    this.sweep = new MismatchSweep(elementId, "angle", lagBudgetMs, false);
    this.cursor = startMs;
  }

  addSeen(t: number, angle: number) {
    const last = this.seen[this.seen.length - 1];
    if (last && t < last.t) throw new RangeError(`seen reports must come in time order (${t} after ${last.t})`);
    if (t < this.cursor) throw new RangeError(`a report at ${t} ms is older than what was already judged (${this.cursor} ms)`);
    if (last && last.t === t) last.angle = angle;
    else this.seen.push({ t, angle });
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
      while (this.seenIndex + 1 < this.seen.length && this.seen[this.seenIndex + 1].t <= a) this.seenIndex++;
      let b = t;
      const nextExp = times[this.expIndex + 1];
      const nextSeen = this.seen[this.seenIndex + 1]?.t;
      if (nextExp !== undefined && nextExp < b) b = nextExp;
      if (nextSeen !== undefined && nextSeen < b) b = nextSeen;
      for (const g of this.gaps) {
        if (g.fromMs > a && g.fromMs < b) b = g.fromMs;
        if (g.toMs > a && g.toMs < b) b = g.toMs;
      }
      const expChanged = this.expIndex >= 0 && times[this.expIndex] === a;
      const seen = this.seen[this.seenIndex];
      const seenChanged = seen !== undefined && seen.t === a;
      const cause = expChanged && seenChanged ? "both" : expChanged ? "expected" : seenChanged ? "seen" : "none";
      if (this.expIndex < 0) {
        this.sweep.feed({ from: a, to: b, noData: false, bad: false, error: 0, errorAt: a, expected: "", seen: "", cause });
      } else if (!seen || this.gaps.some((g) => a >= g.fromMs && a < g.toMs)) {
        this.sweep.feed({ from: a, to: b, noData: true, bad: false, error: 0, errorAt: a, expected: "", seen: "no data", cause });
      } else {
        this.judgeLinearPiece(a, b, seen.angle, cause);
      }
      this.cursor = b;
    }
  }

  /**
   * Splits [a, b) where |difference| crosses the tolerance and feeds each part. Every instant
   * and difference is computed from the expected track's own points, never from a, b, so the
   * result does not depend on where live batches cut the piece.
   */
  private judgeLinearPiece(a: number, b: number, seenAngle: number, cause: "expected" | "seen" | "both" | "none") {
    const i = this.expIndex;
    const { t: times, angle } = this.track;
    const moving = i + 1 < times.length && times[i + 1] > times[i] && angle[i + 1] !== angle[i];
    const diffAt = (t: number) => this.expectedAt(i, t) - seenAngle;
    const tol = this.toleranceDeg;
    const cuts: number[] = [];
    if (moving) {
      const t0 = times[i];
      const rate = (angle[i + 1] - angle[i]) / (times[i + 1] - t0);
      const da = diffAt(a);
      const db = diffAt(b);
      const lo = Math.min(da, db);
      const hi = Math.max(da, db);
      const levels: number[] = [];
      if (this.track.wrap) {
        // Crossings of +tol, -tol and the far side (180) on every turn the difference spans.
        for (let k = Math.floor((lo - 180) / 360); k <= Math.ceil((hi + 180) / 360); k++) levels.push(tol + 360 * k, -tol + 360 * k, 180 + 360 * k);
      } else levels.push(tol, -tol);
      for (const level of levels) {
        if (level > lo && level < hi) cuts.push(t0 + (level + seenAngle - angle[i]) / rate);
      }
    }
    cuts.sort((x, y) => x - y);
    const bounds = [a, ...cuts.filter((c) => c > a && c < b), b];
    for (let k = 0; k + 1 < bounds.length; k++) {
      const from = bounds[k];
      const to = bounds[k + 1];
      const bad = this.error(diffAt((from + to) / 2)) > tol;
      // The worst error in a part is at one of its ends (cuts include the 180-degree far side).
      const ef = this.error(diffAt(from));
      const et = this.error(diffAt(to));
      const worstAtTo = et > ef + 1e-9;
      const worstAt = worstAtTo ? to : from;
      const expectedWorst = this.expectedAt(i, worstAt);
      this.sweep.feed({
        from,
        to,
        noData: false,
        bad,
        error: bad ? (worstAtTo ? et : ef) : 0,
        errorAt: worstAt,
        expected: `${round(this.track.wrap ? ((expectedWorst % 360) + 360) % 360 : expectedWorst)}°`,
        seen: `${round(seenAngle)}°`,
        cause: k === 0 ? cause : "none",
      });
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
