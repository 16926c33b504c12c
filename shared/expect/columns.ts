import { advanceClockTo } from "../elements/behaviours";
import type { BoundValue } from "../elements/bindings";
import type { SimulatedClock } from "xstate";

/** How many frames are turned into columns at a time: bounded memory, columns stay in cache. */
export const FRAMES_PER_CHUNK = 4096;

/**
 * One channel's samples (from a chunk of frames, or a whole recording: RecordingColumns):
 * instants, values, and a sequence number that orders every sample of the recording (frame order,
 * then the order the frame lists channels).
 *
 * Numbers are kept unboxed in `numbers` (`isOther` 0), everything else in `others` (`isOther` 1,
 * `others` has holes where the samples are numbers): reading a number from a frame object boxes
 * it afresh, and a box kept in a column would survive into the next garbage collection, where
 * copying it is the expensive part. A column of numbers holds no JavaScript objects at all, so a
 * whole recording of them costs the collector nothing to mark.
 */
export class ChannelColumn {
  times = new Float64Array(256);
  seq = new Int32Array(256);
  numbers = new Float64Array(256);
  isOther = new Uint8Array(256);
  others: (BoundValue | undefined)[] = [];
  length = 0;

  add(t: number, value: BoundValue, seq: number): void {
    const n = this.length;
    if (n === this.times.length) this.grow();
    this.times[n] = t;
    this.seq[n] = seq;
    if (typeof value === "number") {
      this.numbers[n] = value;
      this.isOther[n] = 0;
    } else {
      this.isOther[n] = 1;
      this.others[n] = value;
    }
    this.length = n + 1;
  }

  /** The sample at i as the frame gave it. */
  valueAt(i: number): BoundValue {
    return this.isOther[i] === 0 ? this.numbers[i] : (this.others[i] as BoundValue);
  }

  private grow(): void {
    const n = this.times.length;
    const times = new Float64Array(n * 2);
    times.set(this.times);
    this.times = times;
    const seqs = new Int32Array(n * 2);
    seqs.set(this.seq);
    this.seq = seqs;
    const numbers = new Float64Array(n * 2);
    numbers.set(this.numbers);
    this.numbers = numbers;
    const isOther = new Uint8Array(n * 2);
    isOther.set(this.isOther);
    this.isOther = isOther;
  }
}

/** Where an element finds the column of a channel it binds. */
export interface ColumnSource {
  column(channel: string): ChannelColumn;
}

/** The columns of the channels some element binds; other channels are never copied. */
export class ChannelColumns implements ColumnSource {
  readonly byChannel = new Map<string, ChannelColumn>();

  column(channel: string): ChannelColumn {
    let column = this.byChannel.get(channel);
    if (!column) this.byChannel.set(channel, (column = new ChannelColumn()));
    return column;
  }

  clear(): void {
    for (const column of this.byChannel.values()) column.length = 0;
  }
}

export type Listener = (value: BoundValue, t: number) => void;
/** A listener's loop over a run of samples of one column, same result as calling it per sample. */
export type BulkListener = (column: ChannelColumn, from: number, to: number) => void;

export interface FeedSource {
  listeners: [string, Listener][];
  /** Present for listeners that have a loop form (a pointer's, readout's or encoder's value). */
  bulk?: { listener: Listener; run: BulkListener };
  /** The element's own clock, for behaviours with delays; advanced before each of its samples. */
  clock?: SimulatedClock;
  afterTimers?(t: number): void;
}

/**
 * Plays one element's samples from the columns of the channels it binds, in recording order.
 * Elements are independent (each has its own clock when it needs one), so an element only does
 * work when one of its own channels changed; runs of samples of one channel, with no other of its
 * channels in between, go to the bulk loop.
 */
export class ElementFeed {
  private readonly columns: ChannelColumn[] = [];
  private readonly handlers: Listener[][] = [];
  private readonly bulks: (BulkListener | undefined)[] = [];
  private readonly cursors: number[] = [];

  constructor(
    private readonly source: FeedSource,
    all: ColumnSource,
  ) {
    for (const [channel, listener] of source.listeners) {
      const column = all.column(channel);
      let index = this.columns.indexOf(column);
      if (index < 0) {
        index = this.columns.push(column) - 1;
        this.handlers.push([]);
        this.cursors.push(0);
      }
      this.handlers[index].push(listener);
    }
    for (let i = 0; i < this.columns.length; i++) {
      const only = this.handlers[i].length === 1 ? this.handlers[i][0] : undefined;
      this.bulks.push(only !== undefined && source.bulk?.listener === only && !source.clock ? source.bulk.run : undefined);
    }
  }

  /** Plays every sample now in the columns. */
  play(): void {
    const columns = this.columns;
    const count = columns.length;
    if (count === 1) {
      this.run(0, 0, columns[0].length);
      return;
    }
    const cursors = this.cursors;
    for (let i = 0; i < count; i++) cursors[i] = 0;
    for (;;) {
      // The channel whose next sample comes first, and the sequence number of the runner-up.
      let first = -1;
      let firstSeq = 0;
      let secondSeq = Infinity;
      for (let i = 0; i < count; i++) {
        if (cursors[i] >= columns[i].length) continue;
        const s = columns[i].seq[cursors[i]];
        if (first < 0 || s < firstSeq) {
          if (first >= 0) secondSeq = firstSeq;
          first = i;
          firstSeq = s;
        } else if (s < secondSeq) secondSeq = s;
      }
      if (first < 0) return;
      const column = columns[first];
      let end = cursors[first] + 1;
      while (end < column.length && column.seq[end] < secondSeq) end++;
      this.run(first, cursors[first], end);
      cursors[first] = end;
    }
  }

  private run(index: number, from: number, to: number): void {
    if (from >= to) return;
    const column = this.columns[index];
    const bulk = this.bulks[index];
    if (bulk !== undefined) {
      bulk(column, from, to);
      return;
    }
    const handlers = this.handlers[index];
    const clock = this.source.clock;
    for (let i = from; i < to; i++) {
      const t = column.times[i];
      if (clock !== undefined && t > clock.now()) advanceClockTo(clock, t, this.source.afterTimers);
      const value = column.valueAt(i);
      for (let h = 0; h < handlers.length; h++) handlers[h](value, t);
    }
  }
}
