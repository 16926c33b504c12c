import type { BoundValue } from "../elements/bindings";
import { ChannelColumn, type ColumnSource } from "./columns";
import type { ExpectFrame } from "./types";

/**
 * A whole recording held as one column per channel (instants, unboxed numbers, sequence numbers):
 * the form the server computes expected timelines from (docs/behaviours.md, "Speed").
 *
 * An hour at 60 Hz as frame objects is about 180 MB of small objects that every full garbage
 * collection marks again; as columns it is a few typed arrays per channel, about 21 bytes a sample,
 * which the collector never looks inside. The server fills them straight from the stored segments
 * (`decodeSegmentInto`), so the frames never exist as objects at all.
 *
 * Only the channels in `wanted` are kept when it is given (a panel's bound channels): a recording's
 * other channels are skipped as they are read.
 */
export class RecordingColumns implements ColumnSource {
  readonly byChannel = new Map<string, ChannelColumn>();
  /** Frames read, and the instant of the last one. */
  frames = 0;
  lastT = 0;
  private seq = 0;
  private t = 0;
  private readonly wanted: ReadonlySet<string> | null;
  // Frames usually list the same channels in the same order: the column found for the k-th value
  // of the last frame is kept, and a name that is the same string again skips the map lookup.
  private readonly nameAt: string[] = [];
  private readonly columnAt: (ChannelColumn | null)[] = [];
  private k = 0;

  constructor(wanted?: Iterable<string>) {
    this.wanted = wanted ? new Set(wanted) : null;
  }

  /** Columns of a list of frames (in time order). */
  static of(frames: Iterable<ExpectFrame>, wanted?: Iterable<string>): RecordingColumns {
    const columns = new RecordingColumns(wanted);
    if (Array.isArray(frames)) for (let i = 0; i < frames.length; i++) columns.addFrame(frames[i] as ExpectFrame);
    else for (const frame of frames) columns.addFrame(frame);
    return columns;
  }

  addFrame(frame: ExpectFrame): void {
    this.beginFrame(frame.t);
    const values = frame.v;
    for (const channel in values) this.value(channel, values[channel]);
  }

  /** Starts the next frame, at instant t (never before the last one). */
  beginFrame(t: number): void {
    if (!(t >= this.lastT) && this.frames > 0) throw new RangeError(`frame at ${t} ms comes after one at ${this.lastT} ms: frames must be in time order`);
    this.t = this.lastT = t;
    this.frames++;
    this.k = 0;
  }

  /** One channel's value in the current frame. */
  value(channel: string, value: BoundValue): void {
    const k = this.k++;
    let column: ChannelColumn | null;
    if (this.nameAt[k] === channel) column = this.columnAt[k];
    else {
      column = this.byChannel.get(channel) ?? null;
      if (column === null && (this.wanted === null || this.wanted.has(channel))) this.byChannel.set(channel, (column = new ChannelColumn()));
      this.nameAt[k] = channel;
      this.columnAt[k] = column;
    }
    // Every value takes a sequence number, kept or not, so the order is the frames' order.
    const seq = this.seq++;
    if (column !== null) column.add(this.t, value, seq);
  }

  /** A channel's column; an empty one (not kept) for a channel the recording never sets. */
  column(channel: string): ChannelColumn {
    return this.byChannel.get(channel) ?? new ChannelColumn();
  }

  /** Samples kept, over all channels. */
  get samples(): number {
    let n = 0;
    for (const c of this.byChannel.values()) n += c.length;
    return n;
  }
}
