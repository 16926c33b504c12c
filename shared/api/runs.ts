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

/** An element watched by eye (observation mode), for a board that cannot sense it. */
export const observationTarget = z.object({ panelId: entityId, elementId: z.string().min(1).max(40) }).strict();
export type ObservationTarget = z.infer<typeof observationTarget>;

/** POST /runs */
export const createRunBody = z
  .object({
    name: z.string().trim().min(1).max(120).optional(),
    recordingId: entityId,
    links: z.array(runLinkInput).min(1, "a run needs at least one panel").max(32),
    speed: z.number().min(0.1).max(16).default(1),
    /** Elements the builder watches by eye (observation mode): the console asks about them at checkpoints. */
    observed: z.array(observationTarget).max(200).optional(),
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

// ---- checks beside the replay (issue 6): set-up check, input walk, observation mode ----------------

/** The inputs the set-up check compares with the recording's first instant. */
export const SETUP_CHECKED_KINDS = ["switch", "lever", "breaker"] as const;

/** One switch, lever or breaker at the instant play starts: where the recording has it and where the panel says it is. */
export const setupItem = z.object({
  panelId: z.string(),
  elementId: z.string(),
  label: z.string(),
  kind: z.enum(SETUP_CHECKED_KINDS),
  /** Position (or breaker position) the recording has at the instant play starts. */
  expected: z.string(),
  /** Where the panel last said it is (its latest input event, else its latest seen report); null: not reported yet. */
  reported: z.string().nullable(),
  /** "GEAR lever is up, the recording starts down" */
  sentence: z.string(),
});
export type SetupItem = z.infer<typeof setupItem>;

/** The set-up check now (live, from the session): what blocks play until it agrees or is overridden. */
export const setupCheckView = z.object({
  /** The instant play starts from (recording time). */
  atMs: z.number(),
  /** Whether play will ask (only before the first play of a session). */
  applies: z.boolean(),
  /** Reported positions that differ from the recording: these block play. */
  differences: z.array(setupItem),
  /** Elements that have not reported a position: listed, not blocking (a board may not sense them). */
  unreported: z.array(setupItem),
});
export type SetupCheckView = z.infer<typeof setupCheckView>;

/** A builder's "play anyway": stored in run.checks with what differed. */
export const setupOverride = z.object({ at: z.string(), by: z.string().nullable(), atMs: z.number(), differences: z.array(setupItem) });

export const WALK_KINDS = ["switch", "lever", "breaker", "button"] as const;
export const WALK_RESULTS = ["pass", "wrong_position", "timeout", "skipped"] as const;
export type WalkResult = (typeof WALK_RESULTS)[number];

/** One step of the input walk: an input position the builder is asked to set. */
export const walkStep = z.object({
  panelId: z.string(),
  elementId: z.string(),
  label: z.string(),
  kind: z.enum(WALK_KINDS),
  /** A position name; breakers "in" or "pulled"; buttons "pressed". */
  position: z.string(),
  /** "Move the FLAPS lever to mid" */
  prompt: z.string(),
  result: z.enum(WALK_RESULTS).nullable(),
  /** The position the panel reported instead (wrong_position), else null. */
  seen: z.string().nullable(),
  /** From the question to the answer, wall ms; null until answered. */
  tookMs: z.number().nullable(),
});
export type WalkStep = z.infer<typeof walkStep>;

export const WALK_STATES = ["running", "done", "cancelled"] as const;
export const inputWalkView = z.object({
  state: z.enum(WALK_STATES),
  timeoutSec: z.number(),
  startedAt: z.string(),
  finishedAt: z.string().nullable(),
  /** Index of the step being asked; steps.length once done. */
  current: z.number().int(),
  steps: z.array(walkStep),
});
export type InputWalkView = z.infer<typeof inputWalkView>;

export const OBSERVATION_ANSWERS = ["yes", "no", "skip"] as const;
export type ObservationAnswer = (typeof OBSERVATION_ANSWERS)[number];

/** An instant where the player pauses and the console asks the builder what an observed element shows. */
export const checkpointView = z.object({
  id: z.string(),
  panelId: z.string(),
  elementId: z.string(),
  label: z.string(),
  atMs: z.number(),
  /** "Is the GEAR UNSAFE lamp lit now?" */
  question: z.string(),
  /** What the element should show then, in the judge's words ("on", "\"7700\"", "down"). */
  expected: z.string(),
  answer: z.enum(OBSERVATION_ANSWERS).nullable(),
  answeredAt: z.string().nullable(),
});
export type CheckpointView = z.infer<typeof checkpointView>;

/**
 * run.checks (jsonb): what the builder did beside the replay. Rows written before a field
 * existed lack it: always read through `runChecks.parse`, which fills the defaults.
 */
export const runChecks = z.object({
  setupOverrides: z.array(setupOverride).default([]),
  walk: inputWalkView.nullable().default(null),
  observed: z.array(observationTarget).default([]),
  checkpoints: z.array(checkpointView).default([]),
  /** The checkpoint the player is paused at, waiting for an answer. */
  asking: z.string().nullable().default(null),
});
export type RunChecks = z.infer<typeof runChecks>;
/** What the column may hold (defaults not yet filled). */
export type StoredRunChecks = z.input<typeof runChecks>;

/** The checks as the console sees them: stored checks plus the live set-up check (null without a session). */
export const checksView = runChecks.extend({ setup: setupCheckView.nullable() });
export type ChecksView = z.infer<typeof checksView>;

/** GET /runs/:runId */
export const runDetail = runSummary.extend({
  elements: z.array(elementResultView),
  lag: lagView,
  links: z.array(linkStatusView),
  /** Each link as set up (with a virtual link's injected faults, as changed during the run). */
  settings: z.array(runLinkInput).optional(),
  checks: checksView.optional(),
});
export type RunDetail = z.infer<typeof runDetail>;

/** POST /runs/:runId/control */
export const runControlBody = z.discriminatedUnion("action", [
  /** Refused with 409 setup_mismatch while the set-up check lists differences, unless `override` is true. */
  z.object({ action: z.literal("play"), override: z.boolean().optional() }).strict(),
  z.object({ action: z.literal("pause") }).strict(),
  z.object({ action: z.literal("step") }).strict(),
  z.object({ action: z.literal("seek"), toMs: z.number().int().min(0) }).strict(),
  z.object({ action: z.literal("speed"), speed: z.number().min(0.1).max(16) }).strict(),
  z.object({ action: z.literal("loop"), loop: z.object({ fromMs: z.number().int().min(0), toMs: z.number().int().min(1) }).strict().nullable() }).strict(),
  z.object({ action: z.literal("stop") }).strict(),
]);

/** POST /runs/:runId/checks: the input walk and observation mode. */
export const runChecksBody = z.discriminatedUnion("action", [
  /** Ask for every input position in turn; each waits `timeoutSec` for the panel's input event. */
  z.object({ action: z.literal("walk_start"), timeoutSec: z.number().min(1).max(600).default(20) }).strict(),
  z.object({ action: z.literal("walk_skip") }).strict(),
  z.object({ action: z.literal("walk_cancel") }).strict(),
  /** The elements watched by eye (replaces the list); checkpoints are chosen again, answers kept. */
  z.object({ action: z.literal("observe"), elements: z.array(observationTarget).max(200) }).strict(),
  z.object({ action: z.literal("answer"), checkpointId: z.string().min(1).max(200), answer: z.enum(OBSERVATION_ANSWERS) }).strict(),
]);
export type RunChecksBody = z.infer<typeof runChecksBody>;

/** PUT /runs/:runId/links/:panelId/faults: a virtual link's injected faults, changeable while the run plays. */
export const linkFaultsBody = z.object({ faults: faultList }).strict();

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
  z.object({
    type: z.literal("player"),
    state: z.enum(RUN_STATES),
    positionMs: z.number(),
    speed: z.number(),
    durationMs: z.number(),
    /** The segment that repeats, if one is set (absent from older servers). */
    loop: z.object({ fromMs: z.number(), toMs: z.number() }).nullable().optional(),
  }),
  z.object({ type: z.literal("mismatch"), mismatch: mismatchView.omit({ id: true }) }),
  z.object({ type: z.literal("element"), panelId: z.string(), elementId: z.string(), status: z.enum(ELEMENT_STATUSES) }),
  z.object({ type: z.literal("link"), link: linkStatusView }),
  z.object({ type: z.literal("error"), message: z.string() }),
  /** The checks changed: set-up check, input walk, observation checkpoints (the whole view, it is small). */
  z.object({ type: z.literal("checks"), checks: checksView }),
]);
export type WatcherMessage = z.infer<typeof watcherMessage>;
