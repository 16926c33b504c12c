import dgram from "node:dgram";
import { randomBytes, randomUUID } from "node:crypto";
import type { IncomingMessage } from "node:http";
import type { Duplex } from "node:stream";
import { and, desc, eq, isNull, lt, ne, notInArray, or } from "drizzle-orm";
import { WebSocketServer, type WebSocket } from "ws";
import { fromNodeHeaders } from "better-auth/node";
import type { CaptureView } from "../../shared/api/recordings";
import type { ChannelDefinition } from "../../shared/recording/channels";
import { recordingLines, RECORDING_FORMAT, RECORDING_VERSION, type RecordingHeader } from "../../shared/recording/recording-file";
import { utf8ByteLength } from "../../shared/recording/text-input";
import { isWorkshopRole } from "../../shared/workshop/roles";
import type { Auth } from "../auth/auth";
import type { Database } from "../db/client";
import { capture, member } from "../db/schema";
import { HttpError } from "../http/errors";
import { capturePolicy } from "../policies/capture";
import { refuse, type UpgradeRouter } from "../realtime/upgrades";
import { addDraftChannels } from "../recordings/catalogue";
import { RecordingWriter } from "../recordings/writer";
import { CaptureSession, hashToken, tokenMatches } from "./session";

export const CAPTURE_WS_PREFIX = "/ws/captures";

/** How often a holding process stamps its live captures (alive_at and the counters so far). */
export const CAPTURE_STAMP_MS = 1_000;
/** A capturing row not stamped for this long belongs to a process that is gone (as for runs). */
export const CAPTURE_STALE_AFTER_MS = 10_000;

const INTERRUPTED_WHY = "the server process holding this capture stopped without saving it; what arrived was lost";

interface LiveCapture {
  id: string;
  workshopId: string;
  airframeId: string;
  airframeName: string;
  name: string;
  tokenHash: string;
  createdById: string | null;
  startedAt: Date;
  session: CaptureSession;
  udp: dgram.Socket | null;
  udpPort: number | null;
  sockets: Set<WebSocket>;
  timer: NodeJS.Timeout;
  state: CaptureView["state"];
  recordingId: string | null;
  stoppedAt: Date | null;
}

export interface CaptureManagerDeps {
  db: Database;
  auth: Auth;
  upgrades: UpgradeRouter;
  trustedOrigins: string[];
  udpHost: string;
}

/**
 * Live captures held by this server process: a UDP socket per capture and WebSocket
 * connections at /ws/captures/<id>, both feeding one CaptureSession. Stopping saves what
 * arrived as a recording through the same RecordingWriter as imports.
 */
export class CaptureManager {
  /** Written into `held_by` of the captures this process listens for. */
  readonly processId = randomUUID();
  private readonly live = new Map<string, LiveCapture>();
  private readonly wss = new WebSocketServer({ noServer: true, maxPayload: 1024 * 1024 });
  private readonly stamper: NodeJS.Timeout;

  constructor(private readonly deps: CaptureManagerDeps) {
    deps.upgrades.add(CAPTURE_WS_PREFIX, (request, socket, head, url) => void this.upgrade(request, socket, head, url));
    this.stamper = setInterval(() => void this.stamp(), CAPTURE_STAMP_MS);
    this.stamper.unref();
    // Captures a previous process held are interrupted now, not only when someone lists them.
    void this.markInterrupted().catch((error) => console.error("[capture] marking interrupted captures failed:", error));
  }

  /**
   * Says "still here" for every capture this process holds, with the counters so far, so a
   * capture whose process dies keeps the counts of its last second.
   */
  private async stamp(): Promise<void> {
    for (const live of this.live.values()) {
      const c = live.session.counters;
      await this.deps.db
        .update(capture)
        .set({ aliveAt: new Date(), heldBy: this.processId, received: c.received, malformed: c.malformed, outOfOrder: c.outOfOrder, duplicates: c.duplicates, dropped: c.dropped, lastError: c.lastError })
        .where(and(eq(capture.id, live.id), eq(capture.state, "capturing")))
        .catch((error) => console.error(`[capture ${live.id}] stamp failed:`, error.message));
    }
  }

  /**
   * Captures left "capturing" by a process that is gone (not this one, not stamped for 10 s)
   * become "interrupted". Their frames lived in that process's memory and are lost; the counters
   * of the last stamp stay. Runs at start, and before captures are listed or shown.
   */
  async markInterrupted(workshopId?: string): Promise<number> {
    const stale = new Date(Date.now() - CAPTURE_STALE_AFTER_MS);
    const where = [
      eq(capture.state, "capturing"),
      or(isNull(capture.heldBy), ne(capture.heldBy, this.processId)),
      or(isNull(capture.aliveAt), lt(capture.aliveAt, stale)),
    ];
    if (workshopId) where.push(eq(capture.workshopId, workshopId));
    const mine = [...this.live.keys()];
    if (mine.length > 0) where.push(notInArray(capture.id, mine));
    const marked = await this.deps.db
      .update(capture)
      .set({ state: "interrupted", heldBy: null, lastError: INTERRUPTED_WHY, stoppedAt: new Date() })
      .where(and(...where))
      .returning({ id: capture.id });
    return marked.length;
  }

