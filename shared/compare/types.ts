import type { BreakerShows, LampShows } from "../expect/types";

/**
 * What a panel says one element shows, stamped on arrival with the bench's clock and mapped
 * to recording time. A report holds until the next report for the same element and track,
 * or until a link gap.
 */
export type SeenShows =
  | { track: "lamp"; lamp: LampShows }
  | { track: "angle"; angle: number }
  | { track: "text"; text: string }
  | { track: "breaker"; breaker: BreakerShows }
  | { track: "position"; position: string };

export type JudgedTrack = SeenShows["track"];

export interface SeenSample {
  t: number;
  shows: SeenShows;
}

/** A stretch of recording time with no data from the element's link (disconnected, silent). */
export interface LinkGap {
  fromMs: number;
  toMs: number;
}

/** `observed`: the builder answered "no" at an observation checkpoint (docs/judging.md). */
export const MISMATCH_KINDS = ["wrong_value", "late", "unexpected_input", "observed"] as const;
export type MismatchKind = (typeof MISMATCH_KINDS)[number];

/** An interval where seen differed from expected beyond tolerance for longer than the lag budget. */
export interface Mismatch {
  elementId: string;
  track: JudgedTrack;
  kind: MismatchKind;
  startMs: number;
  endMs: number;
  /** Pointers: degrees; dimmable lamps: brightness steps; otherwise the interval's length in ms. */
  worstError: number;
  /** What the element should and did show at the worst instant, in words a report can print. */
  expected: string;
  seen: string;
  atMs: number;
}

export interface Tolerances {
  /** Pointer angle difference still counted equal, degrees. */
  degrees: number;
  /** Lamp brightness difference still counted equal, 0..255. */
  level: number;
  /** Relative flash period error still counted equal. */
  period: number;
  /** How long seen may differ after a change before it counts. */
  lagBudgetMs: number;
}

export const ELEMENT_STATUSES = ["pass", "fail", "untested", "no_data", "placeholder"] as const;
export type ElementStatus = (typeof ELEMENT_STATUSES)[number];
