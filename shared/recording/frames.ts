import type { ChannelValue } from "./channels";
import { RecordingError, type RecordingWhere } from "./errors";

/** The channel values that changed at one instant `t` (milliseconds from the recording's start). */
export interface Frame {
  t: number;
  v: Record<string, ChannelValue>;
}

/** Every channel's value at one instant. Channels that have no value yet are absent. */
export type ChannelState = Record<string, ChannelValue>;

/** A frame that holds every channel known at its instant, for seeking and late joiners. */
export interface Keyframe {
  t: number;
  state: ChannelState;
}

export function emptyState(): ChannelState {
  // A prototype-free object: channel names are data, never object internals.
  return Object.create(null) as ChannelState;
}

/** Applies frames in order to a copy of `state`, keeping frames at or before `until`. */
export function foldFrames(state: ChannelState, frames: Iterable<Frame>, until = Infinity): ChannelState {
  const next = Object.assign(emptyState(), state);
  for (const frame of frames) {
    if (frame.t > until) break;
    Object.assign(next, frame.v);
  }
  return next;
}

/** The state at instant `t` from a full frame list (frames in time order). */
export function stateAtFrames(frames: readonly Frame[], t: number): ChannelState {
  return foldFrames(emptyState(), frames, t);
}

/**
 * Shared by every source (Panelproof file, CSV, scenario) so they all apply the same rules:
 * time never goes backwards; several entries at one instant merge when they agree and are
 * refused when they conflict; values equal to the current state are dropped, so emitted frames
 * hold only changes.
 */
export class FrameSequencer {
  private readonly state = new Map<string, ChannelValue>();
  private pendingT = -1;
  /** The values at pendingT; the caller's object until a merge forces a private copy. */
  private pending: Record<string, ChannelValue> | null = null;
  private pendingIsCopy = false;
  private emitted = 0;

  /**
   * `t` must already be a whole, non-negative number of milliseconds and the values valid.
   * The sequencer may hand `values` on as the emitted frame's `v`; do not change it afterwards.
   */
  accept(t: number, values: Record<string, ChannelValue>, where: RecordingWhere): Frame | null {
    let flushed: Frame | null = null;
    let pending = this.pending;
    if (pending) {
      if (t < this.pendingT) {
        throw new RecordingError(
          "time_backwards",
          `time ${t} ms is before the previous frame's ${this.pendingT} ms`,
          { ...where, field: where.field ?? "t" },
        );
      }
      if (t === this.pendingT) {
        if (!this.pendingIsCopy) {
          pending = this.pending = Object.assign({}, pending);
          this.pendingIsCopy = true;
        }
        for (const channel in values) {
          const value = values[channel];
          const earlier = pending[channel];
          if (earlier !== undefined && earlier !== value) {
            throw new RecordingError(
              "conflicting_duplicate",
              `time ${t} ms appears again with ${JSON.stringify(value)} where it already had ${JSON.stringify(earlier)}`,
              { ...where, channel },
            );
          }
          pending[channel] = value;
        }
        return null;
      }
      flushed = this.flush();
    }
    this.pending = values;
    this.pendingIsCopy = false;
    this.pendingT = t;
    return flushed;
  }

  /** Emits whatever is pending; call once at the end of the source. */
  finish(): Frame | null {
    return this.pending ? this.flush() : null;
  }

  get framesEmitted(): number {
    return this.emitted;
  }

  get lastTime(): number {
    return this.pendingT;
  }

  private flush(): Frame | null {
    const pending = this.pending!;
    this.pending = null;
    const state = this.state;
    // One pass. Usually every value changed: then the pending object itself becomes the frame,
    // no copy. At the first value equal to the state, the changes so far move to a fresh object.
    let changed: Record<string, ChannelValue> | null = null;
    let changes = 0;
    for (const channel in pending) {
      const value = pending[channel];
      if (state.get(channel) === value) {
        if (changed === null) {
          changed = {};
          for (const earlier in pending) {
            if (earlier === channel) break;
            changed[earlier] = pending[earlier];
          }
        }
        continue;
      }
      state.set(channel, value);
      changes++;
      if (changed !== null) changed[channel] = value;
    }
    if (changes === 0) return null;
    this.emitted++;
    return { t: this.pendingT, v: changed ?? pending };
  }
}
