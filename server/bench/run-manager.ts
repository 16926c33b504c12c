import { randomUUID } from "node:crypto";
import type { IncomingMessage } from "node:http";
import type { Duplex } from "node:stream";
import { and, eq, inArray, isNull, lt, or } from "drizzle-orm";
import { WebSocketServer, type WebSocket } from "ws";
import { fromNodeHeaders } from "better-auth/node";
import { runChecks, watcherMessage, type WatcherMessage } from "../../shared/api/runs";
import { isWorkshopRole } from "../../shared/workshop/roles";
import type { Auth } from "../auth/auth";
import type { Database } from "../db/client";
import { member, run, runElementResult } from "../db/schema";
import { runPolicy } from "../policies/run";
import type { UpgradeRouter } from "../realtime/upgrades";
import { panelForDeviceToken } from "../routes/panels";
import { RunSession } from "./run-session";
import { judgeRun, loadRecordingSegments } from "./store";

export const BENCH_WS_PREFIX = "/ws/bench/runs";
export const WATCH_WS_PREFIX = "/ws/runs";

/** States in which a session holds the run; seen from another process without a fresh alive stamp, the run was interrupted. */
export const HELD_STATES = ["ready", "playing", "paused", "seeking"] as const;
/** A holder that has not stamped the run for this long is gone. */
export const STALE_AFTER_MS = 10_000;

/** Close codes for refused link and watcher sockets (4000 + the nearest HTTP status). */
export const CLOSE = {
  replaced: 4000,
  badRequest: 4400,
  unauthorized: 4401,
  forbidden: 4403,
  notFound: 4404,
  conflict: 4409,
  gone: 4410,
  internal: 4500,
} as const;

type RunRow = typeof run.$inferSelect;

export interface RunManagerDeps {
  db: Database;
  auth: Auth;
  upgrades: UpgradeRouter;
  trustedOrigins: string[];
}

/**
 * Runs held by this server process: their sessions, the panel link sockets
 * (/ws/bench/runs/:runId/panels/:panelId) and the watchers (/ws/runs/:runId).
 */
export class RunManager {
  readonly processId = randomUUID();
  private readonly sessions = new Map<string, RunSession>();
  private readonly opening = new Map<string, Promise<RunSession>>();
  private readonly watchers = new Map<string, Set<WebSocket>>();
  private readonly wss = new WebSocketServer({ noServer: true, maxPayload: 64 * 1024 });

  constructor(private readonly deps: RunManagerDeps) {
    deps.upgrades.add(BENCH_WS_PREFIX, (request, socket, head, url) => void this.upgradeLink(request, socket, head, url));
    deps.upgrades.add(WATCH_WS_PREFIX, (request, socket, head, url) => void this.upgradeWatcher(request, socket, head, url));
  }

  /** At start: runs whose holder stopped stamping them were interrupted (a restart, a crash). */
  async markInterrupted(): Promise<number> {
    const stale = new Date(Date.now() - STALE_AFTER_MS);
    const rows = await this.deps.db
      .update(run)
      .set({ state: "interrupted", heldBy: null })
      .where(and(inArray(run.state, [...HELD_STATES]), or(isNull(run.aliveAt), lt(run.aliveAt, stale))))
      .returning({ id: run.id });
    return rows.length;
  }

  session(runId: string): RunSession | undefined {
    return this.sessions.get(runId);
  }

  /** The state to show: a held state without a live holder reads as interrupted. */
  effectiveState(row: RunRow): RunRow["state"] {
    if (!(HELD_STATES as readonly string[]).includes(row.state)) return row.state;
    if (this.sessions.has(row.id)) {
      const live = this.sessions.get(row.id)!.view().state;
      // A session reads finished once its results are stored, but `row` may have been read just
      // before: then it has no counts yet, so it keeps its own state and the reader asks again.
      // (Seen as a finished run with every count 0 beside failing elements.)
      return live === "finished" ? row.state : live;
    }
    const fresh = row.aliveAt && Date.now() - row.aliveAt.getTime() < STALE_AFTER_MS;
    return row.heldBy && row.heldBy !== this.processId && fresh ? row.state : "interrupted";
  }

