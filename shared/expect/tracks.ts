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
 */
export class LinearTrackBuilder {
  /** Filled by finish(); until then points live in typed arrays, which grow off the JS heap. */
  readonly t: number[] = [];
  readonly angle: number[] = [];
  private times = new Float64Array(1024);
  private angles = new Float64Array(1024);
  private count = 0;
  private anchorT = 0;
  private anchorA = 0;
  private hasAnchor = false;
  private pendingT = 0;
  private pendingA = 0;
  private hasPending = false;
  private slopeMin = -Infinity;
  private slopeMax = Infinity;

  constructor(private readonly epsilon: number) {}

  push(t: number, a: number): void {
    if (!this.hasAnchor) {
      this.emit(t, a);
      return;
    }
    if (!this.hasPending) {
      if (t === this.anchorT) {
        // A jump at the anchor's instant: keep both ends.
        if (a !== this.anchorA) this.emit(t, a);
        return;
      }
      this.setPending(t, a);
      return;
    }
    if (t === this.pendingT) {
      if (a === this.pendingA) return;
      // A jump: the pending point is a corner that must stay, then the jump's far end.
      this.emit(this.pendingT, this.pendingA);
      this.emit(t, a);
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
    this.emit(this.pendingT, this.pendingA);
    this.setPending(t, a);
  }

  finish(): void {
    if (this.hasPending) this.emit(this.pendingT, this.pendingA);
    for (let i = 0; i < this.count; i++) {
      this.t.push(this.times[i]);
      this.angle.push(this.angles[i]);
    }
    this.count = 0;
  }

  private setPending(t: number, a: number) {
    this.pendingT = t;
    this.pendingA = a;
    this.hasPending = true;
  }

  private emit(t: number, a: number) {
    if (this.count === this.times.length) {
      const times = new Float64Array(this.count * 2);
      times.set(this.times);
      this.times = times;
      const angles = new Float64Array(this.count * 2);
      angles.set(this.angles);
      this.angles = angles;
    }
    this.times[this.count] = t;
    this.angles[this.count] = a;
    this.count++;
    this.anchorT = t;
    this.anchorA = a;
    this.hasAnchor = true;
    this.hasPending = false;
    this.slopeMin = -Infinity;
    this.slopeMax = Infinity;
  }
}
