import { randomBytes, randomUUID } from "node:crypto";
import { Router, type Request } from "express";
import { and, desc, eq, inArray } from "drizzle-orm";
import { z } from "zod";
import {
  createRunBody,
  createShareBody,
  linkFaultsBody,
  mismatchesQuery,
  rejudgeBody,
  runChecks,
  runChecksBody,
  runControlBody,
  type RunDetail,
} from "../../shared/api/runs";
import { entityId } from "../../shared/api/workshops";
import { faultProblem } from "../../shared/virtual/faults";
import { hashShareToken, sharedRunOf } from "./shared-link";
import { panel, recording, run, shareLink } from "../db/schema";
import type { RunPanelSnapshot } from "../db/runs-schema";
import { requireActor, requireMembership, type Services } from "../http/context";
import { HttpError, forbidden, notFound } from "../http/errors";
import { parseBody, parseParams, parseQuery } from "../http/validate";
import { authorize } from "../policies/actor";
import { runPolicy } from "../policies/run";
import { sharePolicy } from "../policies/share";
import { detailOf, exportJsonOf, exportOf, junitOf, mismatchRowsOf, summaryOf, type ExportedReport } from "../bench/report";
import { RunConflict, type RunSession } from "../bench/run-session";
import { EMPTY_COUNTS, judgeStored, storeJudgement } from "../bench/store";

const workshopParams = z.object({ workshopId: entityId });
const runParams = z.object({ workshopId: entityId, runId: entityId });
const shareParams = z.object({ workshopId: entityId, runId: entityId, shareId: entityId });
const linkParams = z.object({ workshopId: entityId, runId: entityId, panelId: entityId });
const listQuery = z.object({ panelId: entityId.optional(), recordingId: entityId.optional() }).strict();


const invalid = (path: string, message: string) => new HttpError("validation_failed", `${path}: ${message}`, [{ path, message }]);

/** The elements watched by eye at set-up, each checked against its panel's definition (422 naming the field). */
function observedOf(body: z.infer<typeof createRunBody>, snapshots: RunPanelSnapshot[]) {
  const list = body.observed ?? [];
  list.forEach((o, i) => {
    const p = snapshots.find((s) => s.panelId === o.panelId);
    if (!p) throw invalid(`body.observed.${i}.panelId`, "this panel is not linked in this run");
    const el = p.definition.elements.find((e) => e.id === o.elementId);
    if (!el) throw invalid(`body.observed.${i}.elementId`, `panel "${p.name}" has no element "${o.elementId}"`);
    if (el.placeholder || el.kind === "encoder") throw invalid(`body.observed.${i}.elementId`, `${el.label} shows nothing to observe`);
  });
  return list;
}

