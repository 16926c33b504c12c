import { randomUUID } from "node:crypto";
import { PassThrough } from "node:stream";
import { pipeline } from "node:stream/promises";
import { Router, type Request, type Response } from "express";
import { and, desc, eq, inArray } from "drizzle-orm";
import { z } from "zod";
import {
  downloadQuery,
  fromScenarioBody,
  listRecordingsQuery,
  renameRecordingBody,
  seriesQuery,
  stateQuery,
  uploadQuery,
  type ImportJobView,
  type RecordingDetail,
  type RecordingSummary,
} from "../../shared/api/recordings";
import { entityId } from "../../shared/api/workshops";
import type { ChannelDefinition } from "../../shared/recording/channels";
import { RecordingError } from "../../shared/recording/errors";
import {
  RECORDING_FORMAT,
  RECORDING_VERSION,
  recordingLines,
  serializeFrame,
  serializeHeader,
  type RecordingHeader,
} from "../../shared/recording/recording-file";
import { generateScenario, ScenarioError } from "../../shared/recording/scenario";
import { utf8ByteLength } from "../../shared/recording/text-input";
import { airframe, importJob, recording, user } from "../db/schema";
import { requireActor, requireMembership, type Services } from "../http/context";
import { HttpError, forbidden, notFound } from "../http/errors";
import { parseBody, parseParams, parseQuery } from "../http/validate";
import { authorize } from "../policies/actor";
import { recordingPolicy } from "../policies/recording";
import { addDraftChannels, checkAgainstCatalogue } from "../recordings/catalogue";
import { csvFrameLine, csvHeaderLine } from "../recordings/csv-export";
import { framesOf, seriesOf, stateAtInstant } from "../recordings/read";
import { RecordingWriter } from "../recordings/writer";
import { StorageNotFound } from "../storage";
import { findAirframe } from "./airframes";

const workshopParams = z.object({ workshopId: entityId });
const recordingParams = workshopParams.extend({ recordingId: entityId });
const importParams = workshopParams.extend({ importId: entityId });

const summaryColumns = {
  id: recording.id,
  name: recording.name,
  airframeId: recording.airframeId,
  airframeName: airframe.name,
  source: recording.source,
  status: recording.status,
  durationMs: recording.durationMs,
  frameCount: recording.frameCount,
  channels: recording.channels,
  sizeBytes: recording.sizeBytes,
  createdBy: user.name,
  createdAt: recording.createdAt,
  originalKey: recording.originalKey,
};

type SummaryRow = {
  id: string;
  name: string;
  airframeId: string;
  airframeName: string;
  source: string;
  status: string;
  durationMs: number;
  frameCount: number;
  channels: ChannelDefinition[];
  sizeBytes: number;
  createdBy: string | null;
  createdAt: Date;
  originalKey: string | null;
};

function summaryOf(row: SummaryRow): RecordingSummary {
  return {
    id: row.id,
    name: row.name,
    airframeId: row.airframeId,
    airframeName: row.airframeName,
    source: row.source as RecordingSummary["source"],
    status: row.status as RecordingSummary["status"],
    durationMs: row.durationMs,
    frameCount: row.frameCount,
    channelCount: row.channels.length,
    frameRate: row.durationMs > 0 ? Math.round((row.frameCount / (row.durationMs / 1000)) * 1000) / 1000 : 0,
    sizeBytes: row.sizeBytes,
    createdBy: row.createdBy,
    createdAt: row.createdAt.toISOString(),
    hasOriginal: row.originalKey !== null,
  };
}

/** An import not (yet) a recording, as a row of the recordings table: importing, or failed with its reason. */
function importRowOf(row: typeof importJob.$inferSelect & { airframeName: string; createdBy: string | null }): RecordingSummary {
  const failed = row.state === "failed";
  return {
    id: row.id,
    importId: row.id,
    name: row.name,
    airframeId: row.airframeId,
    airframeName: row.airframeName,
    source: row.format === "csv" ? "csv" : "file",
    status: failed ? "failed" : "importing",
    durationMs: 0,
    frameCount: row.frames,
    channelCount: 0,
    frameRate: 0,
    sizeBytes: row.bytesTotal,
    createdBy: row.createdBy,
    createdAt: row.createdAt.toISOString(),
    failure: failed ? { message: row.errorMessage ?? "the import failed", where: row.errorWhere, code: row.errorCode } : null,
    hasOriginal: false,
  };
}

