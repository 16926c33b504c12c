import { z } from "zod";
import { ELEMENT_STATUSES, MISMATCH_KINDS } from "../compare/types";
import { faultList } from "../virtual/faults";
import { entityId } from "./workshops";

/**
 * The runs API contract (issues 5 and 6): one replay of a recording into one or more panels,
 * judged live, stored, exported and shared. Routes under /api/workshops/:workshopId unless
 * said otherwise; viewers read, builders and owners change ("bench.write").
 */

export const LINK_KINDS = ["virtual", "network", "serial", "rs485"] as const;

/** How one panel of a run is connected. */
export const runLinkInput = z.discriminatedUnion("kind", [
  /** The browser's virtual panel (or the device emulator) joins over WebSocket; faults make it misbehave on purpose. */
  z.object({ kind: z.literal("virtual"), panelId: entityId, faults: faultList.default([]) }).strict(),
  /** A board on the network connects to the WebSocket with one of the panel's device tokens. */
  z.object({ kind: z.literal("network"), panelId: entityId }).strict(),
  /** A board on a serial port (USB), one device, direct link. */
  z.object({ kind: z.literal("serial"), panelId: entityId, path: z.string().min(1).max(200), baud: z.number().int().min(1200).max(2_000_000).default(115_200) }).strict(),
  /** A board at an address on an RS-485 bus behind a serial port; several panels may share one path. */
  z
    .object({ kind: z.literal("rs485"), panelId: entityId, path: z.string().min(1).max(200), baud: z.number().int().min(1200).max(2_000_000).default(115_200), address: z.number().int().min(1).max(247) })
    .strict(),
]);
export type RunLinkInput = z.infer<typeof runLinkInput>;

/** POST /runs */
export const createRunBody = z
  .object({
    name: z.string().trim().min(1).max(120).optional(),
    recordingId: entityId,
    links: z.array(runLinkInput).min(1, "a run needs at least one panel").max(32),
    speed: z.number().min(0.1).max(16).default(1),
    /** Replay only this part of the recording. */
    segment: z.object({ fromMs: z.number().int().min(0), toMs: z.number().int().min(1) }).strict().optional(),
    /** Tolerance overrides for the whole run (otherwise each element's own). */
    tolerance: z
      .object({ degrees: z.number().positive().max(90).optional(), level: z.number().int().min(0).max(255).optional(), period: z.number().min(0).max(1).optional(), lagBudgetMs: z.number().int().min(0).max(60_000).optional() })
      .strict()
      .default({}),
  })
  .strict();
export type CreateRunBody = z.infer<typeof createRunBody>;

export const RUN_STATES = ["idle", "ready", "playing", "paused", "seeking", "finished", "failed", "interrupted"] as const;

export const runSummary = z.object({
  id: z.string(),
  name: z.string(),
  recordingId: z.string(),
  recordingName: z.string(),
  panelIds: z.array(z.string()),
  state: z.enum(RUN_STATES),
  speed: z.number(),
  positionMs: z.number(),
  durationMs: z.number(),
  counts: z.record(z.enum(ELEMENT_STATUSES), z.number().int()),
  mismatchCount: z.number().int(),
  createdBy: z.string().nullable(),
  createdAt: z.string(),
  finishedAt: z.string().nullable(),
});
export type RunSummary = z.infer<typeof runSummary>;

export const lagView = z.object({ count: z.number().int(), p50: z.number().nullable(), p95: z.number().nullable(), max: z.number().nullable() });

export const elementResultView = z.object({
  panelId: z.string(),
  elementId: z.string(),
  label: z.string(),
  kind: z.string(),
  status: z.enum(ELEMENT_STATUSES),
  mismatchCount: z.number().int(),
  lag: lagView,
  noDataMs: z.number(),
  reports: z.number().int(),
});

export const mismatchView = z.object({
  id: z.string(),
  panelId: z.string(),
  elementId: z.string(),
  track: z.string(),
  kind: z.enum(MISMATCH_KINDS),
  startMs: z.number(),
  endMs: z.number(),
  worstError: z.number(),
  expected: z.string(),
  seen: z.string(),
  atMs: z.number(),
});
export type MismatchView = z.infer<typeof mismatchView>;

export const linkStatusView = z.object({
  panelId: z.string(),
  kind: z.enum(LINK_KINDS),
  connected: z.boolean(),
  /** Frames refused on this link, by reason (bad_crc, truncated, unknown_element, ...). */
  faults: z.record(z.string(), z.number().int()),
  gaps: z.array(z.object({ fromMs: z.number(), toMs: z.number() })),
});

/** GET /runs/:runId */
export const runDetail = runSummary.extend({
  elements: z.array(elementResultView),
  lag: lagView,
  links: z.array(linkStatusView),
});
export type RunDetail = z.infer<typeof runDetail>;

/** POST /runs/:runId/control */
export const runControlBody = z.discriminatedUnion("action", [
  z.object({ action: z.literal("play") }).strict(),
  z.object({ action: z.literal("pause") }).strict(),
  z.object({ action: z.literal("step") }).strict(),
  z.object({ action: z.literal("seek"), toMs: z.number().int().min(0) }).strict(),
  z.object({ action: z.literal("speed"), speed: z.number().min(0.1).max(16) }).strict(),
  z.object({ action: z.literal("loop"), loop: z.object({ fromMs: z.number().int().min(0), toMs: z.number().int().min(1) }).strict().nullable() }).strict(),
  z.object({ action: z.literal("stop") }).strict(),
]);

/** POST /runs/:runId/rejudge: judge the stored seen log again with other tolerances, without replaying. */
export const rejudgeBody = createRunBody.shape.tolerance;

/** GET /runs/:runId/mismatches?elementId=&kind= */
export const mismatchesQuery = z.object({ elementId: z.string().max(40).optional(), kind: z.enum(MISMATCH_KINDS).optional() }).strict();

/** GET /runs/:runId/export.json (docs/run-report.md) and /runs/:runId/junit.xml (one test case per element). */

// ---- share links -------------------------------------------------------------------------------

/** POST /runs/:runId/shares: the link is in the answer once; only the token's hash is stored. */
export const createShareBody = z.object({ expiresInDays: z.number().int().min(1).max(365).default(14) }).strict();
export const shareView = z.object({ id: z.string(), createdAt: z.string(), expiresAt: z.string(), revokedAt: z.string().nullable(), createdBy: z.string().nullable() });
export const createdShareView = shareView.extend({ url: z.string() });
/** DELETE /runs/:runId/shares/:shareId revokes. GET /api/shared/:token (no sign-in) answers the report, or 410 with "revoked"/"expired". */

// ---- live watching (WebSocket /ws/runs/:runId, session cookie, origin checked) -----------------

export const watcherMessage = z.discriminatedUnion("type", [
  z.object({ type: z.literal("player"), state: z.enum(RUN_STATES), positionMs: z.number(), speed: z.number(), durationMs: z.number() }),
  z.object({ type: z.literal("mismatch"), mismatch: mismatchView.omit({ id: true }) }),
  z.object({ type: z.literal("element"), panelId: z.string(), elementId: z.string(), status: z.enum(ELEMENT_STATUSES) }),
  z.object({ type: z.literal("link"), link: linkStatusView }),
  z.object({ type: z.literal("error"), message: z.string() }),
]);
export type WatcherMessage = z.infer<typeof watcherMessage>;
