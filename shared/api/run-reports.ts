import { z } from "zod";
import type { CoverageGap } from "../compare/coverage-suggestions";
import { ELEMENT_STATUSES } from "../compare/types";
import type { ExpectedTimelines } from "../expect/types";
import type { Panel } from "../panel/schema";
import { runSummary } from "./runs";
import { emailAddress, entityId } from "./workshops";

/**
 * The report side of runs (issue 6): history per panel, comparing two runs, e-mailing a report,
 * and what the report page draws (expected states, a pointer's traces, coverage gaps). Routes
 * under /api/workshops/:workshopId unless said otherwise; the expected and traces views are also
 * served under /api/shared/:token for a share link's reader (no sign-in).
 */

// ---- history -----------------------------------------------------------------------------------

/** GET /panels/:panelId/run-history: the panel's runs, newest first, with its own elements' counts. */
export const panelRunHistoryRow = runSummary.extend({
  /** This panel's elements only (a run may hold several panels). */
  panelCounts: z.record(z.enum(ELEMENT_STATUSES), z.number().int()),
  /** Passed among judged elements of this panel (shared/compare/run-diff.ts passRate); null when none judged. */
  passRate: z.number().min(0).max(1).nullable(),
});
export type PanelRunHistoryRow = z.infer<typeof panelRunHistoryRow>;

// ---- comparing two runs ------------------------------------------------------------------------

export const compareParams = z.object({ workshopId: entityId, runId: entityId, otherRunId: entityId });

const status = z.enum(ELEMENT_STATUSES);
export const elementChangeView = z.object({
  panelId: z.string(),
  elementId: z.string(),
  label: z.string(),
  before: status.nullable(),
  after: status.nullable(),
  mismatchesBefore: z.number().int(),
  mismatchesAfter: z.number().int(),
});

/**
 * GET /runs/:runId/compare/:otherRunId: both runs must be of the same recording and panels
 * (else 422 on params.otherRunId). `earlier` and `later` are ordered by creation, whichever the
 * URL names first.
 */
export const runComparisonView = z.object({
  earlier: runSummary,
  later: runSummary,
  headline: z.string(),
  fixed: z.array(elementChangeView),
  stillFailing: z.array(elementChangeView),
  newlyFailing: z.array(elementChangeView),
  otherwiseChanged: z.array(elementChangeView),
  unchanged: z.array(elementChangeView),
  added: z.array(elementChangeView),
  removed: z.array(elementChangeView),
});
export type RunComparisonView = z.infer<typeof runComparisonView>;

// ---- e-mailing a report ------------------------------------------------------------------------

export const MAX_REPORT_RECIPIENTS = 20;

/** POST /runs/:runId/email: to chosen members (their user ids) and/or typed addresses. */
export const emailReportBody = z
  .object({
    memberUserIds: z.array(entityId).max(MAX_REPORT_RECIPIENTS).default([]),
    addresses: z.array(emailAddress).max(MAX_REPORT_RECIPIENTS).default([]),
    /** A short note from the sender, put above the summary. */
    note: z.string().trim().max(1000).optional(),
    /** Make a share link for the message, so readers outside the workshop can open the report. */
    shareLink: z.object({ expiresInDays: z.number().int().min(1).max(365).default(14) }).strict().optional(),
  })
  .strict()
  .superRefine((b, ctx) => {
    if (b.memberUserIds.length + b.addresses.length === 0) ctx.addIssue({ code: "custom", path: ["addresses"], message: "choose at least one member or type an address" });
    if (b.memberUserIds.length + b.addresses.length > MAX_REPORT_RECIPIENTS) ctx.addIssue({ code: "custom", path: ["addresses"], message: `at most ${MAX_REPORT_RECIPIENTS} recipients in all` });
  });
export type EmailReportBody = z.input<typeof emailReportBody>;

export const emailReportAnswer = z.object({
  /** Every address the report went to, once each. */
  sentTo: z.array(z.string()),
  /** The share link made for the message (shown once), or null. */
  shareUrl: z.string().nullable(),
});
export type EmailReportAnswer = z.infer<typeof emailReportAnswer>;

// ---- what the report page draws ----------------------------------------------------------------

/**
 * GET /runs/:runId/expected (and /api/shared/:token/expected): for each panel of the run, its
 * definition as the run took it, the expected timelines over the judged span (the page reads
 * `expectedAt` of them at any instant) and the coverage gaps with suggestions.
 */
export interface RunExpectedPanel {
  panelId: string;
  name: string;
  /** The run's snapshot of the panel definition (shared/panel/schema.ts Panel). */
  definition: Panel;
  timelines: ExpectedTimelines;
  coverageGaps: CoverageGap[];
}
export interface RunExpectedView {
  runId: string;
  judgedFromMs: number;
  judgedToMs: number;
  panels: RunExpectedPanel[];
}

/** GET /runs/:runId/traces?panelId=&elementId= (and /api/shared/:token/traces?...): one pointer. */
export const tracesQuery = z.object({ panelId: entityId, elementId: z.string().min(1).max(40) }).strict();

export interface PointerTracesView {
  panelId: string;
  elementId: string;
  label: string;
  /** Degrees on the dial; full-circle pointers in [0, 360). */
  wrap: boolean;
  expected: { t: number[]; angle: number[] };
  /** Every angle report kept in the seen log (after cuts), in time order. */
  seen: { t: number[]; angle: number[] };
  /** Stretches without data on the panel's link. */
  gaps: { fromMs: number; toMs: number }[];
}