  /** The run's session in this process, opened (segments loaded, links opened) when needed. */
  async ensureSession(row: RunRow): Promise<RunSession> {
    const existing = this.sessions.get(row.id);
    if (existing) return existing;
    const pending = this.opening.get(row.id);
    if (pending) return pending;
    const opening = (async () => {
      const loaded = await loadRecordingSegments(this.deps.db, row.recordingId);
      const session = await RunSession.open(
        {
          db: this.deps.db,
          processId: this.processId,
          broadcast: (runId, message) => this.broadcast(runId, message),
          judge: (runId) => judgeRun(this.deps.db, runId),
          onClosed: (runId) => this.sessions.delete(runId),
          elementStatuses: (runId, panelId) =>
            this.deps.db
              .select({ elementId: runElementResult.elementId, status: runElementResult.status })
              .from(runElementResult)
              .where(and(eq(runElementResult.runId, runId), eq(runElementResult.panelId, panelId))),
        },
        row,
        loaded,
      );
      this.sessions.set(row.id, session);
      await this.deps.db
        .update(run)
        .set({ state: session.view().state, heldBy: this.processId, aliveAt: new Date(), startedAt: row.startedAt ?? new Date() })
        .where(eq(run.id, row.id));
      return session;
    })();
    this.opening.set(row.id, opening);
    try {
      return await opening;
    } finally {
      this.opening.delete(row.id);
    }
  }

  broadcast(runId: string, message: WatcherMessage) {
    const set = this.watchers.get(runId);
    if (!set || set.size === 0) return;
    // Validated before it leaves, so a watcher never receives what the contract does not allow.
    const parsed = watcherMessage.safeParse(message);
    if (!parsed.success) {
      console.error(`[run ${runId}] watcher message refused by its schema:`, parsed.error.issues[0]);
      return;
    }
    const text = JSON.stringify(parsed.data);
    for (const ws of set) if (ws.readyState === ws.OPEN) ws.send(text);
  }

  async closeAll() {
    for (const session of [...this.sessions.values()]) await session.interrupt();
    for (const set of this.watchers.values()) for (const ws of set) ws.close(1001, "the server is stopping");
    this.wss.close();
  }

  // ---- sockets -------------------------------------------------------------------------

  private async membershipOf(request: IncomingMessage, workshopId: string) {
    const session = await this.deps.auth.api.getSession({ headers: fromNodeHeaders(request.headers) });
    if (!session) return { refused: [CLOSE.unauthorized, "sign in first: no session cookie"] as const };
    const [m] = await this.deps.db
      .select({ role: member.role, memberId: member.id })
      .from(member)
      .where(and(eq(member.organizationId, workshopId), eq(member.userId, session.user.id)));
    if (!m || !isWorkshopRole(m.role)) return { refused: [CLOSE.notFound, "no such run"] as const };
    return { membership: { workshopId, workshopName: "", memberId: m.memberId, role: m.role } };
  }

  private originTrusted(request: IncomingMessage) {
    const origin = request.headers.origin;
    return !!origin && this.deps.trustedOrigins.includes(origin);
  }

  /** Completes the upgrade, then either hands the socket on or closes it with a code and a reason. */
  private accept(request: IncomingMessage, socket: Duplex, head: Buffer, then: (ws: WebSocket) => void) {
    this.wss.handleUpgrade(request, socket, head, then);
  }

  private refuseWith(request: IncomingMessage, socket: Duplex, head: Buffer, code: number, reason: string) {
    this.accept(request, socket, head, (ws) => ws.close(code, reason));
  }

