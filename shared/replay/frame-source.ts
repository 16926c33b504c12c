import { emptyState, type ChannelState, type Frame } from "../recording/frames";

/**
 * Where a player reads frames from. The server's source reads one stored segment (a
 * keyframe plus deltas) per seek (segment-source.ts); tests and the browser use an array in memory.
 */
export interface FrameSource {
  readonly durationMs: number;
  /** Frames with from < t <= to, in time order. */
  framesBetween(fromExclusive: number, toInclusive: number): Frame[];
  /** Every channel's value at `t` (the keyframe a late joiner or a seek needs). */
  stateAt(t: number): ChannelState;
  /** The first frame after `t`, for stepping one frame. */
  nextFrameAfter(t: number): Frame | null;
}

/** Index of the first frame with time > t (frames sorted by time). */
export function firstAfter(frames: readonly Frame[], t: number): number {
  let lo = 0;
  let hi = frames.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (frames[mid].t <= t) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/**
 * Frames held in memory, with a checkpoint every `checkpointEvery` frames (a full state), so
 * `stateAt` folds at most that many frames whatever the instant.
 */
export class ArrayFrameSource implements FrameSource {
  readonly durationMs: number;
  private readonly checkpoints: { index: number; state: ChannelState }[] = [];

  constructor(
    private readonly frames: readonly Frame[],
    durationMs?: number,
    private readonly checkpointEvery = 256,
  ) {
    for (let i = 1; i < frames.length; i++) {
      if (frames[i].t < frames[i - 1].t) throw new RangeError(`frame ${i} at ${frames[i].t} ms is before frame ${i - 1}`);
    }
    this.durationMs = durationMs ?? (frames.length ? frames[frames.length - 1].t : 0);
    const running = emptyState();
    for (let i = 0; i < frames.length; i++) {
      Object.assign(running, frames[i].v);
      if (i % checkpointEvery === checkpointEvery - 1) this.checkpoints.push({ index: i, state: Object.assign(emptyState(), running) });
    }
  }

  framesBetween(fromExclusive: number, toInclusive: number): Frame[] {
    return this.frames.slice(firstAfter(this.frames, fromExclusive), firstAfter(this.frames, toInclusive));
  }

  stateAt(t: number): ChannelState {
    const end = firstAfter(this.frames, t); // frames [0, end) are at or before t
    const lastIndex = end - 1;
    const checkpoint = this.checkpoints[Math.floor((lastIndex + 1) / this.checkpointEvery) - 1];
    const state: ChannelState = Object.assign(emptyState(), checkpoint?.state ?? {});
    for (let i = checkpoint ? checkpoint.index + 1 : 0; i < end; i++) Object.assign(state, this.frames[i].v);
    return state;
  }

  nextFrameAfter(t: number): Frame | null {
    return this.frames[firstAfter(this.frames, t)] ?? null;
  }
}

/**
 * Merges frames that fell due together into one, later values winning, stamped with the
 * latest time: a late player catches up in one send and never sends values out of order.
 */
export function coalesceFrames(frames: readonly Frame[]): Frame | null {
  if (frames.length === 0) return null;
  if (frames.length === 1) return frames[0];
  const v = {} as Frame["v"];
  for (const f of frames) Object.assign(v, f.v);
  return { t: frames[frames.length - 1].t, v };
}
