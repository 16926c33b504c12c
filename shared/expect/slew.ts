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
 *
 * Numbers travel between the steps in fields (`feedIn`, `play`, the track's `pushIn`) rather than
 * arguments: a double passed to a call the compiler does not inline is boxed, one allocation per
 * call, and this runs once per pointer per sample (an hour at 60 Hz on 40 pointers allocated
 * about 600 MB that way, most of the engine's time going to the garbage collector).
 */
export class SlewFollower {
  // State, read and written back by the engine's fused pointer loop (pointer-loop.ts) too.
  time = 0;
  position = 0;
  target = 0;
  /** Degrees per millisecond; Infinity when the needle jumps. */
  readonly rate: number;
  /** Inputs of feedIn(). */
  inT = 0;
  inAngle = 0;
  inRamp = false;
  /** Inputs of play(): the stretch's end and the target's line. */
  private playEnd = 0;
  private playFrom = 0;
  private playTo = 0;

  constructor(
    readonly out: LinearTrackBuilder,
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

  /** feed() with its arguments in inT, inAngle and inRamp. */
  feedIn(): void {
    const t = this.inT;
    const angle = this.inAngle;
    if (t < this.time) return; // frames never go back; a guard against a caller's mistake
    if (this.inRamp && t > this.time) {
      this.playEnd = t;
      this.playFrom = this.target;
      this.playTo = angle;
      this.play();
    } else {
      this.playEnd = t;
      this.playFrom = this.target;
      this.playTo = this.target;
      this.play();
      this.target = angle;
      if (this.rate === Infinity && this.position !== angle) {
        this.position = angle;
        this.out.inT = t;
        this.out.inA = angle;
        this.out.pushIn();
      }
    }
    this.target = angle;
  }

  get at(): { t: number; position: number; target: number } {
    return { t: this.time, position: this.position, target: this.target };
  }

  /** The target becomes `angle` at `t`: held since the last sample, then a step (or a ramp). */
  feed(t: number, angle: number, ramp: boolean): void {
    this.inT = t;
    this.inAngle = angle;
    this.inRamp = ramp;
    this.feedIn();
  }

  /** Plays to `t` with the target held. */
  finish(t: number): void {
    if (t > this.time) {
      this.playEnd = t;
      this.playFrom = this.target;
      this.playTo = this.target;
      this.play();
    }
    this.out.finish();
  }

  /** Plays the stretch from this.time to playEnd, the target moving linearly from playFrom to playTo. */
  private play(): void {
    const end = this.playEnd;
    const from = this.playFrom;
    const to = this.playTo;
    const out = this.out;
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
          out.inT = end;
          out.inA = p;
          out.pushIn();
        } else {
          // The target outruns the needle: it moves at its limit, falling behind.
          p += Math.sign(slope) * rate * (end - t);
          out.inT = end;
          out.inA = p;
          out.pushIn();
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
          out.inT = t;
          out.inA = p;
          out.pushIn();
          continue;
        }
      }
      p += direction * rate * (end - t);
      out.inT = end;
      out.inA = p;
      out.pushIn();
      t = end;
    }
    this.time = end;
    this.position = p;
  }
}
