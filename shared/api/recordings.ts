import { z } from "zod";
import { channelDefinition, channelList } from "../recording/channels";
import { CSV_DELIMITERS } from "../recording/csv-import";
import { entityId } from "./workshops";

/**
 * The recordings API contract (issue 3), shared by the server's routes and the client's
 * queries. All routes live under /api/workshops/:workshopId. Viewers read; builders and
 * owners change (ability "bench.write").
 */

// ---- airframes and their channel catalogues ----------------------------------------------

export const airframeName = z.string().trim().min(1, "must not be empty").max(80, "must be at most 80 characters");

/** POST /airframes */
export const createAirframeBody = z
  .object({ name: airframeName, description: z.string().max(500).optional() })
  .strict();

/** GET /airframes (list) */
export const airframeSummary = z.object({
  id: z.string(),
  name: z.string(),
  description: z.string().nullable(),
  channelCount: z.number().int(),
  draftChannelCount: z.number().int(),
  recordingCount: z.number().int(),
});
export type AirframeSummary = z.infer<typeof airframeSummary>;

/** GET /airframes/:airframeId, and GET /airframes/:airframeId/channels.json (download, same `channels`) */
export const airframeDetail = airframeSummary.extend({ channels: z.array(channelDefinition) });
export type AirframeDetail = z.infer<typeof airframeDetail>;

/** PUT /airframes/:airframeId/channels: replaces the catalogue (also how a catalogue JSON is imported). */
export const replaceChannelsBody = z.object({ channels: channelList }).strict();

// ---- recordings ----------------------------------------------------------------------------

export const RECORDING_SOURCES = ["file", "csv", "capture", "scenario"] as const;
export const RECORDING_STATUSES = ["importing", "ready", "failed"] as const;

export const recordingSummary = z.object({
  id: z.string(),
  name: z.string(),
  airframeId: z.string(),
  airframeName: z.string(),
  source: z.enum(RECORDING_SOURCES),
  status: z.enum(RECORDING_STATUSES),
  durationMs: z.number().int(),
  frameCount: z.number().int(),
  channelCount: z.number().int(),
  /** Frames per second over the whole recording. */
  frameRate: z.number(),
  /** Bytes of the original upload (or of the generated file). */
  sizeBytes: z.number().int(),
  createdBy: z.string().nullable(),
  createdAt: z.string(),
  /**
   * Additive. Rows of imports (status importing or failed, only with `withImports=true`): the
   * import job's id, which is also the row's `id`; such a row is not a recording to open.
   */
  importId: z.string().optional(),
  /** Additive. A failed import's reason: why, and where (line or row, column, channel). */
  failure: z.object({ message: z.string(), where: z.string().nullable(), code: z.string().nullable() }).nullable().optional(),
  /** Additive. True when the originally uploaded file is kept (GET .../original). */
  hasOriginal: z.boolean().optional(),
});
export type RecordingSummary = z.infer<typeof recordingSummary>;

/**
 * GET /recordings?airframeId=&source=&withImports=
 * `withImports=true` adds the imports still queued or running (status "importing") and the
 * failed ones (status "failed", with `failure`) as rows, newest first with the recordings.
 */
export const listRecordingsQuery = z
  .object({
    airframeId: entityId.optional(),
    source: z.enum(RECORDING_SOURCES).optional(),
    withImports: z.enum(["true", "false"], { error: 'must be "true" or "false"' }).optional(),
  })
  .strict();

export const recordingChannelStats = z.object({
  name: z.string(),
  kind: z.enum(["number", "boolean", "enum", "text"]),
  unit: z.string().nullable(),
  /** How many frames changed this channel. */
  changes: z.number().int(),
  /** Numbers: lowest and highest value seen; null for other kinds or when never set. */
  min: z.number().nullable(),
  max: z.number().nullable(),
  /** Booleans, enums and texts: the distinct values seen (at most 50). */
  distinct: z.array(z.union([z.string(), z.boolean()])).nullable(),
  /**
   * Additive. Enums: every named value of the channel, in its order, with how many frames set
   * it (0: never occurs). Null for other kinds; absent on recordings stored before it existed.
   */
  valueCounts: z.array(z.object({ value: z.string(), count: z.number().int() })).nullable().optional(),
});
export type RecordingChannelStats = z.infer<typeof recordingChannelStats>;

