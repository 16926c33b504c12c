import type { Change } from "./types";

/**
 * Builds a piecewise constant track. Several changes at one instant keep only the last, and a
 * change back to the value already showing is dropped, so the track holds real changes only.
 */
export class DiscreteTrackBuilder<V> {
  readonly changes: Change<V>[] = [];
  private readonly keys: string[] = [];

  set(t: number, shows: V, key: string): void {
    const n = this.keys.length;
    if (n > 0 && this.keys[n - 1] === key) return;
    if (n > 0 && this.changes[n - 1].t === t) {
      this.changes.pop();
      this.keys.pop();
      if (n > 1 && this.keys[n - 2] === key) return;
    }
    this.changes.push({ t, shows });
    this.keys.push(key);
  }

  get lastKey(): string | undefined {
    return this.keys[this.keys.length - 1];
  }
}

/**
 * Builds a piecewise linear track with swinging-door compression: a point is dropped when the
 * line between its kept neighbours passes within `epsilon` of it (and of every point dropped
 * before it on that line). Both the raw and the kept curves are linear between points, so the
 * kept curve stays within `epsilon` of the raw one at every instant, not only at the samples.
 * With epsilon 0 only exactly collinear points are dropped.
 *
 * Points go in through fields (`inT`, `inA`, then `pushIn()`) on the engine's per-sample path, so
 * no double is boxed on the way (see SlewFollower). Kept points wait in typed arrays, which grow
 * outside the collected heap, and are copied once into the track's arrays of exactly their size
 * by finish(): growing plain arrays by push allocated about three times the final size.
 */
export class LinearTrackBuilder {
  /** The kept points, made by finish(). */
  t: number[] = [];
  angle: number[] = [];
  private times = new Float64Array(1024);
  private angles = new Float64Array(1024);
  private count = 0;
  /** Inputs of pushIn(). */
  inT = 0;
  inA = 0;
  // The swinging door's state, read and written back by the engine's fused pointer loop
  // (pointer-loop.ts) too.
  anchorT = 0;
  anchorA = 0;
  hasAnchor = false;
  pendingT = 0;
  pendingA = 0;
  hasPending = false;
  slopeMin = -Infinity;
  slopeMax = Infinity;

  constructor(readonly epsilon: number) {}

  /** Stores a kept point (the fused loop keeps its door state itself). */
  append(t: number, a: number): void {
    if (this.count === this.times.length) this.grow();
    this.times[this.count] = t;
    this.angles[this.count] = a;
    this.count++;
  }

  push(t: number, a: number): void {
    this.inT = t;
    this.inA = a;
    this.pushIn();
  }

  /** push() with its arguments in inT and inA. */
  pushIn(): void {
    const t = this.inT;
    const a = this.inA;
    if (!this.hasAnchor) {
      this.keep(t, a);
      return;
    }
    if (!this.hasPending) {
      if (t === this.anchorT) {
        // A jump at the anchor's instant: keep both ends.
        if (a !== this.anchorA) this.keep(t, a);
        return;
      }
      this.pendingT = t;
      this.pendingA = a;
      this.hasPending = true;
      return;
    }
    if (t === this.pendingT) {
      if (a === this.pendingA) return;
      // A jump: the pending point is a corner that must stay, then the jump's far end.
      this.keep(this.pendingT, this.pendingA);
      this.keep(t, a);
      return;
    }
    // The pending point becomes an intermediate one: the line from the anchor must pass within
    // epsilon of it.
    const dtPending = this.pendingT - this.anchorT;
    const hi = (this.pendingA + this.epsilon - this.anchorA) / dtPending;
    const lo = (this.pendingA - this.epsilon - this.anchorA) / dtPending;
    const slopeMax = hi < this.slopeMax ? hi : this.slopeMax;
    const slopeMin = lo > this.slopeMin ? lo : this.slopeMin;
    const slope = (a - this.anchorA) / (t - this.anchorT);
    if (slope >= slopeMin && slope <= slopeMax) {
      this.slopeMax = slopeMax;
      this.slopeMin = slopeMin;
      this.pendingT = t;
      this.pendingA = a;
      return;
    }
    this.keep(this.pendingT, this.pendingA);
    this.pendingT = t;
    this.pendingA = a;
    this.hasPending = true;
  }

  finish(): void {
    if (this.hasPending) this.keep(this.pendingT, this.pendingA);
    const n = this.count;
    // Sized once, then filled in order (about three times faster than growing by push).
    const t = new Array<number>(n);
    const angle = new Array<number>(n);
    for (let i = 0; i < n; i++) {
      t[i] = this.times[i];
      angle[i] = this.angles[i];
    }
    this.t = t;
    this.angle = angle;
  }

  /** Small enough to be inlined into pushIn, so its doubles stay unboxed. */
  private keep(t: number, a: number) {
    this.append(t, a);
    this.anchorT = t;
    this.anchorA = a;
    this.hasAnchor = true;
    this.hasPending = false;
    this.slopeMin = -Infinity;
    this.slopeMax = Infinity;
  }

  private grow(): void {
    const times = new Float64Array(this.count * 2);
    times.set(this.times);
    this.times = times;
    const angles = new Float64Array(this.count * 2);
    angles.set(this.angles);
    this.angles = angles;
  }
}