  async start(input: {
    workshopId: string;
    airframeId: string;
    airframeName: string;
    channels: ChannelDefinition[];
    name: string;
    udpPort?: number;
    createdById: string;
  }): Promise<{ view: CaptureView; token: string }> {
    const id = randomUUID();
    const token = randomBytes(24).toString("base64url");
    const session = new CaptureSession({ channels: input.channels, token });
    const udp = dgram.createSocket({ type: "udp4", recvBufferSize: 4 * 1024 * 1024 });
    await new Promise<void>((resolve, reject) => {
      udp.once("error", (error: NodeJS.ErrnoException) =>
        reject(
          error.code === "EADDRINUSE"
            ? new HttpError("conflict", `UDP port ${input.udpPort} is already in use; choose another or 0 for any free port.`)
            : error.code === "EACCES"
              ? new HttpError("conflict", `UDP port ${input.udpPort} needs privileges this server does not have; choose one above 1023.`)
              : error,
        ),
      );
      udp.bind(input.udpPort ?? 0, this.deps.udpHost, () => resolve());
    });
    // After binding, socket errors (e.g. ICMP unreachable echoes) must not end the process.
    udp.on("error", (error) => (session.counters.lastError = `UDP socket: ${error.message}`));
    udp.on("message", (datagram) => session.accept(datagram));
    const live: LiveCapture = {
      id,
      workshopId: input.workshopId,
      airframeId: input.airframeId,
      airframeName: input.airframeName,
      name: input.name,
      tokenHash: hashToken(token),
      createdById: input.createdById,
      startedAt: new Date(),
      session,
      udp,
      udpPort: udp.address().port,
      sockets: new Set(),
      timer: setInterval(() => session.tick(), 100),
      state: "capturing",
      recordingId: null,
      stoppedAt: null,
    };
    live.timer.unref();
    try {
      await this.deps.db.insert(capture).values({
        id,
        workshopId: input.workshopId,
        airframeId: input.airframeId,
        name: input.name,
        state: "capturing",
        udpPort: live.udpPort,
        tokenHash: live.tokenHash,
        createdById: input.createdById,
        startedAt: live.startedAt,
        heldBy: this.processId,
        aliveAt: live.startedAt,
      });
    } catch (error) {
      this.release(live);
      throw error;
    }
    this.live.set(id, live);
    return { view: this.viewOf(live), token };
  }

  /** The capture's view: live from memory when this process holds it, else from its row. */
  async view(workshopId: string, id: string): Promise<CaptureView | null> {
    const live = this.live.get(id);
    if (live && live.workshopId === workshopId) return this.viewOf(live);
    let [row] = await this.deps.db
      .select()
      .from(capture)
      .where(and(eq(capture.id, id), eq(capture.workshopId, workshopId)));
    if (!row) return null;
    if (row.state === "capturing" && (await this.markInterrupted(workshopId)) > 0) {
      [row] = await this.deps.db.select().from(capture).where(eq(capture.id, id));
    }
    return this.rowView(row);
  }

  /** This workshop's captures, newest first: live ones from memory, the rest from their rows. */
  async list(workshopId: string, limit = 100): Promise<CaptureView[]> {
    await this.markInterrupted(workshopId);
    const rows = await this.deps.db
      .select()
      .from(capture)
      .where(eq(capture.workshopId, workshopId))
      .orderBy(desc(capture.startedAt))
      .limit(limit);
    return rows.map((row) => {
      const live = this.live.get(row.id);
      return live ? this.viewOf(live) : this.rowView(row);
    });
  }

  private rowView(row: typeof capture.$inferSelect): CaptureView {
    return {
      id: row.id,
      name: row.name,
      state: row.state as CaptureView["state"],
      udpPort: row.udpPort,
      webSocketPath: `${CAPTURE_WS_PREFIX}/${row.id}`,
      received: row.received,
      malformed: row.malformed,
      outOfOrder: row.outOfOrder,
      duplicates: row.duplicates,
      dropped: row.dropped,
      lastError: row.lastError,
      startedAt: row.startedAt.toISOString(),
      latest: {},
      recordingId: row.recordingId,
      airframeId: row.airframeId,
      stoppedAt: row.stoppedAt?.toISOString() ?? null,
    };
  }

  private viewOf(live: LiveCapture): CaptureView {
    const c = live.session.counters;
    return {
      id: live.id,
      name: live.name,
      state: live.state,
      udpPort: live.udpPort,
      webSocketPath: `${CAPTURE_WS_PREFIX}/${live.id}`,
      received: c.received,
      malformed: c.malformed,
      outOfOrder: c.outOfOrder,
      duplicates: c.duplicates,
      dropped: c.dropped,
      lastError: c.lastError,
      startedAt: live.startedAt.toISOString(),
      latest: { ...live.session.latest },
      recordingId: live.recordingId,
      airframeId: live.airframeId,
      frames: live.session.frameCount,
      stoppedAt: live.stoppedAt?.toISOString() ?? null,
    };
  }

