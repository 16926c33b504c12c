import { and, eq, inArray } from "drizzle-orm";
import { CSV_DELIMITER_BY_NAME } from "../../shared/api/recordings";
import type { ChannelDefinition } from "../../shared/recording/channels";
import { CsvImporter } from "../../shared/recording/csv-import";
import { describeWhere, RecordingError } from "../../shared/recording/errors";
import type { Frame } from "../../shared/recording/frames";
import { GzipInflater, looksGzipped } from "../../shared/recording/gzip";
import { RecordingParser } from "../../shared/recording/recording-file";
import type { Database } from "../db/client";
import { airframe, importJob } from "../db/schema";
import { addDraftChannels, checkAgainstCatalogue } from "../recordings/catalogue";
import { RecordingWriter } from "../recordings/writer";
import type { StorageDriver } from "../storage";

export interface ImportDeps {
  db: Database;
  storage: StorageDriver;
  maxBytes: number;
  /** How often progress is written to import_job (ms). */
  progressEveryMs?: number;
}

/** The job was cancelled (POST .../imports/:id/cancel) while this worker read it. */
class ImportCancelled extends Error {}

/** A source that turns pushed byte chunks into frames: the shared recording parser or CSV importer. */
interface FrameSource {
  push(chunk: Uint8Array): Frame[];
  end(): Frame[];
}

/**
 * Runs one queued import: streams the stored file through the shared parser (gzip detected by
 * its first bytes), segments it and writes recording plus segments in ONE transaction, so a
 * refusal anywhere leaves no recording and changes no other one. Progress (bytes, frames)
 * goes to import_job outside that transaction, every few hundred ms, so a reloaded page still
 * shows the bar. Bad input never throws out of here: it is recorded on the job with where and why.
 *
 * Cancelling: every progress write is conditional on the job still running, and "done" is
 * written INSIDE the transaction on the same condition. A cancel that lands first makes one of
 * them match no row: the transaction rolls back (no recording) and the stored file is deleted.
 * A cancel that lands after "done" finds no queued or running job and is refused.
 */