/** GET /recordings/:recordingId */
export const recordingDetail = recordingSummary.extend({
  channels: z.array(recordingChannelStats),
  notes: z.string().nullable(),
});
export type RecordingDetail = z.infer<typeof recordingDetail>;

/** PATCH /recordings/:recordingId */
export const renameRecordingBody = z.object({ name: z.string().trim().min(1).max(120) }).strict();

/** GET /recordings/:recordingId/series?channels=a,b&fromMs=&toMs=&maxPoints= */
export const seriesQuery = z
  .object({
    channels: z
      .string()
      .min(1, "name at least one channel")
      .transform((s) => s.split(",").filter(Boolean))
      .pipe(z.array(z.string().max(80)).min(1).max(16, "at most 16 channels at once")),
    fromMs: z.coerce.number().int().min(0).optional(),
    toMs: z.coerce.number().int().min(0).optional(),
    maxPoints: z.coerce.number().int().min(10).max(20_000).default(2_000),
  })
  .strict();

/** Step series: value holds from t[i] until t[i+1]. Booleans as 0/1, enums as their index, text as null. */
export const seriesView = z.object({
  fromMs: z.number(),
  toMs: z.number(),
  series: z.record(z.string(), z.object({ t: z.array(z.number()), v: z.array(z.number().nullable()) })),
});
export type SeriesView = z.infer<typeof seriesView>;

/** GET /recordings/:recordingId/state?t= : every channel's value at one instant (one segment read). */
export const stateQuery = z.object({ t: z.coerce.number().int().min(0) }).strict();
export const stateView = z.object({ t: z.number(), values: z.record(z.string(), z.union([z.number(), z.boolean(), z.string()])) });

/**
 * GET /recordings/:recordingId/original: the file as it was uploaded, byte for byte, with its
 * own name (when the upload gave one) and a content type from its format (gzip when packed).
 * 404 when nothing was uploaded (scenarios, captures).
 */

/** GET /recordings/:recordingId/download?format=ppr|csv */
export const downloadQuery = z.object({ format: z.enum(["ppr", "csv"]).default("ppr") }).strict();

// ---- imports (uploads run as background jobs) ------------------------------------------------

/**
 * POST /recordings/uploads?name=&airframeId=&format=ppr|csv[&csv options]
 * Body: the raw file bytes (Content-Type: application/octet-stream; gzip accepted).
 * Answers 202 with an importJob; the file is kept through the storage driver.
 */
