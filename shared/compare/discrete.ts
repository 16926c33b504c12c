import type { Change } from "../expect/types";
import { forgetFront, seenMemory, shouldForget } from "./seen-memory";
import { clipToGapEdges, noDataAt } from "./gaps";
import { MismatchSweep, type Piece } from "./sweep";
import type { JudgedTrack, LinkGap, Mismatch } from "./types";

export interface DiscreteRules<V> {
  equal(expected: V, seen: V): boolean;
  /** Size of a difference for "worst error" (0 when only "different" makes sense). */
  error(expected: V, seen: V): number;
  describe(value: V): string;
}

/**
 * Judges one piecewise constant track (lamp, readout text, breaker, switch position) as
 * reports arrive. `advance(t)` settles everything before `t`; `finish(end)` settles the rest.
 */
export class DiscreteTrackJudge<V> {
  private readonly sweep: MismatchSweep;
  private readonly seen: Change<V>[] = [];
  private readonly gaps: LinkGap[] = [];
  private readonly piece: Piece = { from: 0, to: 0, noData: false, bad: false, error: 0, errorAt: 0, expected: undefined, seen: undefined, cause: "none" };
  private cursor: number;
  private expIndex = -1;
  private seenIndex = -1;
  /** The latest expected change still waiting for the panel to follow, for lag. */
  private pending: { t: number; value: V } | null = null;
  readonly lags: number[] = [];

  constructor(
    elementId: string,
    track: JudgedTrack,
    private readonly expected: readonly Change<V>[],
    private readonly rules: DiscreteRules<V>,
    lagBudgetMs: number,
    startMs: number,
  ) {
    this.sweep = new MismatchSweep(elementId, track, lagBudgetMs, rules.error === zeroError, (v) => rules.describe(v as V));
    this.cursor = startMs;
  }

  addSeen(t: number, value: V) {
    const last = this.seen[this.seen.length - 1];
    if (last && t < last.t) throw new RangeError(`seen reports must come in time order (${t} after ${last.t})`);
    if (t < this.cursor) throw new RangeError(`a report at ${t} ms is older than what was already judged (${this.cursor} ms)`);
    if (last && last.t === t) last.shows = value;
    else {
      this.seen.push({ t, shows: value });
      if (this.seen.length >= seenMemory.keep) this.advance(t);
    }
  }

  addGap(gap: LinkGap) {
    if (gap.toMs > gap.fromMs) this.gaps.push(gap);
  }

  /** Settles [cursor, t). */
  advance(t: number) {
    while (this.cursor < t) {
      const a = this.cursor;
      while (this.expIndex + 1 < this.expected.length && this.expected[this.expIndex + 1].t <= a) this.expIndex++;
      while (this.seenIndex + 1 < this.seen.length && this.seen[this.seenIndex + 1].t <= a) this.seenIndex++;
      let b = t;
      const nextExp = this.expected[this.expIndex + 1]?.t;
      const nextSeen = this.seen[this.seenIndex + 1]?.t;
      if (nextExp !== undefined && nextExp < b) b = nextExp;
      if (nextSeen !== undefined && nextSeen < b) b = nextSeen;
      b = clipToGapEdges(this.gaps, a, b);
      const exp = this.expected[this.expIndex];
      const seen = this.seen[this.seenIndex];
      const expChanged = exp !== undefined && exp.t === a;
      const seenChanged = seen !== undefined && seen.t === a;
      const cause: Piece["cause"] = expChanged && seenChanged ? "both" : expChanged ? "expected" : seenChanged ? "seen" : "none";
      // Lag is the response to a change; the recording's first value is no change to follow.
      if (expChanged && this.expIndex > 0 && !this.rules.equal(this.expected[this.expIndex - 1].shows, exp.shows)) {
        this.pending = { t: a, value: exp.shows };
      }
      if (exp === undefined) {
        // Nothing is expected yet (the recording has not set the channel): not judged.
        this.feed(a, b, false, false, 0, undefined, undefined, cause);
      } else if (seen === undefined || (this.gaps.length > 0 && noDataAt(this.gaps, a, seen.t))) {
        this.feed(a, b, true, false, 0, exp.shows, undefined, cause);
      } else {
        const equal = this.rules.equal(exp.shows, seen.shows);
        if (equal && this.pending && this.rules.equal(this.pending.value, exp.shows)) {
          this.lags.push(a - this.pending.t);
          this.pending = null;
        }
        this.feed(a, b, false, !equal, equal ? 0 : this.rules.error(exp.shows, seen.shows), exp.shows, seen.shows, cause);
      }
      this.cursor = b;
    }
    // Reports behind the one held at the cursor are never read again.
    if (shouldForget(this.seenIndex, this.seen.length)) {
      forgetFront(this.seen, this.seenIndex);
      this.seenIndex = 0;
    }
  }

  /**
   * One piece to the sweep, through one object reused for every piece (the sweep copies what it
   * keeps): a live run advances every element of every link at every frame.
   */
  private feed(from: number, to: number, noData: boolean, bad: boolean, error: number, expected: unknown, seen: unknown, cause: Piece["cause"]) {
    const piece = this.piece;
    piece.from = from;
    piece.to = to;
    piece.noData = noData;
    piece.bad = bad;
    piece.error = error;
    piece.errorAt = from;
    piece.expected = expected;
    piece.seen = seen;
    piece.cause = cause;
    this.sweep.feed(piece);
    piece.expected = piece.seen = undefined;
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

export const zeroError = () => 0;