/** Runs under /api/workshops/:workshopId/runs (issues 5 and 6). */
export function runsRouter(services: Services) {
  const { db, runs } = services;
  const router = Router();

  async function member(req: Request, workshopId: string) {
    return requireMembership(services, await requireActor(services, req), workshopId);
  }

  async function findRun(workshopId: string, runId: string) {
    const [row] = await db.select().from(run).where(and(eq(run.id, runId), eq(run.workshopId, workshopId)));
    if (!row) throw notFound("No such run in this workshop.");
    return row;
  }

  /**
   * The run as the console reads it: the report's detail plus each link's settings (with a
   * virtual link's faults as they stand) and the checks (live from the session when held here).
   */
  async function consoleDetailOf(row: typeof run.$inferSelect): Promise<RunDetail> {
    const detail = await detailOf(db, row, runs);
    // Read the live state and the checks at one instant, after the awaits above: a checkpoint
    // that paused the run meanwhile must not read as "asking" while the state still says playing.
    const session = runs.session(row.id);
    const live = session?.view();
    return {
      ...detail,
      ...(live ? { state: live.state, positionMs: live.positionMs, speed: live.speed } : {}),
      settings: row.links,
      checks: session ? session.checksView() : { ...runChecks.parse(row.checks ?? {}), setup: null },
    };
  }

  /** The run's session for a change, refusing runs that have finished or another process holds. */
  async function sessionFor(row: typeof run.$inferSelect): Promise<RunSession> {
    const state = runs.effectiveState(row);
    if (state === "finished" || state === "failed") throw new HttpError("conflict", "This run has finished; make a new run to replay it.");
    if (!runs.session(row.id) && state !== "idle" && state !== "interrupted" && row.heldBy && row.heldBy !== runs.processId) {
      throw new HttpError("conflict", "Another server process holds this run.");
    }
    return runs.ensureSession(row);
  }

  /** Runs a session change; its refusals become API errors (RangeError: 422 naming the field, RunConflict: 409). */
  function refusalOf(error: unknown): never {
    if (error instanceof RangeError) {
      const [path, ...rest] = error.message.split(": ");
      const located = path.startsWith("body.") && rest.length > 0;
      throw new HttpError("validation_failed", error.message, [{ path: located ? path : "body", message: located ? rest.join(": ") : error.message }]);
    }
    throw error;
  }

  router.get("/:workshopId/runs", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    authorize(runPolicy.read(await member(req, workshopId)), forbidden);
    const q = parseQuery(req, listQuery);
    const rows = await db
      .select()
      .from(run)
      .where(and(eq(run.workshopId, workshopId), q.recordingId ? eq(run.recordingId, q.recordingId) : undefined))
      .orderBy(desc(run.createdAt))
      .limit(500);
    const names = new Map<string, string>();
    const recIds = [...new Set(rows.map((r) => r.recordingId))];
    if (recIds.length) for (const r of await db.select({ id: recording.id, name: recording.name }).from(recording).where(inArray(recording.id, recIds))) names.set(r.id, r.name);
    res.json(rows.filter((r) => !q.panelId || r.links.some((l) => l.panelId === q.panelId)).map((r) => summaryOf(r, names.get(r.recordingId) ?? "", runs)));
  });

  router.post("/:workshopId/runs", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    const m = await member(req, workshopId);
    authorize(runPolicy.create(m), forbidden);
    const body = parseBody(req, createRunBody);
    const actor = await requireActor(services, req);
    const [rec] = await db
      .select({ id: recording.id, name: recording.name, airframeId: recording.airframeId, durationMs: recording.durationMs })
      .from(recording)
      .where(and(eq(recording.id, body.recordingId), eq(recording.workshopId, workshopId)));
    if (!rec) throw invalid("body.recordingId", "no such recording in this workshop");
    const panelIds = body.links.map((l) => l.panelId);
    const dup = panelIds.find((id, i) => panelIds.indexOf(id) !== i);
    if (dup) throw invalid(`body.links.${panelIds.lastIndexOf(dup)}.panelId`, "this panel is already linked in this run");
    const addresses = new Set<string>();
    const serialPaths = new Set(body.links.flatMap((l) => (l.kind === "serial" ? [l.path] : [])));
    for (const [i, l] of body.links.entries()) {
      if (l.kind === "rs485") {
        const key = `${l.path}#${l.address}`;
        if (addresses.has(key)) throw invalid(`body.links.${i}.address`, `two panels at address ${l.address} on ${l.path}`);
        addresses.add(key);
        if (serialPaths.has(l.path)) throw invalid(`body.links.${i}.path`, `${l.path} is already a direct serial link in this run`);
      }
    }
    if ([...serialPaths].length !== body.links.filter((l) => l.kind === "serial").length) throw invalid("body.links", "two direct serial links on one port");
    const rows = await db
      .select({ id: panel.id, name: panel.name, airframeId: panel.airframeId, definition: panel.definition })
      .from(panel)
      .where(and(eq(panel.workshopId, workshopId), inArray(panel.id, panelIds)));
    const snapshots: RunPanelSnapshot[] = [];
    for (const [i, id] of panelIds.entries()) {
      const p = rows.find((r) => r.id === id);
      if (!p) throw invalid(`body.links.${i}.panelId`, "no such panel in this workshop");
      if (p.airframeId !== rec.airframeId) throw invalid(`body.links.${i}.panelId`, `panel "${p.name}" is of another airframe than the recording`);
      snapshots.push({ panelId: p.id, name: p.name, definition: p.definition });
      const l = body.links[i];
      if (l.kind === "virtual") {
        l.faults.forEach((f, j) => {
          const problem = faultProblem(f, p.definition.elements);
          if (problem) throw invalid(`body.links.${i}.faults.${j}.${problem.field}`, problem.message);
        });
      }
    }
    if (body.segment) {
      if (body.segment.toMs <= body.segment.fromMs) throw invalid("body.segment.toMs", "must be after fromMs");
      if (body.segment.fromMs >= rec.durationMs) throw invalid("body.segment.fromMs", `must be before the recording's end (${rec.durationMs} ms)`);
    }
    const durationMs = Math.min(body.segment?.toMs ?? rec.durationMs, rec.durationMs);
    const [row] = await db
      .insert(run)
      .values({
        id: randomUUID(),
        workshopId,
        recordingId: rec.id,
        name: body.name ?? `${rec.name}, ${snapshots.map((s) => s.name).join(", ")}`.slice(0, 120),
        links: body.links,
        panels: snapshots,
        speed: body.speed,
        segment: body.segment ?? null,
        tolerance: body.tolerance,
        state: "idle",
        positionMs: body.segment?.fromMs ?? 0,
        durationMs,
        counts: { ...EMPTY_COUNTS },
        linkStatus: body.links.map((l) => ({ panelId: l.panelId, kind: l.kind, faults: {}, gaps: [] })),
        cuts: [],
        checks: { observed: observedOf(body, snapshots) },
        createdById: actor.userId,
      })
      .returning();
    res.status(201).json(await consoleDetailOf(row));
  });

  router.get("/:workshopId/runs/:runId", async (req, res) => {
    const { workshopId, runId } = parseParams(req, runParams);
    authorize(runPolicy.read(await member(req, workshopId)), forbidden);
    res.json(await consoleDetailOf(await findRun(workshopId, runId)));
  });

  router.post("/:workshopId/runs/:runId/control", async (req, res) => {
    const { workshopId, runId } = parseParams(req, runParams);
    authorize(runPolicy.control(await member(req, workshopId)), forbidden);
    const body = parseBody(req, runControlBody);
    const actor = await requireActor(services, req);
    const row = await findRun(workshopId, runId);
    const state = runs.effectiveState(row);
    if (state === "finished" || state === "failed") throw new HttpError("conflict", "This run has finished; make a new run to replay it.");
    if (!runs.session(runId) && state !== "idle" && state !== "interrupted" && row.heldBy && row.heldBy !== runs.processId) {
      throw new HttpError("conflict", "Another server process holds this run.");
    }
    if (body.action === "stop" && !runs.session(runId)) {
      // Nothing is playing here: end the run where it stopped and judge what was kept.
      await db.update(run).set({ state: "finished", finishedAt: new Date(), heldBy: null }).where(eq(run.id, runId));
      const [updated] = await db.select().from(run).where(eq(run.id, runId));
      await storeJudgement(db, runId, await judgeStored(db, updated, updated.tolerance));
      res.json(await consoleDetailOf((await db.select().from(run).where(eq(run.id, runId)))[0]));
      return;
    }
    const session = await runs.ensureSession(row);
    await actOn(res, session, workshopId, runId, async () => {
      switch (body.action) {
        case "play":
          session.play({ override: body.override, by: actor.userId });
          break;
        case "pause":
          session.pause();
          break;
        case "step":
          session.step();
          break;
        case "seek":
          session.seek(body.toMs);
          break;
        case "speed":
          session.setSpeed(body.speed);
          break;
        case "loop":
          session.setLoop(body.loop);
          break;
        case "stop":
          await session.finish("stopped");
          break;
      }
    });
  });

  /**
   * Runs one action on a held run, lets the session settle (its writes), then answers the run
   * as the console reads it; a RunConflict answers 409 with its own code, other refusals go to
   * the error handler. The control and checks routes share it.
   */
  async function actOn(res: import("express").Response, session: RunSession, workshopId: string, runId: string, act: () => void | Promise<void>) {
    try {
      await act();
    } catch (error) {
      if (error instanceof RunConflict) {
        await session.settle();
        sendConflict(res, error);
        return;
      }
      refusalOf(error);
    }
    await session.settle();
    res.json(await consoleDetailOf(await findRun(workshopId, runId)));
  }

  /**
   * 409 with the conflict's own code. `setup_mismatch` lists every element that differs, as
   * issues (path `panels.<panelId>.elements.<elementId>`) and as `differences`.
   */
  function sendConflict(res: import("express").Response, error: RunConflict) {
    res.status(409).json({
      error: {
        code: error.code,
        message: error.message,
        ...(error.differences.length
          ? { issues: error.differences.map((d) => ({ path: `panels.${d.panelId}.elements.${d.elementId}`, message: d.sentence })), differences: error.differences }
          : {}),
      },
    });
  }

  router.post("/:workshopId/runs/:runId/checks", async (req, res) => {
    const { workshopId, runId } = parseParams(req, runParams);
    authorize(runPolicy.control(await member(req, workshopId)), forbidden);
    const body = parseBody(req, runChecksBody);
    const session = await sessionFor(await findRun(workshopId, runId));
    await actOn(res, session, workshopId, runId, () => {
      switch (body.action) {
        case "walk_start":
          session.startWalk(body.timeoutSec);
          break;
        case "walk_skip":
          session.skipWalkStep();
          break;
        case "walk_cancel":
          session.cancelWalk();
          break;
        case "observe":
          session.observe(body.elements);
          break;
        case "answer":
          session.answer(body.checkpointId, body.answer);
          break;
      }
    });
  });

  /** A virtual link's injected faults, changed while the run is set up or plays; the console's virtual panel applies them. */
  router.put("/:workshopId/runs/:runId/links/:panelId/faults", async (req, res) => {
    const { workshopId, runId, panelId } = parseParams(req, linkParams);
    authorize(runPolicy.control(await member(req, workshopId)), forbidden);
    const { faults } = parseBody(req, linkFaultsBody);
    const row = await findRun(workshopId, runId);
    const state = runs.effectiveState(row);
    if (state === "finished" || state === "failed") throw new HttpError("conflict", "This run has finished; its faults can no longer change.");
    const index = row.links.findIndex((l) => l.panelId === panelId);
    if (index < 0) throw notFound("This panel is not part of the run.");
    const link = row.links[index];
    if (link.kind !== "virtual") throw invalid("params.panelId", `this panel is linked as ${link.kind}; only a virtual panel takes injected faults`);
    const elements = row.panels.find((p) => p.panelId === panelId)?.definition.elements ?? [];
    faults.forEach((f, i) => {
      const problem = faultProblem(f, elements);
      if (problem) throw invalid(`body.faults.${i}.${problem.field}`, problem.message);
    });
    const links = row.links.map((l, i) => (i === index ? { ...link, faults } : l));
    await db.update(run).set({ links }).where(eq(run.id, runId));
    res.json(await consoleDetailOf(await findRun(workshopId, runId)));
  });

  router.post("/:workshopId/runs/:runId/rejudge", async (req, res) => {
    const { workshopId, runId } = parseParams(req, runParams);
    authorize(runPolicy.rejudge(await member(req, workshopId)), forbidden);
    const tolerance = parseBody(req, rejudgeBody);
    const row = await findRun(workshopId, runId);
    if (runs.session(runId)) throw new HttpError("conflict", "The run is still held by the bench; stop it or let it finish first.");
    const judged = await judgeStored(db, row, tolerance);
    await storeJudgement(db, runId, judged);
    await db.update(run).set({ tolerance }).where(eq(run.id, runId));
    res.json(await consoleDetailOf(await findRun(workshopId, runId)));
  });

  router.get("/:workshopId/runs/:runId/mismatches", async (req, res) => {
    const { workshopId, runId } = parseParams(req, runParams);
    authorize(runPolicy.read(await member(req, workshopId)), forbidden);
    const q = parseQuery(req, mismatchesQuery);
    await findRun(workshopId, runId);
    res.json(await mismatchRowsOf(db, runId, q));
  });

  router.get("/:workshopId/runs/:runId/export.json", async (req, res) => {
    const { workshopId, runId } = parseParams(req, runParams);
    authorize(runPolicy.read(await member(req, workshopId)), forbidden);
    const row = await findRun(workshopId, runId);
    res.set("content-disposition", `attachment; filename="run-${runId}.json"`);
    res.type("json").send(await exportJsonOf(db, row, runs));
  });

  router.get("/:workshopId/runs/:runId/junit.xml", async (req, res) => {
    const { workshopId, runId } = parseParams(req, runParams);
    authorize(runPolicy.read(await member(req, workshopId)), forbidden);
    const row = await findRun(workshopId, runId);
    res.set("content-type", "application/xml; charset=utf-8");
    res.set("content-disposition", `attachment; filename="run-${runId}.junit.xml"`);
    res.send(junitOf(await exportOf(db, row, runs)));
  });

  // ---- share links -----------------------------------------------------------------------

  const shareView = (s: typeof shareLink.$inferSelect) => ({
    id: s.id,
    createdAt: s.createdAt.toISOString(),
    expiresAt: s.expiresAt.toISOString(),
    revokedAt: s.revokedAt?.toISOString() ?? null,
    createdBy: s.createdById,
  });

  router.post("/:workshopId/runs/:runId/shares", async (req, res) => {
    const { workshopId, runId } = parseParams(req, runParams);
    authorize(sharePolicy.create(await member(req, workshopId)), forbidden);
    const body = parseBody(req, createShareBody);
    const actor = await requireActor(services, req);
    await findRun(workshopId, runId);
    const token = randomBytes(24).toString("base64url");
    const [row] = await db
      .insert(shareLink)
      .values({ id: randomUUID(), runId, tokenHash: hashShareToken(token), expiresAt: new Date(Date.now() + body.expiresInDays * 86_400_000), createdById: actor.userId })
      .returning();
    res.status(201).json({ ...shareView(row), url: `${services.baseUrl}/shared/${token}` });
  });

  router.get("/:workshopId/runs/:runId/shares", async (req, res) => {
    const { workshopId, runId } = parseParams(req, runParams);
    authorize(sharePolicy.list(await member(req, workshopId)), forbidden);
    await findRun(workshopId, runId);
    const rows = await db.select().from(shareLink).where(eq(shareLink.runId, runId)).orderBy(desc(shareLink.createdAt));
    res.json(rows.map(shareView));
  });

  router.delete("/:workshopId/runs/:runId/shares/:shareId", async (req, res) => {
    const { workshopId, runId, shareId } = parseParams(req, shareParams);
    authorize(sharePolicy.revoke(await member(req, workshopId)), forbidden);
    await findRun(workshopId, runId);
    const [existing] = await db.select().from(shareLink).where(and(eq(shareLink.id, shareId), eq(shareLink.runId, runId)));
    if (!existing) throw notFound("No such share link on this run.");
    const [row] = existing.revokedAt ? [existing] : await db.update(shareLink).set({ revokedAt: new Date() }).where(eq(shareLink.id, shareId)).returning();
    res.json(shareView(row));
  });

  return router;
}

/**
 * GET /api/shared/:token, without signing in: the one run's report, read-only. Revoked and
 * expired links answer 410 and say which; unknown tokens 404. Nothing else is reachable with it.
 */
export function sharedRouter(services: Services) {
  const { db, runs } = services;
  const router = Router();
  router.get("/:token", async (req, res) => {
    const shared = await sharedRunOf(db, req.params.token, res);
    if (!shared) return;
    const { row, expiresAt } = shared;
    // The report without who made it: a public page names no workshop member.
    const hideMaker = (report: ExportedReport<unknown>) => ({ ...report, run: { ...report.run, createdBy: null }, sharedUntil: expiresAt.toISOString() });
    res.type("json").send(await exportJsonOf(db, row, runs, hideMaker));
  });
  return router;
}

