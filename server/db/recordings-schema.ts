import { bigint, customType, doublePrecision, index, integer, jsonb, pgTable, text, timestamp, uniqueIndex } from "drizzle-orm/pg-core";
import type { ChannelDefinition } from "../../shared/recording/channels";
import type { RecordingChannelStats } from "../../shared/api/recordings";
import { organization, user } from "./auth-schema";

/**
 * Recordings (issue 3): airframes with their channel catalogues, recordings stored as
 * time-indexed segments, background import jobs and live captures. Every row carries its
 * workshop so every query can be scoped to it (non-members get 404, never another shop's data).
 */

/** PostgreSQL bytea as a Node Buffer: segments are deflated JSON (shared/recording/segments.ts). */
export const bytea = customType<{ data: Buffer; driverData: Buffer }>({
  dataType: () => "bytea",
});

export const airframe = pgTable(
  "airframe",
  {
    id: text("id").primaryKey(),
    workshopId: text("workshop_id")
      .notNull()
      .references(() => organization.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    description: text("description"),
    /**
     * The channel catalogue as one validated list: it is always read and replaced whole (the
     * catalogue table and its JSON import/export), and a few hundred channels fit one row.
     */
    channels: jsonb("channels").$type<ChannelDefinition[]>().notNull().default([]),
    createdAt: timestamp("created_at", { withTimezone: true }).defaultNow().notNull(),
    updatedAt: timestamp("updated_at", { withTimezone: true }).defaultNow().notNull(),
  },
  (t) => [index("airframe_workshop_idx").on(t.workshopId), uniqueIndex("airframe_workshop_name_uq").on(t.workshopId, t.name)],
);

export const recording = pgTable(
  "recording",
  {
    id: text("id").primaryKey(),
    workshopId: text("workshop_id")
      .notNull()
      .references(() => organization.id, { onDelete: "cascade" }),
    airframeId: text("airframe_id")
      .notNull()
      .references(() => airframe.id, { onDelete: "restrict" }),
    name: text("name").notNull(),
    /** file | csv | capture | scenario */
    source: text("source").notNull(),
    /** Always "ready" once visible: imports commit recording and segments in one transaction. */
    status: text("status").notNull().default("ready"),
    durationMs: bigint("duration_ms", { mode: "number" }).notNull(),
    frameCount: integer("frame_count").notNull(),
    segmentCount: integer("segment_count").notNull(),
    /** Bytes of the original upload (or of the generated file). */
    sizeBytes: bigint("size_bytes", { mode: "number" }).notNull(),
    /** The channels this recording carries, as in its file header (for export and typing values). */
    channels: jsonb("channels").$type<ChannelDefinition[]>().notNull(),
    /** Per-channel change counts and ranges, computed once while importing. */
    channelStats: jsonb("channel_stats").$type<RecordingChannelStats[]>().notNull(),
    sampleRateHz: doublePrecision("sample_rate_hz"),
    notes: text("notes"),
    /** Where the original file is kept through the storage driver; null when nothing was uploaded. */
    originalKey: text("original_key"),
    createdById: text("created_by_id").references(() => user.id, { onDelete: "set null" }),
    createdAt: timestamp("created_at", { withTimezone: true }).defaultNow().notNull(),
  },
  (t) => [index("recording_workshop_idx").on(t.workshopId, t.createdAt), index("recording_airframe_idx").on(t.airframeId)],
);

export const recordingSegment = pgTable(
  "recording_segment",
  {
    recordingId: text("recording_id")
      .notNull()
      .references(() => recording.id, { onDelete: "cascade" }),
    index: integer("index").notNull(),
    startMs: bigint("start_ms", { mode: "number" }).notNull(),
    endMs: bigint("end_ms", { mode: "number" }).notNull(),
    frameCount: integer("frame_count").notNull(),
    payload: bytea("payload").notNull(),
  },
  (t) => [
    uniqueIndex("recording_segment_index_uq").on(t.recordingId, t.index),
    // Seek: the last segment starting at or before t.
    index("recording_segment_time_idx").on(t.recordingId, t.startMs),
  ],
);

export const importJob = pgTable(
  "import_job",
  {
    id: text("id").primaryKey(),
    workshopId: text("workshop_id")
      .notNull()
      .references(() => organization.id, { onDelete: "cascade" }),
    airframeId: text("airframe_id")
      .notNull()
      .references(() => airframe.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    /** ppr | csv */
    format: text("format").notNull(),
    /** The upload's query options (CSV delimiter, decimal mark, drafts...), as validated. */
    options: jsonb("options").$type<Record<string, string>>().notNull(),
    storageKey: text("storage_key").notNull(),
    /** queued | running | done | failed */
    state: text("state").notNull().default("queued"),
    bytesRead: bigint("bytes_read", { mode: "number" }).notNull().default(0),
    bytesTotal: bigint("bytes_total", { mode: "number" }).notNull(),
    frames: integer("frames").notNull().default(0),
    errorMessage: text("error_message"),
    errorWhere: text("error_where"),
    /** Machine-readable reason (RecordingErrorCode), for clients that want to react to it. */
    errorCode: text("error_code"),
    recordingId: text("recording_id").references(() => recording.id, { onDelete: "set null" }),
    createdById: text("created_by_id").references(() => user.id, { onDelete: "set null" }),
    createdAt: timestamp("created_at", { withTimezone: true }).defaultNow().notNull(),
    updatedAt: timestamp("updated_at", { withTimezone: true }).defaultNow().notNull(),
  },
  (t) => [index("import_job_workshop_idx").on(t.workshopId, t.createdAt)],
);

/** Live captures: the listening itself lives in the server process; this row is its record. */
export const capture = pgTable(
  "capture",
  {
    id: text("id").primaryKey(),
    workshopId: text("workshop_id")
      .notNull()
      .references(() => organization.id, { onDelete: "cascade" }),
    airframeId: text("airframe_id")
      .notNull()
      .references(() => airframe.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    /** capturing | stopped | saved | failed */
    state: text("state").notNull(),
    udpPort: integer("udp_port"),
    /** SHA-256 of the capture token; the token itself is shown once. */
    tokenHash: text("token_hash").notNull(),
    received: integer("received").notNull().default(0),
    malformed: integer("malformed").notNull().default(0),
    outOfOrder: integer("out_of_order").notNull().default(0),
    duplicates: integer("duplicates").notNull().default(0),
    dropped: integer("dropped").notNull().default(0),
    lastError: text("last_error"),
    recordingId: text("recording_id").references(() => recording.id, { onDelete: "set null" }),
    createdById: text("created_by_id").references(() => user.id, { onDelete: "set null" }),
    startedAt: timestamp("started_at", { withTimezone: true }).defaultNow().notNull(),
    stoppedAt: timestamp("stopped_at", { withTimezone: true }),
    /** Which server process holds the live capture, and when it last said so (a dead holder's capture is interrupted). */
    heldBy: text("held_by"),
    aliveAt: timestamp("alive_at", { withTimezone: true }),
  },
  (t) => [index("capture_workshop_idx").on(t.workshopId, t.startedAt)],
);
