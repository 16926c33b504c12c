import { deflateSync, inflateSync } from "fflate";
import type { ChannelValue } from "./channels";
import { RecordingError } from "./errors";
import { emptyState, type ChannelState, type Frame } from "./frames";

/**
 * Storage shape of a recording: segments of a few seconds, each a keyframe (every channel's
 * value just before the segment) plus the segment's delta frames, JSON-encoded with a channel
 * table and deflated. Reading the state at any instant decodes exactly one segment, so a seek
 * costs the same at minute 1 and minute 59. The server stores one row per segment, indexed by
 * startMs.
 */

export const DEFAULT_SEGMENT_MS = 5_000;
/** Bounds one segment's decode cost even when a channel changes at a very high rate. */
export const DEFAULT_MAX_FRAMES_PER_SEGMENT = 2_000;
export const SEGMENT_ENCODING_VERSION = 1;

export interface RecordingSegment {
  /** Position in the recording, from 0. */
  index: number;
  /** First instant the segment covers; its keyframe is the state just before it. */
  startMs: number;
  /** End of the segment's time window (exclusive); later instants with no segment use the last one. */
  endMs: number;
  firstFrameMs: number;
  lastFrameMs: number;
  frameCount: number;
  /** Deflated JSON: keyframe and delta frames. */
  payload: Uint8Array;
}

export interface DecodedSegment {
  startMs: number;
  keyframe: ChannelState;
  frames: Frame[];
}

export interface SegmenterOptions {
  segmentMs?: number;
  maxFramesPerSegment?: number;
  /**
   * Raw DEFLATE (RFC 1951) of a segment's bytes. Default: fflate, which runs anywhere. The server
   * passes Node's native zlib (about six times faster here); both write the same format, and
   * decodeSegment reads either.
   */
  deflate?: (bytes: Uint8Array) => Uint8Array;
}

const portableDeflate = (bytes: Uint8Array) => deflateSync(bytes, { level: 6 });

interface EncodedSegmentJson {
  v: number;
  s: number;
  c: string[];
  k: (number | ChannelValue)[];
  f: (number | ChannelValue)[][];
}

export function encodeSegment(segment: DecodedSegment, deflate: (bytes: Uint8Array) => Uint8Array = portableDeflate): Uint8Array {
  const table: string[] = [];
  const ids = new Map<string, number>();
  const id = (name: string): number => {
    let found = ids.get(name);
    if (found === undefined) {
      found = table.length;
      ids.set(name, found);
      table.push(name);
    }
    return found;
  };
  const keyframe: (number | ChannelValue)[] = [];
  for (const name in segment.keyframe) keyframe.push(id(name), segment.keyframe[name]);
  const frames = segment.frames.map((frame) => {
    const row: (number | ChannelValue)[] = [frame.t - segment.startMs];
    for (const name in frame.v) row.push(id(name), frame.v[name]);
    return row;
  });
  const json: EncodedSegmentJson = { v: SEGMENT_ENCODING_VERSION, s: segment.startMs, c: table, k: keyframe, f: frames };
  return deflate(new TextEncoder().encode(JSON.stringify(json)));
}

function parseSegment(payload: Uint8Array, inflate: (bytes: Uint8Array) => Uint8Array): EncodedSegmentJson {
  let json: EncodedSegmentJson;
  try {
    json = JSON.parse(new TextDecoder().decode(inflate(payload))) as EncodedSegmentJson;
  } catch (error) {
    throw new RecordingError("invalid_segment", `the segment cannot be decoded (${(error as Error).message})`);
  }
  if (json.v !== SEGMENT_ENCODING_VERSION) {
    throw new RecordingError("invalid_segment", `unknown segment encoding version ${JSON.stringify(json.v)}`);
  }
  return json;
}

/** A segment's keyframe and frames. `inflate` may be a faster native inflater (raw DEFLATE). */
export function decodeSegment(payload: Uint8Array, inflate: (bytes: Uint8Array) => Uint8Array = inflateSync): DecodedSegment {
  const json = parseSegment(payload, inflate);
  const keyframe = emptyState();
  for (let i = 0; i < json.k.length; i += 2) keyframe[json.c[json.k[i] as number]] = json.k[i + 1];
  const frames = json.f.map((row) => {
    const v: Record<string, ChannelValue> = {};
    for (let i = 1; i < row.length; i += 2) v[json.c[row[i] as number]] = row[i + 1];
    return { t: json.s + (row[0] as number), v };
  });
  return { startMs: json.s, keyframe, frames };
}

/** Receives a segment's frames one value at a time (e.g. shared/expect's RecordingColumns). */
export interface FrameSink {
  beginFrame(t: number): void;
  value(channel: string, value: ChannelValue): void;
}

/**
 * A segment's frames handed to `sink` as they are read, without making a frame object per frame
 * (what the server does to compute expected timelines over a whole recording). `inflate` may be a
 * faster native inflater (raw DEFLATE). Returns how many frames the segment held.
 */
