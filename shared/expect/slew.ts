import type { LinearTrackBuilder } from "./tracks";

/**
 * A needle chasing its target under a slew limit (degrees per second), as a plain loop over
 * samples. The target between two samples is either held (sample and hold, then a step) or a
 * straight line from the last sample to the new one (`ramp`), which is how a continuous value
 * sampled at 60 Hz really moved. The needle moves straight at the slew rate toward the target
 * and, once it catches it, follows it exactly while the target moves no faster than the limit.
 * So the needle's path is exactly piecewise linear, with corners only where it catches the
 * target, where a sample changes the target's slope, or where the target outruns it.
 *
 * State is kept at the last sample's instant; the next sample (or `finish`) plays the stretch.
 */
export class SlewFollower {
  private time = 0;
  private position = 0;
  private target = 0;
  /** Degrees per millisecond; Infinity when the needle jumps. */
  private readonly rate: number;

  constructor(
    private readonly out: LinearTrackBuilder,
    maxSlewDegPerSec: number | undefined,
  ) {
    this.rate = maxSlewDegPerSec === undefined ? Infinity : maxSlewDegPerSec / 1000;
  }

  start(t: number, angle: number): void {
    this.time = t;
    this.position = angle;
    this.target = angle;
    this.out.push(t, angle);
  }

  get at(): { t: number; position: number; target: number } {
    return { t: this.time, position: this.position, target: this.target };
  }

  /** The target becomes `angle` at `t`: held since the last sample, then a step (or a ramp). */
  feed(t: number, angle: number, ramp: boolean): void {
    if (t < this.time) return; // frames never go back; a guard against a caller's mistake
    if (ramp && t > this.time) {
      this.play(t, this.target, angle);
    } else {
      this.play(t, this.target, this.target);
      this.target = angle;
      if (this.rate === Infinity && this.position !== angle) {
        this.position = angle;
        this.out.push(t, angle);
      }
    }
    this.target = angle;
  }

  /** Plays to `t` with the target held. */
  finish(t: number): void {
    if (t > this.time) this.play(t, this.target, this.target);
    this.out.finish();
  }

  /** Plays the stretch from this.time to `end`, the target moving linearly from `from` to `to`. */
  private play(end: number, from: number, to: number): void {
    const start = this.time;
    const duration = end - start;
    if (duration <= 0) return;
    const slope = (to - from) / duration;
    const rate = this.rate;
    let t = start;
    let p = this.position;
    for (let guard = 0; guard < 4 && t < end; guard++) {
      const targetNow = from + slope * (t - start);
      const error = targetNow - p;
      if (error === 0 || rate === Infinity) {
        if (rate === Infinity || Math.abs(slope) <= rate) {
          p = to;
          this.out.push(end, p);
        } else {
          // The target outruns the needle: it moves at its limit, falling behind.
          p += Math.sign(slope) * rate * (end - t);
          this.out.push(end, p);
        }
        t = end;
        break;
      }
      const direction = error > 0 ? 1 : -1;
      const closing = rate - direction * slope;
      if (closing > 0) {
        const catchAfter = Math.abs(error) / closing;
        if (t + catchAfter <= t) {
          // A gap too small to advance the clock (rounding dust): the needle is on the target.
          p = targetNow;
          continue;
        }
        if (t + catchAfter < end) {
          t += catchAfter;
          // Where the needle meets the target: computed from the target's line so it is exact.
          p = from + slope * (t - start);
          this.out.push(t, p);
          continue;
        }
      }
      p += direction * rate * (end - t);
      this.out.push(end, p);
      t = end;
    }
    this.time = end;
    this.position = p;
  }
}