/** The stored upload's content type: what its first bytes and the chosen format say. */
function uploadContentType(firstBytes: Buffer, format: "ppr" | "csv"): string {
  if (firstBytes.length >= 2 && firstBytes[0] === 0x1f && firstBytes[1] === 0x8b) return "application/gzip";
  return format === "csv" ? "text/csv" : "application/x-ndjson";
}

/** A Content-Disposition header value for a download name (RFC 6266: plain fallback plus UTF-8 form). */
function attachment(fileName: string): string {
  const plain = fileName.replace(/[^A-Za-z0-9._-]+/g, "-").replace(/^-+|-+$/g, "") || "recording";
  return `attachment; filename="${plain}"; filename*=UTF-8''${encodeURIComponent(fileName)}`;
}

function importViewOf(row: typeof importJob.$inferSelect): ImportJobView {
  return {
    id: row.id,
    name: row.name,
    state: row.state as ImportJobView["state"],
    bytesRead: row.bytesRead,
    bytesTotal: row.bytesTotal,
    frames: row.frames,
    recordingId: row.recordingId,
    error: row.state === "failed" ? { message: row.errorMessage ?? "the import failed", where: row.errorWhere, code: row.errorCode ?? undefined } : null,
    createdAt: row.createdAt.toISOString(),
    airframeId: row.airframeId,
    format: row.format as "ppr" | "csv",
  };
}

class UploadTooLarge extends Error {}

/** Writes a line to the response, waiting when the client reads slower than we produce. */
async function writeLine(res: Response, line: string): Promise<void> {
  if (!res.write(line)) await new Promise<void>((resolve, reject) => {
    res.once("drain", resolve);
    res.once("close", () => reject(new Error("client went away")));
  });
}

