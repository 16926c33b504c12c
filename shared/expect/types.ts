import type { BoundValue } from "../elements/bindings";
import type { ElementKind } from "../elements/kinds";

/**
 * The engine's input: one recording frame, the channel values that changed at instant `t`
 * (milliseconds from the recording's start). Structurally the same as shared/recording's Frame,
 * declared here so the engine depends only on the shape.
 */
export interface ExpectFrame {
  t: number;
  v: Readonly<Record<string, BoundValue>>;
}

/** What a lamp (or a lit button's backlight) should show. `level` is brightness 0..255. */
export type LampShows =
  | { state: "off" }
  | { state: "on"; level: number }
  | { state: "flashing"; periodMs: number; level: number };

export type BreakerShows = "in" | "pulled" | "tripped";

/** One change point of a piecewise constant track: `shows` holds from `t` until the next change. */
export interface Change<V> {
  t: number;
  shows: V;
}

/**
 * A piecewise linear angle track: the angle moves linearly from point i to point i+1. Two points
 * at the same instant are a jump (the later one holds from that instant). When `wrap` is true the
 * angles are travel angles of a full-circle pointer (turns counted, so motion stays linear across
 * 360 degrees); `expectedAt` brings them into [0, 360).
 */
export interface AngleTrack {
  t: number[];
  angle: number[];
  wrap: boolean;
}

/** Discrete tracks by name; which ones an element has depends on its kind (docs/behaviours.md). */
export interface DiscreteTracks {
  /** The behaviour's own state name ("steady", "alerting", "held"...), for coverage. */
  mode?: Change<string>[];
  lamp?: Change<LampShows>[];
  text?: Change<string>[];
  breaker?: Change<BreakerShows>[];
  position?: Change<string>[];
  pressed?: Change<boolean>[];
  /** A pointer's OFF flag: true while it shows. */
  flag?: Change<boolean>[];
  /** An encoder's detents turned since the start, clockwise positive. */
  detents?: Change<number>[];
}

export interface ElementTimeline {
  id: string;
  kind: ElementKind;
  label: string;
  /** Placeholders get a timeline for previews, but are never judged. */
  placeholder: boolean;
  tracks: DiscreteTracks;
  angle?: AngleTrack;
}

export interface ExpectedTimelines {
  panelId: string;
  startMs: number;
  endMs: number;
  elements: ElementTimeline[];
}

/** Every track's value at one instant (absent when the track has no value yet). */
export interface ExpectedState {
  mode?: string;
  lamp?: LampShows;
  text?: string;
  breaker?: BreakerShows;
  position?: string;
  pressed?: boolean;
  flag?: boolean;
  detents?: number;
  /** Pointer angle in dial degrees; in [0, 360) for full-circle pointers. */
  angle?: number;
}
