import { randomBytes, randomUUID } from "node:crypto";
import { Router, type Request, type Response } from "express";
import { and, count, desc, eq, inArray, sql } from "drizzle-orm";
import { z } from "zod";
import {
  compareParams,
  emailReportBody,
  tracesQuery,
  type EmailReportAnswer,
  type PanelRunHistoryRow,
  type PointerTracesView,
  type RunComparisonView,
  type RunExpectedView,
} from "../../shared/api/run-reports";
import { entityId } from "../../shared/api/workshops";
import { coverageGaps } from "../../shared/compare/coverage-suggestions";
import { diffHeadline, diffRuns, passRate } from "../../shared/compare/run-diff";
import type { ElementStatus } from "../../shared/compare/types";
import { panelCoverage } from "../../shared/expect/coverage";
import { timelinesWithin } from "../../shared/expect/window";
import { expectTimelinesInTurns } from "../../shared/expect/engine";
import { normalizeAngle } from "../../shared/elements/scale/scale";
import { member as memberTable, panel, recording, run, runElementResult, shareLink, user } from "../db/schema";
import { requireActor, requireMembership, type Services } from "../http/context";
import { HttpError, forbidden, notFound } from "../http/errors";
import { parseBody, parseParams, parseQuery } from "../http/validate";
import { authorize } from "../policies/actor";
import { runPolicy } from "../policies/run";
import { sharePolicy } from "../policies/share";
import { elementRowsOf, exportOf, recordingNameOf, summaryOf } from "../bench/report";
import { EMPTY_COUNTS, loadRecordingColumns, seenLogOf } from "../bench/store";
import { runReportMail } from "../mail/templates";
import { hashShareToken, sharedRunOf } from "./shared-link";
import { nextTurn } from "../turns";

type RunRow = typeof run.$inferSelect;

const runParams = z.object({ workshopId: entityId, runId: entityId });
const panelParams = z.object({ workshopId: entityId, panelId: entityId });

const invalid = (path: string, message: string) => new HttpError("validation_failed", `${path}: ${message}`, [{ path, message }]);
const seconds = (ms: number) => `${(ms / 1000).toFixed(3)} s`;
const MISMATCH_WORDS: Record<string, string> = { wrong_value: "wrong value", late: "late", unexpected_input: "unexpected input" };
/** Intervals listed per failing element in an e-mail; the report link has the rest. */
const MAIL_INTERVALS_PER_ELEMENT = 5;

/**
 * Expected views are computed from the whole recording (segment reads and the behaviours); the
 * report page asks once per run, but several readers may open one report. Kept per run and judged
 * span, a few at a time: a run's recording and panel snapshots never change. What is kept is the
 * promise, so the report page's /expected and /traces asking at once share one computation (they
 * used to compute the hour twice), and the JSON text, so a repeat visit is not stringified again
 * (an hour of 200 elements is megabytes; stringifying it held the event loop).
 */
interface ExpectedEntry {
  view: Promise<RunExpectedView>;
  json?: string;
}
const expectedCache = new Map<string, ExpectedEntry>();
const EXPECTED_CACHE_SIZE = 8;

function expectedEntryOf(services: Services, row: RunRow): ExpectedEntry {
  const key = `${row.id}:${row.positionMs}:${row.durationMs}`;
  const cached = expectedCache.get(key);
  if (cached) return cached;
  const entry: ExpectedEntry = { view: computeExpectedView(services, row) };
  expectedCache.set(key, entry);
  // A failed computation is not kept: the next reader tries again.
  entry.view.catch(() => expectedCache.get(key) === entry && expectedCache.delete(key));
  while (expectedCache.size > EXPECTED_CACHE_SIZE) expectedCache.delete(expectedCache.keys().next().value!);
  return entry;
}

const expectedViewOf = (services: Services, row: RunRow) => expectedEntryOf(services, row).view;

/** The view as JSON text, made once per cached view. */
async function expectedJsonOf(services: Services, row: RunRow): Promise<string> {
  const entry = expectedEntryOf(services, row);
  const view = await entry.view;
  entry.json ??= JSON.stringify(view);
  return entry.json;
}