/** Recordings, their imports and scenario generation, under /api/workshops/:workshopId. */
export function recordingsRouter(services: Services) {
  const { db, storage } = services;
  const router = Router();

  async function member(req: Request, workshopId: string) {
    return requireMembership(services, await requireActor(services, req), workshopId);
  }

  async function findRecording(workshopId: string, recordingId: string) {
    const [row] = await db
      .select({ ...summaryColumns, notes: recording.notes, channelStats: recording.channelStats, originalKey: recording.originalKey, sampleRateHz: recording.sampleRateHz })
      .from(recording)
      .innerJoin(airframe, eq(airframe.id, recording.airframeId))
      .leftJoin(user, eq(user.id, recording.createdById))
      .where(and(eq(recording.id, recordingId), eq(recording.workshopId, workshopId)));
    if (!row) throw notFound("No such recording in this workshop.");
    return row;
  }

  function detailOf(row: Awaited<ReturnType<typeof findRecording>>): RecordingDetail {
    return { ...summaryOf(row), channels: row.channelStats, notes: row.notes };
  }

  router.get("/:workshopId/recordings", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    authorize(recordingPolicy.read(await member(req, workshopId)), forbidden);
    const query = parseQuery(req, listRecordingsQuery);
    const where = [eq(recording.workshopId, workshopId)];
    if (query.airframeId) where.push(eq(recording.airframeId, query.airframeId));
    if (query.source) where.push(eq(recording.source, query.source));
    const rows = await db
      .select(summaryColumns)
      .from(recording)
      .innerJoin(airframe, eq(airframe.id, recording.airframeId))
      .leftJoin(user, eq(user.id, recording.createdById))
      .where(and(...where))
      .orderBy(desc(recording.createdAt));
    const summaries = rows.map(summaryOf);
    if (query.withImports === "true" && query.source !== "capture" && query.source !== "scenario") {
      const jobWhere = [eq(importJob.workshopId, workshopId), inArray(importJob.state, ["queued", "running", "failed"])];
      if (query.airframeId) jobWhere.push(eq(importJob.airframeId, query.airframeId));
      if (query.source) jobWhere.push(eq(importJob.format, query.source === "csv" ? "csv" : "ppr"));
      const jobs = await db
        .select({ job: importJob, airframeName: airframe.name, createdBy: user.name })
        .from(importJob)
        .innerJoin(airframe, eq(airframe.id, importJob.airframeId))
        .leftJoin(user, eq(user.id, importJob.createdById))
        .where(and(...jobWhere))
        .orderBy(desc(importJob.createdAt))
        .limit(100);
      summaries.push(...jobs.map((j) => importRowOf({ ...j.job, airframeName: j.airframeName, createdBy: j.createdBy })));
      summaries.sort((a, b) => b.createdAt.localeCompare(a.createdAt));
    }
    res.json(summaries);
  });

  /**
   * The upload streams to storage while it arrives (never whole in memory), counted against the
   * size limit, then an import job is queued. 202 with the job: poll GET /imports/:id.
   */
  router.post("/:workshopId/recordings/uploads", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    const actor = await requireActor(services, req);
    authorize(recordingPolicy.create(await requireMembership(services, actor, workshopId)), forbidden);
    const query = parseQuery(req, uploadQuery);
    await findAirframe(db, workshopId, query.airframeId);
    if (req.is("application/json") || req.is("application/x-www-form-urlencoded") || req.is("multipart/form-data")) {
      throw new HttpError("bad_request", "Send the file's bytes as the body with Content-Type: application/octet-stream.");
    }
    const max = services.maxUploadBytes;
    const id = randomUUID();
    const key = `workshops/${workshopId}/uploads/${id}.${query.format}`;
    const body = new PassThrough({ highWaterMark: 1024 * 1024 });
    // The driver may not be listening yet when the limit trips; `over` below decides the answer.
    body.on("error", () => {});
    let received = 0;
    let over = false;
    let ended = false;
    let firstBytes = Buffer.alloc(0);
    const requestDone = new Promise<void>((resolve) => {
      req.on("end", () => {
        ended = true;
        resolve();
      });
      req.on("close", () => resolve());
    });
    req.on("data", (chunk: Buffer) => {
      if (over) {
        // Keep reading (and discarding) so the client gets our answer instead of a reset,
        // but not without bound.
        if (received > max * 2 + 64 * 1024 * 1024) req.socket.destroy();
        received += chunk.length;
        return;
      }
      if (firstBytes.length < 2) firstBytes = Buffer.concat([firstBytes, chunk.subarray(0, 2)]);
      received += chunk.length;
      if (received > max) {
        over = true;
        body.destroy(new UploadTooLarge());
        return;
      }
      if (!body.write(chunk)) {
        req.pause();
        body.once("drain", () => req.resume());
      }
    });
    req.on("end", () => body.end());
    req.on("close", () => {
      if (!ended && !over) body.destroy(new Error("the upload was interrupted"));
    });
    let bytes = 0;
    try {
      // An upload the client abandons (cancel, closed tab) ends here: `close` without `end`
      // destroys `body`, put() rejects, and the partial file is deleted below. No job is made.
      ({ bytes } = await storage.put(key, body, "application/octet-stream"));
      if (over) throw new UploadTooLarge();
    } catch (error) {
      await storage.delete(key).catch(() => {});
      if (over) {
        await requestDone;
        res.setHeader("Connection", "close");
        throw new HttpError("too_large", `The file is over the size limit of ${max} bytes.`, [
          { path: "body", message: `byte ${max + 1}: the file is over the size limit of ${max} bytes` },
        ]);
      }
      throw error;
    }
    if (bytes === 0) {
      await storage.delete(key).catch(() => {});
      throw new HttpError("validation_failed", "body: the file is empty", [{ path: "body", message: "the file is empty" }]);
    }
    const options: Record<string, string> = {};
    for (const k of ["delimiter", "decimalMark", "timeColumn", "timeUnit", "addDraftChannels", "fileName"] as const) {
      if (query[k] !== undefined) options[k] = query[k]!;
    }
    // Kept for GET .../original: the file goes back with the type it was sent as.
    options.contentType = uploadContentType(firstBytes, query.format);
    const [row] = await db
      .insert(importJob)
      .values({
        id,
        workshopId,
        airframeId: query.airframeId,
        name: query.name,
        format: query.format,
        options,
        storageKey: key,
        state: "queued",
        bytesTotal: bytes,
        createdById: actor.userId,
      })
      .returning();
    try {
      await services.jobs.enqueueImport(id);
    } catch (error) {
      await db
        .update(importJob)
        .set({ state: "failed", errorMessage: "The import could not be queued; try again.", errorCode: "internal" })
        .where(eq(importJob.id, id));
      throw error;
    }
    res.status(202).json(importViewOf(row));
  });

  router.get("/:workshopId/imports", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    authorize(recordingPolicy.read(await member(req, workshopId)), forbidden);
    const rows = await db.select().from(importJob).where(eq(importJob.workshopId, workshopId)).orderBy(desc(importJob.createdAt)).limit(100);
    res.json(rows.map(importViewOf));
  });

  router.get("/:workshopId/imports/:importId", async (req, res) => {
    const { workshopId, importId } = parseParams(req, importParams);
    authorize(recordingPolicy.read(await member(req, workshopId)), forbidden);
    const [row] = await db.select().from(importJob).where(and(eq(importJob.id, importId), eq(importJob.workshopId, workshopId)));
    if (!row) throw notFound("No such import in this workshop.");
    res.json(importViewOf(row));
  });

  /**
   * Cancels a queued or running import: the job is marked cancelled at once (one conditional
   * UPDATE, so it races safely with the worker finishing), the stored file is deleted, and a
   * running worker notices at its next progress write and rolls its transaction back
   * (server/jobs/import-recording.ts). A job that already finished answers 409.
   */
  router.post("/:workshopId/imports/:importId/cancel", async (req, res) => {
    const { workshopId, importId } = parseParams(req, importParams);
    authorize(recordingPolicy.create(await member(req, workshopId)), forbidden);
    const [row] = await db.select().from(importJob).where(and(eq(importJob.id, importId), eq(importJob.workshopId, workshopId)));
    if (!row) throw notFound("No such import in this workshop.");
    const [cancelled] = await db
      .update(importJob)
      .set({ state: "cancelled", errorMessage: "cancelled by a builder; nothing was kept", errorCode: "cancelled", updatedAt: new Date() })
      .where(and(eq(importJob.id, importId), inArray(importJob.state, ["queued", "running"])))
      .returning();
    if (!cancelled) {
      const [now] = await db.select({ state: importJob.state }).from(importJob).where(eq(importJob.id, importId));
      throw new HttpError("conflict", `This import has already ended (${now?.state ?? row.state}); there is nothing to cancel.`);
    }
    await storage.delete(row.storageKey).catch((e) => console.error("[storage] delete failed:", e));
    res.json(importViewOf(cancelled));
  });

  /** Generates deterministically from the scenario and stores the result as a recording. */
  router.post("/:workshopId/recordings/from-scenario", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    const actor = await requireActor(services, req);
    authorize(recordingPolicy.create(await requireMembership(services, actor, workshopId)), forbidden);
    const body = parseBody(req, fromScenarioBody);
    const frame = await findAirframe(db, workshopId, body.airframeId);
    const recordingId = await storeScenario(services, {
      workshopId,
      airframeId: frame.id,
      catalogue: frame.channels,
      name: body.name,
      scenario: body.scenario,
      createdById: actor.userId,
    });
    res.status(201).json(detailOf(await findRecording(workshopId, recordingId)));
  });

  router.get("/:workshopId/recordings/:recordingId", async (req, res) => {
    const { workshopId, recordingId } = parseParams(req, recordingParams);
    authorize(recordingPolicy.read(await member(req, workshopId)), forbidden);
    res.json(detailOf(await findRecording(workshopId, recordingId)));
  });

  router.get("/:workshopId/recordings/:recordingId/series", async (req, res) => {
    const { workshopId, recordingId } = parseParams(req, recordingParams);
    authorize(recordingPolicy.read(await member(req, workshopId)), forbidden);
    const query = parseQuery(req, seriesQuery);
    const row = await findRecording(workshopId, recordingId);
    const byName = new Map(row.channels.map((c) => [c.name, c]));
    const chosen = query.channels.map((name, i) => {
      const channel = byName.get(name);
      if (!channel) {
        throw new HttpError("validation_failed", `query.channels: "${name}" is not a channel of this recording`, [
          { path: `query.channels.${i}`, message: `"${name}" is not a channel of this recording` },
        ]);
      }
      return channel;
    });
    const fromMs = query.fromMs ?? 0;
    const toMs = query.toMs ?? row.durationMs;
    if (toMs < fromMs) {
      throw new HttpError("validation_failed", "query.toMs: must not be before fromMs", [{ path: "query.toMs", message: "must not be before fromMs" }]);
    }
    res.json(await seriesOf(db, recordingId, chosen, fromMs, toMs, query.maxPoints));
  });

  router.get("/:workshopId/recordings/:recordingId/state", async (req, res) => {
    const { workshopId, recordingId } = parseParams(req, recordingParams);
    authorize(recordingPolicy.read(await member(req, workshopId)), forbidden);
    const { t } = parseQuery(req, stateQuery);
    await findRecording(workshopId, recordingId);
    const { state } = await stateAtInstant(db, recordingId, t);
    res.json({ t, values: { ...state } });
  });

  /** The originally uploaded file, streamed from the storage driver as it was sent. */
  router.get("/:workshopId/recordings/:recordingId/original", async (req, res) => {
    const { workshopId, recordingId } = parseParams(req, recordingParams);
    authorize(recordingPolicy.read(await member(req, workshopId)), forbidden);
    const row = await findRecording(workshopId, recordingId);
    if (!row.originalKey) throw notFound("This recording was not uploaded (it was captured or generated); there is no original file.");
    const [job] = await db
      .select({ options: importJob.options, format: importJob.format })
      .from(importJob)
      .where(and(eq(importJob.recordingId, recordingId), eq(importJob.workshopId, workshopId)))
      .limit(1);
    let stream;
    try {
      stream = await storage.get(row.originalKey);
    } catch (error) {
      if (error instanceof StorageNotFound) throw notFound("The original file is no longer in storage.");
      throw error;
    }
    const format = job?.format === "csv" || row.source === "csv" ? "csv" : "ppr";
    const contentType = job?.options.contentType ?? (format === "csv" ? "text/csv" : "application/x-ndjson");
    const fallbackName = `${row.name}.${format === "csv" ? "csv" : "ppr.jsonl"}${contentType === "application/gzip" ? ".gz" : ""}`;
    const size = await storage.size(row.originalKey);
    res.setHeader("Content-Type", contentType);
    res.setHeader("Content-Disposition", attachment(job?.options.fileName ?? fallbackName));
    if (size !== null) res.setHeader("Content-Length", String(size));
    // A client that goes away mid-download ends the pipeline; the headers are gone, nothing to answer.
    await pipeline(stream, res).catch((error: NodeJS.ErrnoException) => {
      if (error.code !== "ERR_STREAM_PREMATURE_CLOSE") console.error("[recordings] original download failed:", error.message);
    });
  });

  router.get("/:workshopId/recordings/:recordingId/download", async (req, res) => {
    const { workshopId, recordingId } = parseParams(req, recordingParams);
    authorize(recordingPolicy.read(await member(req, workshopId)), forbidden);
    const { format } = parseQuery(req, downloadQuery);
    const row = await findRecording(workshopId, recordingId);
    const base = row.name.replace(/[^A-Za-z0-9._-]+/g, "-").replace(/^-+|-+$/g, "") || "recording";
    res.setHeader("Content-Disposition", `attachment; filename="${base}.${format === "csv" ? "csv" : "ppr.jsonl"}"`);
    res.type(format === "csv" ? "text/csv" : "application/x-ndjson");
    if (format === "csv") await writeLine(res, csvHeaderLine(row.channels));
    else {
      const header: RecordingHeader = {
        format: RECORDING_FORMAT,
        version: RECORDING_VERSION,
        airframe: row.airframeName.slice(0, 120),
        channels: row.channels,
        source: row.source as RecordingHeader["source"],
        durationMs: row.durationMs,
        createdAt: row.createdAt.toISOString(),
        ...(row.notes ? { notes: row.notes.slice(0, 10_000) } : {}),
        ...(row.sampleRateHz ? { sampleRateHz: row.sampleRateHz } : {}),
      };
      await writeLine(res, `${serializeHeader(header)}\n`);
    }
    for await (const frames of framesOf(db, recordingId)) {
      let chunk = "";
      for (const frame of frames) chunk += format === "csv" ? csvFrameLine(row.channels, frame) : `${serializeFrame(frame)}\n`;
      await writeLine(res, chunk);
    }
    res.end();
  });

  router.patch("/:workshopId/recordings/:recordingId", async (req, res) => {
    const { workshopId, recordingId } = parseParams(req, recordingParams);
    authorize(recordingPolicy.update(await member(req, workshopId)), forbidden);
    const body = parseBody(req, renameRecordingBody);
    await findRecording(workshopId, recordingId);
    await db.update(recording).set({ name: body.name }).where(and(eq(recording.id, recordingId), eq(recording.workshopId, workshopId)));
    res.json(detailOf(await findRecording(workshopId, recordingId)));
  });

  router.delete("/:workshopId/recordings/:recordingId", async (req, res) => {
    const { workshopId, recordingId } = parseParams(req, recordingParams);
    authorize(recordingPolicy.remove(await member(req, workshopId)), forbidden);
    const row = await findRecording(workshopId, recordingId);
    // Segments go with the row (on delete cascade); the kept original goes after the commit.
    await db.delete(recording).where(and(eq(recording.id, recordingId), eq(recording.workshopId, workshopId)));
    if (row.originalKey) await storage.delete(row.originalKey).catch((e) => console.error("[storage] delete failed:", e));
    res.status(204).end();
  });

  return router;
}