export const uploadQuery = z
  .object({
    name: z.string().trim().min(1).max(120),
    airframeId: entityId,
    format: z.enum(["ppr", "csv"]),
    delimiter: z.enum(["comma", "semicolon", "tab", "pipe"]).optional(),
    decimalMark: z.enum(["point", "comma"]).optional(),
    timeColumn: z.string().max(80).optional(),
    timeUnit: z.enum(["ms", "s"]).optional(),
    /** Add channels missing from the catalogue as drafts instead of refusing them. */
    addDraftChannels: z.enum(["true", "false"]).optional(),
    /** Additive: the uploaded file's own name, given back when the original is downloaded. */
    fileName: z
      .string()
      .min(1, "must not be empty")
      .max(255, "must be at most 255 characters")
      .refine((n) => !/[\/\\\u0000-\u001f\u007f"]/.test(n), "must be a bare file name: no folders, quotes or control characters")
      .optional(),
  })
  .strict()
  .superRefine((q, ctx) => {
    if (q.format === "csv" && (!q.delimiter || !q.decimalMark)) {
      ctx.addIssue({ code: "custom", path: ["delimiter"], message: "a CSV import needs delimiter and decimalMark chosen explicitly" });
    }
  });
export const CSV_DELIMITER_BY_NAME = { comma: CSV_DELIMITERS[0], semicolon: CSV_DELIMITERS[1], tab: CSV_DELIMITERS[2], pipe: CSV_DELIMITERS[3] } as const;

/** `cancelled`: stopped by a builder (POST /imports/:id/cancel); no recording, the stored file deleted. */
export const IMPORT_STATES = ["queued", "running", "done", "failed", "cancelled"] as const;

/** GET /imports/:importId (poll it; survives a page reload) */
export const importJobView = z.object({
  id: z.string(),
  name: z.string(),
  state: z.enum(IMPORT_STATES),
  bytesRead: z.number().int(),
  bytesTotal: z.number().int(),
  frames: z.number().int(),
  recordingId: z.string().nullable(),
  /** On failure: why, and where (line or row, column, channel). */
  error: z
    .object({
      message: z.string(),
      where: z.string().nullable(),
      /** Additive: the machine-readable reason (shared/recording/errors.ts RecordingErrorCode, or "internal"). */
      code: z.string().optional(),
    })
    .nullable(),
  createdAt: z.string(),
  /** Additive: the airframe and format of the import. */
  airframeId: z.string().optional(),
  format: z.enum(["ppr", "csv"]).optional(),
});
export type ImportJobView = z.infer<typeof importJobView>;

/** GET /imports: this workshop's recent imports, newest first. */

/**
 * POST /imports/:importId/cancel (builders): a queued or running import stops; nothing is kept.
 * 409 when it has already finished (done, failed or cancelled).
 */

// ---- scenarios ------------------------------------------------------------------------------

/** POST /recordings/from-scenario: generates deterministically (shared/recording/scenario). */
export const fromScenarioBody = z
  .object({ name: z.string().trim().min(1).max(120), airframeId: entityId, scenario: z.unknown() })
  .strict();

// ---- live capture ---------------------------------------------------------------------------

/** POST /captures: start listening. The UDP port is the bench's (one per capture), or 0 for any free port. */
export const startCaptureBody = z
  .object({ name: z.string().trim().min(1).max(120), airframeId: entityId, udpPort: z.number().int().min(0).max(65535).optional() })
  .strict();

/**
 * `interrupted`: the server process holding the capture stopped without saving it (it no longer
 * stamps the row); the counters are those of its last stamp and what arrived was lost.
 */
export const CAPTURE_STATES = ["capturing", "stopped", "saved", "failed", "interrupted"] as const;

export const captureView = z.object({
  id: z.string(),
  name: z.string(),
  state: z.enum(CAPTURE_STATES),
  udpPort: z.number().int().nullable(),
  /** WebSocket path for exporters that prefer it: same JSON messages as the datagrams. */
  webSocketPath: z.string(),
  received: z.number().int(),
  malformed: z.number().int(),
  outOfOrder: z.number().int(),
  duplicates: z.number().int(),
  lastError: z.string().nullable(),
  startedAt: z.string(),
  /** The latest value of every channel seen so far. */
  latest: z.record(z.string(), z.union([z.number(), z.boolean(), z.string()])),
  recordingId: z.string().nullable(),
  // ---- additive (server side of issue 3) ----
  /** Messages not recorded: arrived too late to place, or the capture was full. */
  dropped: z.number().int().optional(),
  airframeId: z.string().optional(),
  /** Frames kept so far (while capturing). */
  frames: z.number().int().optional(),
  /**
   * Only in the answer to POST /captures, shown once: exporters send it in every UDP message's
   * `token` field, or as `?token=` on the WebSocket URL (docs/capture.md).
   */
  token: z.string().optional(),
  /** Additive: when listening ended (stopped, saved, failed or found interrupted). */
  stoppedAt: z.string().nullable().optional(),
});
export type CaptureView = z.infer<typeof captureView>;

/** GET /captures: this workshop's captures, newest first (additive). */
export const captureList = z.array(captureView);