export function decodeSegmentInto(payload: Uint8Array, sink: FrameSink, inflate: (bytes: Uint8Array) => Uint8Array = inflateSync): number {
  const json = parseSegment(payload, inflate);
  const names = json.c;
  const start = json.s;
  const rows = json.f;
  for (let r = 0; r < rows.length; r++) {
    const row = rows[r];
    const offset = row[0];
    if (typeof offset !== "number" || (row.length & 1) === 0) throw new RecordingError("invalid_segment", `frame ${r} of the segment starting at ${start} ms is malformed`);
    sink.beginFrame(start + offset);
    for (let i = 1; i < row.length; i += 2) {
      const name = names[row[i] as number];
      if (name === undefined) throw new RecordingError("invalid_segment", `frame ${r} of the segment starting at ${start} ms names channel ${JSON.stringify(row[i])}, not in its table`);
      sink.value(name, row[i + 1]);
    }
  }
  return rows.length;
}

/** Cuts a frame stream (in time order) into segments as frames arrive; memory stays one segment. */
export class Segmenter {
  private readonly segmentMs: number;
  private readonly maxFrames: number;
  private readonly state = emptyState();
  private current: { startMs: number; endMs: number; keyframe: ChannelState; frames: Frame[] } | null = null;
  private count = 0;
  private readonly deflate: (bytes: Uint8Array) => Uint8Array;

  constructor(options: SegmenterOptions = {}) {
    this.deflate = options.deflate ?? portableDeflate;
    this.segmentMs = options.segmentMs ?? DEFAULT_SEGMENT_MS;
    this.maxFrames = options.maxFramesPerSegment ?? DEFAULT_MAX_FRAMES_PER_SEGMENT;
    if (!(this.segmentMs > 0) || !(this.maxFrames > 0)) throw new RangeError("segment size must be positive");
  }

  push(frame: Frame): RecordingSegment[] {
    const done: RecordingSegment[] = [];
    const current = this.current;
    if (current) {
      const last = current.frames[current.frames.length - 1];
      if (frame.t <= last.t) throw new RangeError(`frames must arrive in time order (${frame.t} after ${last.t})`);
    }
    if (!current || frame.t >= current.endMs || current.frames.length >= this.maxFrames) {
      if (current) done.push(this.close());
      // A full segment inside its window starts a new one at the frame; otherwise align to the grid.
      const startMs =
        current && frame.t < current.endMs ? frame.t : Math.floor(frame.t / this.segmentMs) * this.segmentMs;
      const endMs = current && frame.t < current.endMs ? current.endMs : startMs + this.segmentMs;
      this.current = { startMs, endMs, keyframe: Object.assign(emptyState(), this.state), frames: [] };
    }
    this.current!.frames.push(frame);
    Object.assign(this.state, frame.v);
    return done;
  }

  finish(): RecordingSegment[] {
    return this.current ? [this.close()] : [];
  }

  private close(): RecordingSegment {
    const current = this.current!;
    this.current = null;
    return {
      index: this.count++,
      startMs: current.startMs,
      endMs: current.endMs,
      firstFrameMs: current.frames[0].t,
      lastFrameMs: current.frames[current.frames.length - 1].t,
      frameCount: current.frames.length,
      payload: encodeSegment(current, this.deflate),
    };
  }
}

export function segmentFrames(frames: Iterable<Frame>, options: SegmenterOptions = {}): RecordingSegment[] {
  const segmenter = new Segmenter(options);
  const segments: RecordingSegment[] = [];
  for (const frame of frames) segments.push(...segmenter.push(frame));
  segments.push(...segmenter.finish());
  return segments;
}

/** Index of the segment holding instant `t` (the last one starting at or before it), or -1. */
export function findSegmentIndex(segments: readonly Pick<RecordingSegment, "startMs">[], t: number): number {
  let low = 0;
  let high = segments.length - 1;
  let found = -1;
  while (low <= high) {
    const middle = (low + high) >> 1;
    if (segments[middle].startMs <= t) {
      found = middle;
      low = middle + 1;
    } else high = middle - 1;
  }
  return found;
}

/** Every channel's value at instant `t`, decoding only the one segment that holds it. */
export function stateAt(segments: readonly RecordingSegment[], t: number): ChannelState {
  const index = findSegmentIndex(segments, t);
  if (index < 0) return emptyState();
  return stateInSegment(decodeSegment(segments[index].payload), t);
}

/**
 * Every channel's value at `t` from the decoded segment holding it: its keyframe with its frames
 * up to `t` folded in (a new object; the segment is left as it was).
 */
export function stateInSegment(segment: DecodedSegment, t: number): ChannelState {
  const state: ChannelState = Object.assign(emptyState(), segment.keyframe);
  for (const frame of segment.frames) {
    if (frame.t > t) break;
    Object.assign(state, frame.v);
  }
  return state;
}

/** Every frame of the recording back from its segments, e.g. for export. */
export function* framesOfSegments(segments: Iterable<RecordingSegment>): Generator<Frame> {
  for (const segment of segments) yield* decodeSegment(segment.payload).frames;
}