/**
 * Generates a scenario and stores it as a recording with source "scenario". Scenario channels
 * missing from the airframe's catalogue are added as drafts; a kind clash is refused.
 * Shared by the route and the demo seed.
 */
export async function storeScenario(
  services: Pick<Services, "db">,
  input: { workshopId: string; airframeId: string; catalogue: ChannelDefinition[]; name: string; scenario: unknown; createdById: string | null },
): Promise<string> {
  let generated;
  try {
    generated = generateScenario(input.scenario);
  } catch (error) {
    if (error instanceof ScenarioError) {
      const issues = error.issues.map((i) => ({ path: i.path ? `body.scenario.${i.path}` : "body.scenario", message: i.message }));
      throw new HttpError("validation_failed", `${issues[0].path}: ${issues[0].message}`, issues);
    }
    throw error;
  }
  let drafts: ChannelDefinition[];
  try {
    drafts = checkAgainstCatalogue(generated.header.channels, input.catalogue, true);
  } catch (error) {
    if (error instanceof RecordingError) {
      const path = `body.scenario.${error.where.field ?? "channels"}`;
      throw new HttpError("validation_failed", `${path}: ${error.why}`, [{ path, message: error.why }]);
    }
    throw error;
  }
  let sizeBytes = 0;
  for (const line of recordingLines(generated.header, generated.frames)) sizeBytes += utf8ByteLength(line);
  const draftNames = new Set(drafts.map((d) => d.name));
  const channels = generated.header.channels.map((c) => (draftNames.has(c.name) ? { ...c, draft: true } : c));
  return services.db.transaction(async (tx) => {
    const writer = new RecordingWriter(tx, {
      workshopId: input.workshopId,
      airframeId: input.airframeId,
      name: input.name,
      source: "scenario",
      channels,
      notes: generated.header.notes ?? null,
      sampleRateHz: generated.header.sampleRateHz ?? null,
      createdById: input.createdById,
      sizeBytes,
    });
    for (let i = 0; i < generated.frames.length; i += 2000) await writer.push(generated.frames.slice(i, i + 2000));
    await addDraftChannels(tx, input.airframeId, drafts);
    return writer.finish({ durationMs: generated.header.durationMs });
  });
}

