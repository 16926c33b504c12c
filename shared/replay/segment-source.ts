import { emptyState, type ChannelState, type Frame } from "../recording/frames";
import { decodeSegment, findSegmentIndex, stateInSegment, type DecodedSegment } from "../recording/segments";
import { firstAfter, type FrameSource } from "./frame-source";

/** A stored segment as the source needs it: where it starts and its payload (shared/recording/segments.ts). */
export interface StoredSegment {
  startMs: number;
  payload: Uint8Array;
}

/**
 * Frames read from a recording's stored segments as the player reaches them: what a run holds is
 * the segments' compressed payloads (a few megabytes an hour), not every frame as an object (an
 * hour at 60 Hz of 32 changing channels is about 180 MB of objects, which every full garbage
 * collection marks again, in the middle of the replay). A seek decodes one segment (its keyframe
 * plus deltas); playing decodes the next segment once. `warm(t)` decodes the segment holding `t`
 * ahead of time (the run calls it after each send, so a decode never falls on a frame's due time).
 * The last few decoded segments are kept.
 */
export class SegmentFrameSource implements FrameSource {
  private readonly decoded = new Map<number, DecodedSegment>();

  constructor(
    private readonly segments: readonly StoredSegment[],
    readonly durationMs: number,
    private readonly keep = 4,
    private readonly decode: (payload: Uint8Array) => DecodedSegment = decodeSegment,
  ) {
    for (let i = 1; i < segments.length; i++) {
      if (segments[i].startMs < segments[i - 1].startMs) throw new RangeError(`segment ${i} starts at ${segments[i].startMs} ms, before segment ${i - 1}`);
    }
  }

  /** Segments decoded so far (for tests and the bench). */
  decodes = 0;

  private segment(index: number): DecodedSegment {
    let segment = this.decoded.get(index);
    if (segment) {
      // Most recently used last.
      this.decoded.delete(index);
      this.decoded.set(index, segment);
      return segment;
    }
    segment = this.decode(this.segments[index].payload);
    this.decodes++;
    this.decoded.set(index, segment);
    if (this.decoded.size > this.keep) this.decoded.delete(this.decoded.keys().next().value as number);
    return segment;
  }

  framesBetween(fromExclusive: number, toInclusive: number): Frame[] {
    const out: Frame[] = [];
    if (toInclusive <= fromExclusive) return out;
    for (let i = Math.max(0, findSegmentIndex(this.segments, fromExclusive)); i < this.segments.length && this.segments[i].startMs <= toInclusive; i++) {
      const frames = this.segment(i).frames;
      for (let k = firstAfter(frames, fromExclusive); k < frames.length && frames[k].t <= toInclusive; k++) out.push(frames[k]);
    }
    return out;
  }

  stateAt(t: number): ChannelState {
    const index = findSegmentIndex(this.segments, t);
    return index < 0 ? emptyState() : stateInSegment(this.segment(index), t);
  }

  nextFrameAfter(t: number): Frame | null {
    for (let i = Math.max(0, findSegmentIndex(this.segments, t)); i < this.segments.length; i++) {
      const frames = this.segment(i).frames;
      const k = firstAfter(frames, t);
      if (k < frames.length) return frames[k];
    }
    return null;
  }

  /** Decodes the segment holding `t` now, if it is not already. */
  warm(t: number): void {
    const index = findSegmentIndex(this.segments, t);
    if (index >= 0) this.segment(index);
  }
}