async function computeExpectedView(services: Services, row: RunRow): Promise<RunExpectedView> {
  const fromMs = row.segment?.fromMs ?? 0;
  const rec = await loadRecordingColumns(services.db, row.recordingId, row.panels.map((p) => p.definition));
  const toMs = Math.max(fromMs, Math.min(row.positionMs, row.segment?.toMs ?? rec.durationMs, rec.durationMs));
  const panels: RunExpectedView["panels"] = [];
  for (const p of row.panels) {
    // Other requests (the report itself, the mismatches) get a turn between panels.
    await nextTurn();
    // What the run judged: its segment, up to where it got. Coverage read from the whole recording
    // would credit a segment run with what it never played.
    const timelines = timelinesWithin(await expectTimelinesInTurns(p.definition, rec.columns, { endMs: rec.durationMs, turn: nextTurn }), fromMs, toMs);
    panels.push({
      panelId: p.panelId,
      name: p.name,
      definition: p.definition,
      timelines,
      coverageGaps: coverageGaps(p.definition.elements, { ...panelCoverage(p.definition, timelines), panelId: p.panelId }, rec.channels),
    });
  }
  return { runId: row.id, judgedFromMs: fromMs, judgedToMs: toMs, panels };
}

/** One pointer's expected angle track beside every angle the panel reported for it. */
async function tracesOf(services: Services, row: RunRow, query: z.infer<typeof tracesQuery>): Promise<PointerTracesView> {
  const snapshot = row.panels.find((p) => p.panelId === query.panelId);
  if (!snapshot) throw invalid("query.panelId", "this panel is not in the run");
  const el = snapshot.definition.elements.find((e) => e.id === query.elementId);
  if (!el) throw invalid("query.elementId", `no element "${query.elementId}" on ${snapshot.name}`);
  if (el.kind !== "pointer") throw invalid("query.elementId", `"${el.label}" is a ${el.kind}; traces are drawn for pointers`);
  const expected = await expectedViewOf(services, row);
  const timeline = expected.panels.find((p) => p.panelId === query.panelId)?.timelines.elements.find((e) => e.id === el.id);
  const track = timeline?.angle ?? { t: [], angle: [], wrap: false };
  const seen = { t: [] as number[], angle: [] as number[] };
  for (const r of await seenLogOf(services.db, row, query.panelId)) {
    if (r.elementId !== el.id || r.sample.shows.track !== "angle" || r.sample.t > expected.judgedToMs) continue;
    seen.t.push(r.sample.t);
    seen.angle.push(r.sample.shows.angle);
  }
  return {
    panelId: query.panelId,
    elementId: el.id,
    label: el.label,
    wrap: track.wrap,
    expected: { t: [...track.t], angle: track.wrap ? track.angle.map(normalizeAngle) : [...track.angle] },
    seen,
    gaps: row.linkStatus.find((l) => l.panelId === query.panelId)?.gaps ?? [],
  };
}

/**
 * The report side of runs (issue 6) under /api/workshops: a panel's run history with pass
 * rates, comparing two runs, e-mailing a report, and what the report page draws.
 */
