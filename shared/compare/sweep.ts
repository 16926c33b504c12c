import type { JudgedTrack, Mismatch, MismatchKind } from "./types";

const NO_MISMATCHES: readonly Mismatch[] = Object.freeze([]);

/** One stretch of time with constant comparison inputs (a discrete value each side, or one linear piece). */
export interface Piece {
  from: number;
  to: number;
  /** No seen data here (before the first report, or in a link gap). */
  noData: boolean;
  bad: boolean;
  /** Worst error inside the piece and where (degrees, levels, or 0 for "different"). */
  error: number;
  errorAt: number;
  /** Raw values; turned into words only for the worst instant of a mismatch (words are costly). */
  expected: unknown;
  seen: unknown;
  /** What changed at `from`: the expected value, the seen value, or neither. */
  cause: "expected" | "seen" | "both" | "none";
}

/**
 * Joins contiguous bad pieces into intervals and keeps those longer than the lag budget.
 * Pieces arrive in time order, possibly split anywhere (live batches): splitting a piece in two
 * never changes the result, which is what makes live judging equal offline judging.
 */
export class MismatchSweep {
  private open: { start: number; cause: Piece["cause"]; worst: number; worstAt: number; expected: unknown; seen: unknown; errorIsLength: boolean } | null = null;
  private readonly done: Mismatch[] = [];
  noDataMs = 0;

  constructor(
    private readonly elementId: string,
    private readonly track: JudgedTrack,
    private readonly lagBudgetMs: number,
    /** Discrete tracks measure a mismatch by its length; pointers and levels by their error. */
    private readonly errorIsLength: boolean,
    private readonly describe: (value: unknown) => string = String,
  ) {}

  feed(piece: Piece) {
    if (piece.to <= piece.from) return;
    if (piece.noData) {
      this.noDataMs += piece.to - piece.from;
      this.close(piece.from, "none", false);
      return;
    }
    if (!piece.bad) {
      this.close(piece.from, piece.cause, true);
      return;
    }
    if (!this.open) {
      this.open = { start: piece.from, cause: piece.cause, worst: -1, worstAt: piece.from, expected: piece.expected, seen: piece.seen, errorIsLength: this.errorIsLength };
    }
    if (piece.error > this.open.worst + 1e-9) {
      this.open.worst = piece.error;
      this.open.worstAt = piece.errorAt;
      this.open.expected = piece.expected;
      this.open.seen = piece.seen;
    }
  }

  /** Ends the open interval at `at`. `caughtUp`: it ended because seen came to agree. */
  close(at: number, endCause: Piece["cause"], caughtUp: boolean) {
    const o = this.open;
    if (!o) return;
    this.open = null;
    const length = at - o.start;
    if (length <= this.lagBudgetMs) return;
    let kind: MismatchKind = "wrong_value";
    if ((o.cause === "expected" || o.cause === "both") && caughtUp && endCause === "seen") kind = "late";
    else if (this.track === "position" && o.cause === "seen") kind = "unexpected_input";
    this.done.push({
      elementId: this.elementId,
      track: this.track,
      kind,
      startMs: o.start,
      endMs: at,
      worstError: o.errorIsLength ? length : o.worst,
      expected: this.describe(o.expected),
      seen: this.describe(o.seen),
      atMs: o.worstAt,
    });
  }

  /**
   * True when an interval still open at `t` has already lasted longer than the lag budget: it
   * will be a mismatch however it ends, so a live view can mark the element failing now rather
   * than when the panel finally agrees (a lamp stuck dark to the end never would).
   */
  failingAt(t: number): boolean {
    return this.open !== null && t - this.open.start > this.lagBudgetMs;
  }

  /**
   * Mismatches finished so far, removed from the sweep. Usually none: then one shared empty list,
   * not a new one (a live run asks every element of every link at every frame).
   */
  take(): readonly Mismatch[] {
    return this.done.length === 0 ? NO_MISMATCHES : this.done.splice(0);
  }
}
