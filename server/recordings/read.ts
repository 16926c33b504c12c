import { and, asc, desc, eq, gt, gte, lte } from "drizzle-orm";
import type { SeriesView } from "../../shared/api/recordings";
import type { ChannelDefinition, ChannelValue } from "../../shared/recording/channels";
import { emptyState, type ChannelState, type Frame } from "../../shared/recording/frames";
import { RecordingColumns } from "../../shared/expect/recording-columns";
import { decodeSegment, decodeSegmentInto, stateInSegment } from "../../shared/recording/segments";
import { nativeInflate } from "./native-deflate";
import { recordingSegment } from "../db/schema";
import type { DbOrTx } from "./writer";

/**
 * Reading stored recordings. A seek touches exactly one segment row (the last one starting at
 * or before t, found through the (recording_id, start_ms) index); ranges touch only the
 * segments that overlap them.
 */

/** Every channel's value at instant t: one segment row read and decoded. */
export async function stateAtInstant(db: DbOrTx, recordingId: string, t: number): Promise<{ state: ChannelState; segmentsRead: number }> {
  const [row] = await db
    .select({ payload: recordingSegment.payload })
    .from(recordingSegment)
    .where(and(eq(recordingSegment.recordingId, recordingId), lte(recordingSegment.startMs, t)))
    .orderBy(desc(recordingSegment.startMs), desc(recordingSegment.index))
    .limit(1);
  if (!row) return { state: emptyState(), segmentsRead: 0 };
  return { state: stateInSegment(decodeSegment(row.payload), t), segmentsRead: 1 };
}

/** Every stored segment (where it starts, its payload), in order, reading `batch` rows at a time. */
export async function* storedSegmentsOf(db: DbOrTx, recordingId: string, batch = 32): AsyncGenerator<{ startMs: number; payload: Uint8Array }> {
  let next = 0;
  for (;;) {
    const rows = await db
      .select({ index: recordingSegment.index, startMs: recordingSegment.startMs, payload: recordingSegment.payload })
      .from(recordingSegment)
      .where(and(eq(recordingSegment.recordingId, recordingId), gte(recordingSegment.index, next)))
      .orderBy(asc(recordingSegment.index))
      .limit(batch);
    if (rows.length === 0) return;
    for (const row of rows) yield { startMs: row.startMs, payload: row.payload };
    next = rows[rows.length - 1].index + 1;
  }
}

/** Every segment's payload, in order. */
async function* segmentPayloadsOf(db: DbOrTx, recordingId: string, batch: number): AsyncGenerator<Uint8Array> {
  for await (const segment of storedSegmentsOf(db, recordingId, batch)) yield segment.payload;
}

/** Every frame, in order, a segment's at a time (for downloads). */
export async function* framesOf(db: DbOrTx, recordingId: string, batch = 32): AsyncGenerator<Frame[]> {
  for await (const payload of segmentPayloadsOf(db, recordingId, batch)) yield decodeSegment(payload).frames;
}

/**
 * The whole recording as columns (shared/expect's RecordingColumns), read segment by segment
 * straight from the stored rows: no frame objects, the form expected timelines are computed from.
 * `channels`: keep only these (a run's bound channels); the rest are skipped as they are read.
 */
export async function recordingColumnsOf(db: DbOrTx, recordingId: string, channels?: Iterable<string>, batch = 32): Promise<RecordingColumns> {
  const columns = new RecordingColumns(channels);
  for await (const payload of segmentPayloadsOf(db, recordingId, batch)) decodeSegmentInto(payload, columns, nativeInflate);
  return columns;
}

/** Booleans as 0/1, enums as their index, text as null (a plot shows numbers only). */
export function plotValue(channel: ChannelDefinition, value: ChannelValue | undefined): number | null {
  if (value === undefined) return null;
  switch (channel.kind) {
    case "number":
      return value as number;
    case "boolean":
      return value ? 1 : 0;
    case "enum": {
      const i = channel.values.indexOf(value as string);
      return i < 0 ? null : i;
    }
    case "text":
      return null;
  }
}

interface Points {
  t: number[];
  v: (number | null)[];
}

/**
 * Reduces a step series to at most `maxPoints`, keeping in each time bucket its first, lowest,
 * highest and last point (in time order): a short spike or a single lamp flash survives however
 * far the plot is zoomed out.
 */
export function downsample(points: Points, maxPoints: number, fromMs: number, toMs: number): Points {
  const n = points.t.length;
  if (n <= maxPoints) return points;
  const buckets = Math.max(1, Math.floor(maxPoints / 4));
  const width = Math.max(1, (toMs - fromMs + 1) / buckets);
  const out: Points = { t: [], v: [] };
  let i = 0;
  while (i < n) {
    const bucket = Math.min(buckets - 1, Math.floor((points.t[i] - fromMs) / width));
    const first = i;
    let lo = i;
    let hi = i;
    let j = i;
    while (j < n && Math.min(buckets - 1, Math.floor((points.t[j] - fromMs) / width)) === bucket) {
      const value = points.v[j];
      if (value !== null) {
        const low = points.v[lo];
        const high = points.v[hi];
        if (low === null || value < low) lo = j;
        if (high === null || value > high) hi = j;
      }
      j++;
    }
    const last = j - 1;
    for (const k of [...new Set([first, lo, hi, last])].sort((a, b) => a - b)) {
      out.t.push(points.t[k]);
      out.v.push(points.v[k]);
    }
    i = j;
  }
  return out;
}

/**
 * Step series of chosen channels over [fromMs, toMs]: each starts with the value at fromMs
 * (when the channel has one), then every change inside the range.
 */
export async function seriesOf(
  db: DbOrTx,
  recordingId: string,
  channels: readonly ChannelDefinition[],
  fromMs: number,
  toMs: number,
  maxPoints: number,
): Promise<SeriesView> {
  const rows = await db
    .select({ startMs: recordingSegment.startMs, payload: recordingSegment.payload })
    .from(recordingSegment)
    .where(and(eq(recordingSegment.recordingId, recordingId), lte(recordingSegment.startMs, toMs), gt(recordingSegment.endMs, fromMs)))
    .orderBy(asc(recordingSegment.index));
  let state: ChannelState;
  let frames: Frame[] = [];
  if (rows.length === 0) {
    // Nothing changes in the range: the value at fromMs holds throughout.
    state = (await stateAtInstant(db, recordingId, fromMs)).state;
  } else {
    const decoded = rows.map((r) => decodeSegment(r.payload));
    // The first segment's keyframe is the state before its start; no frame lies between fromMs and it.
    state = decoded[0].keyframe;
    for (const d of decoded) for (const f of d.frames) frames.push(f);
    let k = 0;
    while (k < frames.length && frames[k].t <= fromMs) Object.assign(state, frames[k++].v);
    frames = frames.slice(k);
  }
  const series: SeriesView["series"] = {};
  for (const channel of channels) {
    const points: Points = { t: [], v: [] };
    if (state[channel.name] !== undefined) {
      points.t.push(fromMs);
      points.v.push(plotValue(channel, state[channel.name]));
    }
    for (const frame of frames) {
      if (frame.t > toMs) break;
      const value = frame.v[channel.name];
      if (value === undefined) continue;
      points.t.push(frame.t);
      points.v.push(plotValue(channel, value));
    }
    series[channel.name] = downsample(points, maxPoints, fromMs, toMs);
  }
  return { fromMs, toMs, series };
}