export function workshopRunReportsRouter(services: Services) {
  const { db, runs } = services;
  const router = Router();

  async function member(req: Request, workshopId: string) {
    return requireMembership(services, await requireActor(services, req), workshopId);
  }

  async function findRun(workshopId: string, runId: string, what = "No such run in this workshop.") {
    const [row] = await db.select().from(run).where(and(eq(run.id, runId), eq(run.workshopId, workshopId)));
    if (!row) throw notFound(what);
    return row;
  }

  router.get("/:workshopId/panels/:panelId/run-history", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    authorize(runPolicy.compare(await member(req, workshopId)), forbidden);
    const [p] = await db.select({ id: panel.id }).from(panel).where(and(eq(panel.id, panelId), eq(panel.workshopId, workshopId)));
    if (!p) throw notFound("No such panel in this workshop.");
    const rows = await db
      .select()
      .from(run)
      .where(and(eq(run.workshopId, workshopId), sql`${run.links} @> ${JSON.stringify([{ panelId }])}::jsonb`))
      .orderBy(desc(run.createdAt))
      .limit(500);
    const ids = rows.map((r) => r.id);
    const counts = new Map<string, Record<ElementStatus, number>>();
    if (ids.length) {
      const grouped = await db
        .select({ runId: runElementResult.runId, status: runElementResult.status, n: count() })
        .from(runElementResult)
        .where(and(inArray(runElementResult.runId, ids), eq(runElementResult.panelId, panelId)))
        .groupBy(runElementResult.runId, runElementResult.status);
      for (const g of grouped) {
        const c = counts.get(g.runId) ?? { ...EMPTY_COUNTS };
        c[g.status as ElementStatus] = Number(g.n);
        counts.set(g.runId, c);
      }
    }
    const names = new Map<string, string>();
    const recIds = [...new Set(rows.map((r) => r.recordingId))];
    if (recIds.length) for (const r of await db.select({ id: recording.id, name: recording.name }).from(recording).where(inArray(recording.id, recIds))) names.set(r.id, r.name);
    const history: PanelRunHistoryRow[] = rows.map((r) => {
      const panelCounts = counts.get(r.id) ?? { ...EMPTY_COUNTS };
      return { ...summaryOf(r, names.get(r.recordingId) ?? "", runs), panelCounts, passRate: passRate(panelCounts) };
    });
    res.json(history);
  });

  router.get("/:workshopId/runs/:runId/compare/:otherRunId", async (req, res) => {
    const { workshopId, runId, otherRunId } = parseParams(req, compareParams);
    authorize(runPolicy.compare(await member(req, workshopId)), forbidden);
    const a = await findRun(workshopId, runId);
    const b = await findRun(workshopId, otherRunId, "No such run to compare with in this workshop.");
    if (a.id === b.id) throw invalid("params.otherRunId", "a run compared with itself has nothing to show: choose another run");
    const [nameA, nameB] = [await recordingNameOf(db, a.recordingId), await recordingNameOf(db, b.recordingId)];
    if (a.recordingId !== b.recordingId) {
      throw invalid("params.otherRunId", `that run replayed the recording "${nameB}", this one "${nameA}": only runs of the same recording compare`);
    }
    const panelsOf = (r: RunRow) => r.panels.map((p) => p.panelId).sort();
    if (panelsOf(a).join() !== panelsOf(b).join()) {
      const list = (r: RunRow) => r.panels.map((p) => p.name).join(", ");
      throw invalid("params.otherRunId", `that run is of the panels ${list(b)}, this one of ${list(a)}: only runs of the same panels compare`);
    }
    const [earlier, later] = a.createdAt.getTime() <= b.createdAt.getTime() ? [a, b] : [b, a];
    const outcomes = async (r: RunRow) =>
      (await elementRowsOf(db, r.id)).map((e) => ({ panelId: e.panelId, elementId: e.elementId, label: e.label, status: e.status as ElementStatus, mismatchCount: e.mismatchCount }));
    const diff = diffRuns(await outcomes(earlier), await outcomes(later));
    const view: RunComparisonView = {
      earlier: summaryOf(earlier, nameA, runs),
      later: summaryOf(later, nameA, runs),
      headline: diffHeadline(diff),
      ...diff,
    };
    res.json(view);
  });

  router.post("/:workshopId/runs/:runId/email", async (req, res) => {
    const { workshopId, runId } = parseParams(req, runParams);
    const m = await member(req, workshopId);
    authorize(runPolicy.email(m), forbidden);
    const body = parseBody(req, emailReportBody);
    if (body.shareLink) authorize(sharePolicy.create(m), forbidden);
    const actor = await requireActor(services, req);
    const row = await findRun(workshopId, runId);

    const recipients: string[] = [];
    if (body.memberUserIds.length) {
      const found = await db
        .select({ userId: user.id, email: user.email })
        .from(memberTable)
        .innerJoin(user, eq(user.id, memberTable.userId))
        .where(and(eq(memberTable.organizationId, workshopId), inArray(memberTable.userId, body.memberUserIds)));
      for (const [i, id] of body.memberUserIds.entries()) {
        const hit = found.find((f) => f.userId === id);
        if (!hit) throw invalid(`body.memberUserIds.${i}`, "not a member of this workshop");
        recipients.push(hit.email.toLowerCase());
      }
    }
    recipients.push(...body.addresses);
    const sentTo = [...new Set(recipients)];

    let shareUrl: string | null = null;
    if (body.shareLink) {
      const token = randomBytes(24).toString("base64url");
      await db.insert(shareLink).values({
        id: randomUUID(),
        runId,
        tokenHash: hashShareToken(token),
        expiresAt: new Date(Date.now() + body.shareLink.expiresInDays * 86_400_000),
        createdById: actor.userId,
      });
      shareUrl = `${services.baseUrl}/shared/${token}`;
    }

    const report = await exportOf(db, row, runs);
    const failing = report.panels.flatMap((p) =>
      p.elements
        .filter((e) => e.status === "fail" || e.status === "no_data")
        .map((e) => ({
          panelName: p.name,
          label: e.label,
          elementId: e.elementId,
          status: e.status,
          mismatchCount: e.mismatchCount,
          intervals: [
            ...e.mismatches
              .slice(0, MAIL_INTERVALS_PER_ELEMENT)
              .map((x) => `${seconds(x.startMs)} to ${seconds(x.endMs)}: ${MISMATCH_WORDS[x.kind] ?? x.kind}, expected ${x.expected}, seen ${x.seen}`),
            ...(e.mismatches.length > MAIL_INTERVALS_PER_ELEMENT ? [`and ${e.mismatches.length - MAIL_INTERVALS_PER_ELEMENT} more in the report`] : []),
            ...(e.status === "no_data" ? [`no data for ${seconds(e.noDataMs)}`] : []),
          ],
        })),
    );
    const mail = runReportMail({
      workshopName: m.workshopName,
      senderName: actor.name,
      runName: report.run.name,
      recordingName: report.run.recording.name,
      passed: report.summary.passed,
      counts: report.summary.counts,
      mismatchCount: report.summary.mismatchCount,
      failing,
      reportUrl: `${services.baseUrl}/w/${workshopId}/runs/${runId}/report`,
      shareUrl,
      note: body.note || undefined,
    });
    try {
      // One message per recipient: no reader sees the others' addresses.
      for (const to of sentTo) await services.mailer.send({ to, ...mail });
    } catch (error) {
      console.error("[mail] run report:", error);
      throw new HttpError("unavailable", "The mail server did not take the message; try again later.");
    }
    const answer: EmailReportAnswer = { sentTo, shareUrl };
    res.json(answer);
  });

  router.get("/:workshopId/runs/:runId/expected", async (req, res) => {
    const { workshopId, runId } = parseParams(req, runParams);
    authorize(runPolicy.compare(await member(req, workshopId)), forbidden);
    res.type("json").send(await expectedJsonOf(services, await findRun(workshopId, runId)));
  });

  router.get("/:workshopId/runs/:runId/traces", async (req, res) => {
    const { workshopId, runId } = parseParams(req, runParams);
    authorize(runPolicy.compare(await member(req, workshopId)), forbidden);
    const query = parseQuery(req, tracesQuery);
    res.json(await tracesOf(services, await findRun(workshopId, runId), query));
  });

  return router;
}

/**
 * The same views for a share link's reader, without signing in: /api/shared/:token/expected and
 * /traces. The token is checked exactly as for the report itself (routes/runs.ts): unknown 404,
 * revoked or expired 410 saying which.
 */
function sharedReportExtrasRouter(services: Services) {
  const { db } = services;
  const router = Router();

  async function sharedRun(req: Request, res: Response): Promise<RunRow | null> {
    return (await sharedRunOf(db, req.params.token, res))?.row ?? null;
  }

  router.get("/:token/expected", async (req, res) => {
    const row = await sharedRun(req, res);
    if (row) res.type("json").send(await expectedJsonOf(services, row));
  });

  router.get("/:token/traces", async (req, res) => {
    const row = await sharedRun(req, res);
    if (row) res.json(await tracesOf(services, row, parseQuery(req, tracesQuery)));
  });

  return router;
}

/** Everything above, mounted once under /api: /workshops/... for members, /shared/:token/... for share links. */
export function runReportsRouter(services: Services) {
  const router = Router();
  router.use("/workshops", workshopRunReportsRouter(services));
  router.use("/shared", sharedReportExtrasRouter(services));
  return router;
}