  /**
   * Stops listening and saves what arrived as a recording (one transaction). Nothing captured
   * leaves the capture "stopped" without a recording.
   */
  async stop(workshopId: string, id: string): Promise<CaptureView | null> {
    const live = this.live.get(id);
    if (!live || live.workshopId !== workshopId) {
      const view = await this.view(workshopId, id);
      if (view && view.state === "capturing") {
        throw new HttpError("conflict", "This capture is held by another server process (or one that stopped); it cannot be stopped here.");
      }
      return view;
    }
    this.live.delete(id);
    this.release(live);
    live.stoppedAt = new Date();
    const { frames, channels, drafts } = live.session.finish();
    const c = live.session.counters;
    try {
      if (frames.length === 0) {
        live.state = "stopped";
        c.lastError ??= "nothing was captured: no valid message arrived";
      } else {
        const header: RecordingHeader = {
          format: RECORDING_FORMAT,
          version: RECORDING_VERSION,
          airframe: live.airframeName.slice(0, 120),
          channels,
          source: "capture",
        };
        let sizeBytes = 0;
        for (const line of recordingLines(header, frames)) sizeBytes += utf8ByteLength(line);
        live.recordingId = await this.deps.db.transaction(async (tx) => {
          const writer = new RecordingWriter(tx, {
            workshopId: live.workshopId,
            airframeId: live.airframeId,
            name: live.name,
            source: "capture",
            channels,
            createdById: live.createdById,
            sizeBytes,
            notes: `Captured live: ${c.received} messages received, ${c.malformed} malformed, ${c.outOfOrder} out of order, ${c.duplicates} duplicates, ${c.dropped} dropped.`,
          });
          for (let i = 0; i < frames.length; i += 1000) await writer.push(frames.slice(i, i + 1000));
          await addDraftChannels(tx, live.airframeId, drafts);
          return writer.finish();
        });
        live.state = "saved";
      }
    } catch (error) {
      console.error(`[capture ${id}] saving failed:`, error);
      live.state = "failed";
      c.lastError = "saving the capture failed on the server; it has been logged";
    }
    await this.deps.db
      .update(capture)
      .set({
        state: live.state,
        received: c.received,
        malformed: c.malformed,
        outOfOrder: c.outOfOrder,
        duplicates: c.duplicates,
        dropped: c.dropped,
        lastError: c.lastError,
        recordingId: live.recordingId,
        stoppedAt: live.stoppedAt,
        heldBy: null,
      })
      .where(eq(capture.id, id));
    return this.viewOf(live);
  }

  private release(live: LiveCapture): void {
    clearInterval(live.timer);
    try {
      live.udp?.close();
    } catch {
      /* already closed */
    }
    live.udp = null;
    for (const ws of live.sockets) ws.close(1000, "capture stopped");
  }

  /** On server shutdown: stop listening and keep what was captured as recordings. */
  async closeAll(): Promise<void> {
    clearInterval(this.stamper);
    for (const live of [...this.live.values()]) await this.stop(live.workshopId, live.id).catch(() => {});
    this.wss.close();
  }

  /**
   * Exporters authorise with the capture token (`?token=`), browsers with their session cookie
   * (only from a trusted Origin: browsers send cookies on cross-site upgrades too).
   */
  private async upgrade(request: IncomingMessage, socket: Duplex, head: Buffer, url: URL): Promise<void> {
    try {
      const id = url.pathname.slice(CAPTURE_WS_PREFIX.length + 1);
      const live = this.live.get(id);
      if (!live) return refuse(socket, 404, "Not Found");
      const token = url.searchParams.get("token");
      if (token !== null) {
        if (!tokenMatches(token, live.tokenHash)) return refuse(socket, 401, "Unauthorized");
      } else {
        const origin = request.headers.origin;
        if (!origin || !this.deps.trustedOrigins.includes(origin)) return refuse(socket, 403, "Forbidden");
        const session = await this.deps.auth.api.getSession({ headers: fromNodeHeaders(request.headers) });
        if (!session) return refuse(socket, 401, "Unauthorized");
        const [m] = await this.deps.db
          .select({ role: member.role, memberId: member.id })
          .from(member)
          .where(and(eq(member.organizationId, live.workshopId), eq(member.userId, session.user.id)));
        if (!m || !isWorkshopRole(m.role)) return refuse(socket, 404, "Not Found");
        const membership = { workshopId: live.workshopId, workshopName: "", memberId: m.memberId, role: m.role };
        if (!capturePolicy.feed(membership)) return refuse(socket, 403, "Forbidden");
      }
      if (!this.live.has(id)) return refuse(socket, 404, "Not Found");
      this.wss.handleUpgrade(request, socket, head, (ws) => {
        live.sockets.add(ws);
        ws.on("message", (data, isBinary) => {
          const raw = isBinary ? Buffer.from(data as Buffer) : data.toString();
          live.session.accept(raw, { authorised: true });
        });
        ws.on("close", () => live.sockets.delete(ws));
        ws.on("error", () => live.sockets.delete(ws));
      });
    } catch (error) {
      console.error("[capture] upgrade failed:", error);
      refuse(socket, 500, "Internal Server Error");
    }
  }
}