  private async upgradeLink(request: IncomingMessage, socket: Duplex, head: Buffer, url: URL) {
    try {
      const m = /^\/ws\/bench\/runs\/([^/]+)\/panels\/([^/]+)$/.exec(url.pathname);
      if (!m) return this.refuseWith(request, socket, head, CLOSE.notFound, "no such link path: /ws/bench/runs/:runId/panels/:panelId");
      const [runId, panelId] = [decodeURIComponent(m[1]), decodeURIComponent(m[2])];
      const [row] = await this.deps.db.select().from(run).where(eq(run.id, runId));
      const link = row?.links.find((l) => l.panelId === panelId);
      const token = url.searchParams.get("token") ?? /^Bearer\s+(\S+)$/i.exec(request.headers.authorization ?? "")?.[1] ?? null;
      if (!row) return this.refuseWith(request, socket, head, CLOSE.notFound, "no such run");
      if (token !== null) {
        // A board on the network: its panel's device token is its only credential.
        const owner = await panelForDeviceToken(this.deps.db, token);
        if (!owner || owner.workshopId !== row.workshopId) return this.refuseWith(request, socket, head, CLOSE.unauthorized, "device token unknown or revoked");
        if (owner.panelId !== panelId) return this.refuseWith(request, socket, head, CLOSE.forbidden, "this device token belongs to another panel");
        if (!link) return this.refuseWith(request, socket, head, CLOSE.notFound, "this panel is not part of the run");
        if (link.kind !== "network") return this.refuseWith(request, socket, head, CLOSE.badRequest, `this panel is linked as ${link.kind} in this run, not network`);
      } else {
        if (!this.originTrusted(request)) return this.refuseWith(request, socket, head, CLOSE.forbidden, "origin not trusted");
        const who = await this.membershipOf(request, row.workshopId);
        if (who.refused) return this.refuseWith(request, socket, head, who.refused[0], who.refused[1]);
        if (!runPolicy.drive(who.membership)) return this.refuseWith(request, socket, head, CLOSE.forbidden, "your role cannot drive a panel in a run");
        if (!link) return this.refuseWith(request, socket, head, CLOSE.notFound, "this panel is not part of the run");
        if (link.kind !== "virtual") return this.refuseWith(request, socket, head, CLOSE.badRequest, `this panel is linked as ${link.kind} in this run: ${link.kind === "network" ? "connect with a device token" : "the bench opens its port"}`);
      }
      const state = this.effectiveState(row);
      if (state === "finished" || state === "failed") return this.refuseWith(request, socket, head, CLOSE.gone, "the run has finished");
      const session = await this.ensureSession(row);
      this.accept(request, socket, head, (ws) => {
        if (!session.attachSocket(panelId, ws, link.kind as "virtual" | "network")) ws.close(CLOSE.gone, "the run has finished");
      });
    } catch (error) {
      console.error("[bench] link upgrade failed:", error);
      this.refuseWith(request, socket, head, CLOSE.internal, "the bench could not take this link");
    }
  }

  private async upgradeWatcher(request: IncomingMessage, socket: Duplex, head: Buffer, url: URL) {
    try {
      const runId = decodeURIComponent(url.pathname.slice(WATCH_WS_PREFIX.length + 1));
      if (!this.originTrusted(request)) return this.refuseWith(request, socket, head, CLOSE.forbidden, "origin not trusted");
      const [row] = await this.deps.db.select().from(run).where(eq(run.id, runId));
      if (!row) return this.refuseWith(request, socket, head, CLOSE.notFound, "no such run");
      const who = await this.membershipOf(request, row.workshopId);
      if (who.refused) return this.refuseWith(request, socket, head, who.refused[0], who.refused[1]);
      if (!runPolicy.read(who.membership)) return this.refuseWith(request, socket, head, CLOSE.forbidden, "your role cannot watch runs");
      this.accept(request, socket, head, (ws) => {
        let set = this.watchers.get(runId);
        if (!set) this.watchers.set(runId, (set = new Set()));
        set.add(ws);
        const drop = () => set!.delete(ws);
        ws.on("close", drop);
        ws.on("error", drop);
        const session = this.sessions.get(runId);
        const view = session?.view();
        const first: WatcherMessage = {
          type: "player",
          state: view?.state ?? this.effectiveState(row),
          positionMs: view?.positionMs ?? row.positionMs,
          speed: view?.speed ?? row.speed,
          durationMs: view?.durationMs ?? row.durationMs,
          loop: view?.loop ?? null,
        };
        ws.send(JSON.stringify(watcherMessage.parse(first)));
        for (const link of view?.links ?? []) ws.send(JSON.stringify(watcherMessage.parse({ type: "link", link })));
        // The checks as they stand: the live set-up check from the session, else what was stored.
        const checks = session ? session.checksView() : { ...runChecks.parse(row.checks ?? {}), setup: null };
        ws.send(JSON.stringify(watcherMessage.parse({ type: "checks", checks })));
      });
    } catch (error) {
      console.error("[bench] watcher upgrade failed:", error);
      this.refuseWith(request, socket, head, CLOSE.internal, "could not watch this run");
    }
  }
}

