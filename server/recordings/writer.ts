import { randomUUID } from "node:crypto";
import { eq } from "drizzle-orm";
import type { ChannelDefinition } from "../../shared/recording/channels";
import type { Frame } from "../../shared/recording/frames";
import { Segmenter, type RecordingSegment, type SegmenterOptions } from "../../shared/recording/segments";
import type { Database } from "../db/client";
import { recording, recordingSegment } from "../db/schema";
import { ChannelStatsCollector } from "./stats";
import { nativeDeflate } from "./native-deflate";

/** A database handle or an open transaction: writers run inside the caller's transaction. */
export type DbOrTx = Database | Parameters<Parameters<Database["transaction"]>[0]>[0];

export type RecordingSource = "file" | "csv" | "capture" | "scenario";

export interface NewRecording {
  id?: string;
  workshopId: string;
  airframeId: string;
  name: string;
  source: RecordingSource;
  channels: ChannelDefinition[];
  notes?: string | null;
  sampleRateHz?: number | null;
  originalKey?: string | null;
  createdById?: string | null;
  sizeBytes?: number;
}

/** Segment rows are sent in batches: few round trips, bounded memory (about 4 MB, plus one batch in flight). */
const BATCH_SEGMENTS = 64;
const BATCH_BYTES = 4 * 1024 * 1024;

/**
 * The one way a recording reaches the database (imports, scenarios, captures, the demo seed):
 * frames in time order go through the shared segmenter, segments are inserted in batches, and
 * the recording row gets its totals at the end. Run it inside a transaction so a failure
 * anywhere leaves nothing behind.
 *
 * Speed (bench/import.bench.ts): a batch's INSERT is left running while the next frames are
 * parsed (the database works meanwhile); the next flush (or finish) waits for it first, so at
 * most one batch is in flight and its failure is never lost.
 */
export class RecordingWriter {
  readonly id: string;
  private readonly segmenter: Segmenter;
  private readonly stats = new ChannelStatsCollector();
  private pending: RecordingSegment[] = [];
  private pendingBytes = 0;
  /** The INSERT of the previous batch; settles with its error rather than rejecting unheard. */
  private inflight: Promise<unknown> | null = null;
  private started = false;
  private frames = 0;
  private segments = 0;
  private lastT = 0;

  constructor(
    private readonly db: DbOrTx,
    private readonly meta: NewRecording,
    segmentOptions: SegmenterOptions = {},
  ) {
    this.id = meta.id ?? randomUUID();
    this.segmenter = new Segmenter({ deflate: nativeDeflate, ...segmentOptions });
  }

  get frameCount(): number {
    return this.frames;
  }

  private async begin(): Promise<void> {
    if (this.started) return;
    this.started = true;
    // The row must exist before its segments (foreign key); totals are filled in by finish().
    await this.db.insert(recording).values({
      id: this.id,
      workshopId: this.meta.workshopId,
      airframeId: this.meta.airframeId,
      name: this.meta.name,
      source: this.meta.source,
      status: "ready",
      durationMs: 0,
      frameCount: 0,
      segmentCount: 0,
      sizeBytes: this.meta.sizeBytes ?? 0,
      channels: this.meta.channels,
      channelStats: [],
      sampleRateHz: this.meta.sampleRateHz ?? null,
      notes: this.meta.notes ?? null,
      originalKey: this.meta.originalKey ?? null,
      createdById: this.meta.createdById ?? null,
    });
  }

  async push(frames: readonly Frame[]): Promise<void> {
    if (frames.length === 0) return;
    await this.begin();
    for (const frame of frames) {
      this.stats.add(frame);
      this.frames++;
      this.lastT = frame.t;
      for (const segment of this.segmenter.push(frame)) this.queue(segment);
    }
    if (this.flushDue) await this.flush();
  }

  private queue(segment: RecordingSegment): void {
    this.pending.push(segment);
    this.pendingBytes += segment.payload.length;
    if (this.pending.length >= BATCH_SEGMENTS || this.pendingBytes >= BATCH_BYTES) this.flushDue = true;
  }

  private flushDue = false;

  /** Waits for the batch in flight; throws its error, if any. */
  private async settle(): Promise<void> {
    const inflight = this.inflight;
    this.inflight = null;
    const outcome = await inflight;
    if (outcome instanceof Error) throw outcome;
  }

  private async flush(): Promise<void> {
    this.flushDue = false;
    if (this.pending.length === 0) return;
    const batch = this.pending;
    this.pending = [];
    this.pendingBytes = 0;
    await this.settle();
    const rows = batch.map((s) => ({
      recordingId: this.id,
      index: s.index,
      startMs: s.startMs,
      endMs: s.endMs,
      frameCount: s.frameCount,
      payload: Buffer.from(s.payload.buffer, s.payload.byteOffset, s.payload.byteLength),
    }));
    this.segments += rows.length;
    this.inflight = Promise.resolve(this.db.insert(recordingSegment).values(rows)).then(
      () => null,
      (error: unknown) => (error instanceof Error ? error : new Error(String(error))),
    );
  }

  /**
   * Writes the last segments and the totals. `durationMs` (from a file header) may extend the
   * recording past its last frame; `channels` replaces the list given at the start (a CSV import
   * learns its draft channels while reading).
   */
  async finish(
    extra: { durationMs?: number; channels?: ChannelDefinition[]; sizeBytes?: number; notes?: string | null; sampleRateHz?: number | null } = {},
  ): Promise<string> {
    await this.begin();
    for (const segment of this.segmenter.finish()) this.queue(segment);
    await this.flush();
    await this.settle();
    const channels = extra.channels ?? this.meta.channels;
    await this.db
      .update(recording)
      .set({
        durationMs: Math.max(this.lastT, extra.durationMs ?? 0),
        frameCount: this.frames,
        segmentCount: this.segments,
        channels,
        channelStats: this.stats.result(channels),
        ...(extra.sizeBytes !== undefined ? { sizeBytes: extra.sizeBytes } : {}),
        ...(extra.notes !== undefined ? { notes: extra.notes } : {}),
        ...(extra.sampleRateHz !== undefined ? { sampleRateHz: extra.sampleRateHz } : {}),
      })
      .where(eq(recording.id, this.id));
    return this.id;
  }
}
