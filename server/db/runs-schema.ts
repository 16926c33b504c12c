import { bigint, doublePrecision, index, integer, jsonb, pgTable, primaryKey, text, timestamp, uniqueIndex } from "drizzle-orm/pg-core";
import type { RUN_STATES, RunLinkInput, StoredRunChecks } from "../../shared/api/runs";
import type { ElementStatus } from "../../shared/compare/types";
import type { LagSummary } from "../../shared/compare/statistics";
import type { Tolerances } from "../../shared/compare/types";
import type { Panel } from "../../shared/panel/schema";
import { organization, user } from "./auth-schema";
import { bytea, recording } from "./recordings-schema";

export interface RunPanelSnapshot {
  panelId: string;
  name: string;
  definition: Panel;
}

/** What the bench remembers of one link of a run between sessions: faults counted and gaps without data. */
export interface StoredLinkStatus {
  panelId: string;
  kind: RunLinkInput["kind"];
  faults: Record<string, number>;
  gaps: { fromMs: number; toMs: number }[];
}

/**
 * Runs (issues 5 and 6): one replay of a recording into one or more panels. The run row holds
 * the set-up and the latest summary; element results and mismatches are rewritten whole each
 * time the run is judged (at the end and on rejudge); the seen log keeps the raw reports.
 */
export const run = pgTable(
  "run",
  {
    id: text("id").primaryKey(),
    workshopId: text("workshop_id")
      .notNull()
      .references(() => organization.id, { onDelete: "cascade" }),
    /** Deleting a recording deletes its runs: a run cannot be judged without its recording. */
    recordingId: text("recording_id")
      .notNull()
      .references(() => recording.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    links: jsonb("links").$type<RunLinkInput[]>().notNull(),
    /** The panels' definitions as they were when the run was made: results and rejudging use these. */
    panels: jsonb("panels").$type<RunPanelSnapshot[]>().notNull(),
    speed: doublePrecision("speed").notNull(),
    /** Replay only this part of the recording; null: the whole. */
    segment: jsonb("segment").$type<{ fromMs: number; toMs: number } | null>(),
    tolerance: jsonb("tolerance").$type<Partial<Tolerances>>().notNull(),
    /** idle, ready, playing, paused, seeking, finished, failed, interrupted (shared/api/runs.ts). */
    state: text("state").$type<(typeof RUN_STATES)[number]>().notNull(),
    positionMs: bigint("position_ms", { mode: "number" }).notNull().default(0),
    durationMs: bigint("duration_ms", { mode: "number" }).notNull(),
    counts: jsonb("counts").$type<Record<ElementStatus, number>>().notNull(),
    mismatchCount: integer("mismatch_count").notNull().default(0),
    lag: jsonb("lag").$type<LagSummary>(),
    linkStatus: jsonb("link_status").$type<StoredLinkStatus[]>().notNull(),
    /** Backward seeks and loop restarts: reports of an earlier pass from `atMs` on no longer count. */
    cuts: jsonb("cuts").$type<{ epoch: number; atMs: number }[]>().notNull(),
    /** What the builder did beside the replay: set-up check overrides, input walk, observations (shared/api/runs.ts). */
    checks: jsonb("checks").$type<StoredRunChecks>().notNull().default({}),
    /** Which server process holds the run's session, and when it last said so (interrupted detection). */
    heldBy: text("held_by"),
    aliveAt: timestamp("alive_at", { withTimezone: true }),
    createdById: text("created_by_id").references(() => user.id, { onDelete: "set null" }),
    createdAt: timestamp("created_at", { withTimezone: true }).defaultNow().notNull(),
    startedAt: timestamp("started_at", { withTimezone: true }),
    finishedAt: timestamp("finished_at", { withTimezone: true }),
    judgedAt: timestamp("judged_at", { withTimezone: true }),
  },
  (t) => [index("run_workshop_idx").on(t.workshopId, t.createdAt), index("run_recording_idx").on(t.recordingId), index("run_state_idx").on(t.state)],
);

export const runElementResult = pgTable(
  "run_element_result",
  {
    runId: text("run_id")
      .notNull()
      .references(() => run.id, { onDelete: "cascade" }),
    panelId: text("panel_id").notNull(),
    elementId: text("element_id").notNull(),
    /** Position of the element in its panel's definition (report order). */
    ordinal: integer("ordinal").notNull(),
    label: text("label").notNull(),
    kind: text("kind").notNull(),
    status: text("status").$type<ElementStatus>().notNull(),
    mismatchCount: integer("mismatch_count").notNull(),
    lag: jsonb("lag").$type<LagSummary>().notNull(),
    noDataMs: doublePrecision("no_data_ms").notNull(),
    reports: integer("reports").notNull(),
  },
  (t) => [primaryKey({ columns: [t.runId, t.panelId, t.elementId] })],
);

/** Mismatch intervals, inserted in batches (server/bench/store.ts), never one insert per sample. */
export const mismatch = pgTable(
  "mismatch",
  {
    id: bigint("id", { mode: "number" }).primaryKey().generatedAlwaysAsIdentity(),
    runId: text("run_id")
      .notNull()
      .references(() => run.id, { onDelete: "cascade" }),
    panelId: text("panel_id").notNull(),
    elementId: text("element_id").notNull(),
    track: text("track").notNull(),
    kind: text("kind").notNull(),
    startMs: doublePrecision("start_ms").notNull(),
    endMs: doublePrecision("end_ms").notNull(),
    worstError: doublePrecision("worst_error").notNull(),
    expected: text("expected").notNull(),
    seen: text("seen").notNull(),
    atMs: doublePrecision("at_ms").notNull(),
  },
  (t) => [index("mismatch_run_idx").on(t.runId, t.startMs), index("mismatch_run_element_idx").on(t.runId, t.panelId, t.elementId)],
);

/**
 * The raw seen reports, per run and panel in chunks of a few seconds of recording time, encoded
 * and deflated (server/bench/seen-log.ts), so a run can be judged again without replaying.
 */
export const seenLog = pgTable(
  "seen_log",
  {
    runId: text("run_id")
      .notNull()
      .references(() => run.id, { onDelete: "cascade" }),
    panelId: text("panel_id").notNull(),
    chunk: integer("chunk").notNull(),
    /** The pass the reports belong to (a backward seek starts a new one). */
    epoch: integer("epoch").notNull(),
    fromMs: doublePrecision("from_ms").notNull(),
    toMs: doublePrecision("to_ms").notNull(),
    count: integer("count").notNull(),
    payload: bytea("payload").notNull(),
  },
  (t) => [primaryKey({ columns: [t.runId, t.panelId, t.chunk] })],
);

/** A read-only, expiring, revocable public link to one run's report. Only the token's SHA-256 is kept. */
export const shareLink = pgTable(
  "share_link",
  {
    id: text("id").primaryKey(),
    runId: text("run_id")
      .notNull()
      .references(() => run.id, { onDelete: "cascade" }),
    tokenHash: text("token_hash").notNull(),
    expiresAt: timestamp("expires_at", { withTimezone: true }).notNull(),
    revokedAt: timestamp("revoked_at", { withTimezone: true }),
    createdById: text("created_by_id").references(() => user.id, { onDelete: "set null" }),
    createdAt: timestamp("created_at", { withTimezone: true }).defaultNow().notNull(),
  },
  (t) => [uniqueIndex("share_link_token_uq").on(t.tokenHash), index("share_link_run_idx").on(t.runId, t.createdAt)],
);
