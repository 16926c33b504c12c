import type { Change } from "./types";

/**
 * Builds a piecewise constant track. Several changes at one instant keep only the last, and a
 * change back to the value already showing is dropped, so the track holds real changes only.
 *
 * Changes are compared by a key (`keyOf(shows)`, passed to set() by the caller, who often has it
 * already). Only the last change's key is kept: the one before it is needed only when a change at
 * the same instant replaces the last one, and is made again from that change then. A parallel
 * array of every key cost a push per change and a second array as long as the track.
 */
export class DiscreteTrackBuilder<V> {
  readonly changes: Change<V>[] = [];
  private last: string | undefined = undefined;

  constructor(private readonly keyOf: (shows: V) => string) {}

  /** `key` must be keyOf(shows). */
  set(t: number, shows: V, key: string): void {
    const changes = this.changes;
    const n = changes.length;
    if (n > 0 && this.last === key) return;
    if (n > 0 && changes[n - 1].t === t) {
      changes.pop();
      this.last = n > 1 ? this.keyOf(changes[n - 2].shows) : undefined;
      if (this.last === key) return;
    }
    changes.push({ t, shows });
    this.last = key;
  }

  get lastKey(): string | undefined {
    return this.last;
  }
}

/** Keys of discrete tracks (DiscreteTrackBuilder): a text is its own, a flag "1" or "0". */
export const textKey = (text: string): string => text;
export const flagKey = (on: boolean): string => (on ? "1" : "0");
export const countKey = (count: number): string => String(count);

const EMPTY = new Float64Array(0);

/**
 * Spare buffers for LinearTrackBuilder, kept between tracks and between runs: a one-hour track
 * grows its two buffers to half a megabyte each, and fresh large buffers cost page faults and
 * external memory the garbage collector counts toward its next full collection (which marks the
 * whole heap, recordings included). Bounded, so an idle server keeps at most SPARE_BYTES.
 */
const SPARE_BYTES = 32 * 1024 * 1024;
const scratch = {
  spare: [] as Float64Array[],
  bytes: 0,
  /** A buffer of at least `size` numbers (contents undefined: callers write before they read). */
  take(size: number): Float64Array {
    const spare = this.spare;
    for (let i = spare.length - 1; i >= 0; i--) {
      const buffer = spare[i];
      if (buffer.length >= size) {
        spare[i] = spare[spare.length - 1];
        spare.pop();
        this.bytes -= buffer.byteLength;
        return buffer;
      }
    }
    return new Float64Array(size);
  },
  give(buffer: Float64Array): void {
    if (buffer.length === 0 || this.bytes + buffer.byteLength > SPARE_BYTES) return;
    this.spare.push(buffer);
    this.bytes += buffer.byteLength;
  },
};

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
  // Kept points so far, written directly by the fused pointer loop too (pointer-loop.ts), which
  // calls ensureRoom() first.
  times = scratch.take(1024);
  angles = scratch.take(1024);
  /**
   * Points both buffers hold: spare buffers come in any size at least the one asked for, so the
   * two may differ, and every write is checked against the smaller (a write past a typed array's
   * end is silently dropped: checking `times` alone once lost angles when `angles` was shorter).
   */
  capacity = Math.min(this.times.length, this.angles.length);
  count = 0;
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
  private finished = false;

  constructor(readonly epsilon: number) {}

  /** Stores a kept point (the fused loop keeps its door state itself). */
  append(t: number, a: number): void {
    if (this.count === this.capacity) this.grow();
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

  /** Makes `t` and `angle` and hands the buffers back; later calls change nothing. */
  finish(): void {
    if (this.finished) return;
    this.finished = true;
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
    scratch.give(this.times);
    scratch.give(this.angles);
    this.times = this.angles = EMPTY;
    this.capacity = 0;
    this.count = 0;
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

  /** Makes room for `more` points after the kept ones (doubling, so growth is amortised). */
  ensureRoom(more: number): void {
    if (this.count + more > this.capacity) this.grow(this.count + more);
  }

  private grow(atLeast = this.count + 1): void {
    let size = Math.max(1024, this.capacity * 2);
    while (size < atLeast) size *= 2;
    const times = scratch.take(size);
    times.set(this.times.subarray(0, this.count));
    scratch.give(this.times);
    this.times = times;
    const angles = scratch.take(size);
    angles.set(this.angles.subarray(0, this.count));
    scratch.give(this.angles);
    this.angles = angles;
    this.capacity = Math.min(times.length, angles.length);
  }
}