export async function runImport(deps: ImportDeps, importId: string): Promise<void> {
  const { db, storage } = deps;
  const [job] = await db.select().from(importJob).where(eq(importJob.id, importId));
  if (!job) return;
  // Claim it unless it ended meanwhile (done, failed, or cancelled: then only tidy the file).
  const [claimed] = await db
    .update(importJob)
    .set({ state: "running", bytesRead: 0, frames: 0, updatedAt: new Date() })
    .where(and(eq(importJob.id, importId), inArray(importJob.state, ["queued", "running"])))
    .returning({ id: importJob.id });
  if (!claimed) {
    if (job.state === "cancelled") await storage.delete(job.storageKey).catch(() => {});
    return;
  }
  const stillRunning = and(eq(importJob.id, importId), eq(importJob.state, "running"));
  /** Progress write; false when the job is no longer running (cancelled). A failed write is not a cancel. */
  const writeProgress = () =>
    db
      .update(importJob)
      .set({ bytesRead, frames, updatedAt: new Date() })
      .where(stillRunning)
      .returning({ id: importJob.id })
      .then(
        (rows) => rows.length > 0,
        (error: Error) => (console.error(`[import ${importId}] progress write failed:`, error.message), true),
      );
  let progress: Promise<boolean> | null = null;

  let bytesRead = 0;
  let lastProgress = Date.now();
  let frames = 0;
  const every = deps.progressEveryMs ?? 300;

  try {
    const [frame] = await db.select().from(airframe).where(eq(airframe.id, job.airframeId));
    if (!frame) throw new RecordingError("invalid_header", "the airframe chosen for this import no longer exists");
    const addDrafts = job.options.addDraftChannels === "true";
    await db.transaction(async (tx) => {
      let drafts: ChannelDefinition[] = [];
      let channels: ChannelDefinition[] = [];
      let headerDuration: number | undefined;
      let notes: string | null = null;
      let sampleRateHz: number | null = null;
      let source: FrameSource;
      let headerChecked = false;
      let csv: CsvImporter | null = null;
      let ppr: RecordingParser | null = null;

      if (job.format === "csv") {
        csv = new CsvImporter({
          delimiter: CSV_DELIMITER_BY_NAME[job.options.delimiter as keyof typeof CSV_DELIMITER_BY_NAME],
          decimalMark: job.options.decimalMark === "comma" ? "," : ".",
          channels: frame.channels,
          timeColumn: job.options.timeColumn,
          timeUnit: job.options.timeUnit as "ms" | "s" | undefined,
          unknownColumns: addDrafts ? "draft" : "reject",
          maxBytes: deps.maxBytes,
        });
        source = gunzipping(csv);
      } else {
        ppr = new RecordingParser({ maxBytes: deps.maxBytes, gzip: "auto" });
        const parser = ppr;
        source = { push: (c) => parser.push(c), end: () => parser.end() };
      }

      const writer = new RecordingWriter(tx, {
        workshopId: job.workshopId,
        airframeId: job.airframeId,
        name: job.name,
        source: job.format === "csv" ? "csv" : "file",
        channels: [],
        originalKey: job.storageKey,
        createdById: job.createdById,
        sizeBytes: job.bytesTotal,
      });

      const onFrames = async (out: Frame[]) => {
        if (ppr && !headerChecked && ppr.header) {
          // The header is known before the first frame: refuse a channel clash before any work.
          headerChecked = true;
          drafts = checkAgainstCatalogue(ppr.header.channels, frame.channels, addDrafts);
          channels = ppr.header.channels;
          headerDuration = ppr.header.durationMs;
          notes = ppr.header.notes ?? null;
          sampleRateHz = ppr.header.sampleRateHz ?? null;
        }
        await writer.push(out);
        frames += out.length;
        if (Date.now() - lastProgress >= every) {
          lastProgress = Date.now();
          // The previous write (300 ms ago) has long answered: a cancel is seen here without
          // the import ever waiting on a progress round trip.
          if (progress && !(await progress)) throw new ImportCancelled();
          progress = writeProgress();
        }
      };

      const stream = await storage.get(job.storageKey);
      for await (const chunk of stream as AsyncIterable<Buffer>) {
        bytesRead += chunk.length;
        await onFrames(source.push(chunk));
      }
      await onFrames(source.end());
      if (csv) {
        channels = csv.channels;
        drafts = csv.drafts;
      }
      await addDraftChannels(tx, job.airframeId, drafts);
      const draftNames = new Set(drafts.map((d) => d.name));
      const id = await writer.finish({
        durationMs: headerDuration,
        channels: channels.map((c) => (draftNames.has(c.name) ? { ...c, draft: true } : c)),
        notes,
        sampleRateHz,
      });
      // In the transaction: "done" and the recording commit together, or neither when cancelled.
      const [done] = await tx
        .update(importJob)
        .set({ state: "done", bytesRead, frames, recordingId: id, updatedAt: new Date() })
        .where(stillRunning)
        .returning({ id: importJob.id });
      if (!done) throw new ImportCancelled();
    });
    await progress;
  } catch (error) {
    await progress;
    if (error instanceof ImportCancelled) {
      // The cancel route deleted the file already; again here in case it ran on a dead worker's job.
      await storage.delete(job.storageKey).catch(() => {});
      return;
    }
    const refused = error instanceof RecordingError;
    if (!refused) console.error(`[import ${importId}] failed:`, error);
    await db
      .update(importJob)
      .set({
        state: "failed",
        bytesRead,
        frames,
        errorMessage: refused ? error.why : "The import failed on the server; it has been logged. Try again.",
        errorWhere: refused ? describeWhere(error.where) || null : null,
        errorCode: refused ? error.code : "internal",
        updatedAt: new Date(),
      })
      .where(stillRunning);
  }
}

/** The CSV importer takes text or bytes but not gzip; unpack in front of it when the file is gzipped. */
function gunzipping(csv: CsvImporter): FrameSource {
  let sniffed = false;
  let inflater: GzipInflater | null = null;
  let held: Frame[] = [];
  const take = () => {
    const out = held;
    held = [];
    return out;
  };
  return {
    push(chunk) {
      if (!sniffed) {
        sniffed = true;
        // A first chunk of one byte cannot be told apart; storage streams give far more.
        if (looksGzipped(chunk)) inflater = new GzipInflater((bytes) => held.push(...csv.push(bytes)));
      }
      if (inflater) {
        inflater.push(chunk);
        return take();
      }
      return csv.push(chunk);
    },
    end() {
      inflater?.end();
      held.push(...csv.end());
      return take();
    },
  };
}
