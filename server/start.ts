import http from "node:http";
import type { AddressInfo } from "node:net";
import { readFileSync } from "node:fs";
import { createApp } from "./app";
import { createAuth } from "./auth/auth";
import { connectDatabase } from "./db/client";
import type { ServerEnv } from "./env";
import type { Services } from "./http/context";
import { startFakeSmtp, type FakeSmtp } from "./mail/fake-smtp";
import { createSmtpMailer } from "./mail/mailer";
import { UpgradeRouter } from "./realtime/upgrades";
import { createStorage } from "./storage";
import { Jobs } from "./jobs/queue";
import { CaptureManager } from "./capture/manager";
import { RunManager } from "./bench/run-manager";

export interface RunningServer {
  url: string;
  services: Services;
  fakeSmtp: FakeSmtp | null;
  close(): Promise<void>;
}

const version = (JSON.parse(readFileSync(new URL("../package.json", import.meta.url), "utf8")) as { version: string }).version;

/** Starts everything the app needs in this process: database pool, mail, auth, HTTP. */
export async function startServer(env: ServerEnv, extraOrigins: string[] = []): Promise<RunningServer> {
  const db = connectDatabase(env.DATABASE_URL);
  const httpServer = http.createServer();
  // Every socket, so that close() can end those a WebSocket took over (panels, watchers,
  // captures): they are no longer HTTP connections, and a board that never hangs up would
  // otherwise hold the server open.
  const sockets = new Set<import("node:net").Socket>();
  httpServer.on("connection", (socket) => {
    sockets.add(socket);
    socket.once("close", () => sockets.delete(socket));
  });
  await new Promise<void>((resolve, reject) => {
    httpServer.once("error", reject);
    httpServer.listen(env.PORT, env.HOST, () => resolve());
  });
  // The port is taken first (so its number is known for links and mail), but the app is wired
  // up after the database, queue and runs are ready. Until then every request gets a quick 503
  // instead of hanging with no answer (a health check that waits forever never retries).
  let handle: ((req: http.IncomingMessage, res: http.ServerResponse) => void) | null = null;
  httpServer.on("request", (req, res) => {
    if (handle) return handle(req, res);
    res.writeHead(503, { "content-type": "application/json", "retry-after": "1" });
    res.end(JSON.stringify({ error: { code: "unavailable", message: "Panelproof is starting; try again in a moment." } }));
  });
  const port = (httpServer.address() as AddressInfo).port;
  const baseUrl = env.BASE_URL ?? `http://${env.HOST}:${port}`;

  let fakeSmtp: FakeSmtp | null = null;
  if (env.MAIL_FAKE_PORT !== undefined) fakeSmtp = await startFakeSmtp(db, env.MAIL_FAKE_PORT);
  const mailer = fakeSmtp
    ? createSmtpMailer({ host: "127.0.0.1", port: fakeSmtp.port, secure: false, plain: true, from: env.MAIL_FROM })
    : createSmtpMailer({
        host: env.SMTP_HOST ?? "127.0.0.1",
        port: env.SMTP_PORT ?? 25,
        secure: env.SMTP_SECURE === "true",
        user: env.SMTP_USER,
        password: env.SMTP_PASSWORD,
        from: env.MAIL_FROM,
      });

  const trustedOrigins = [baseUrl, ...extraOrigins];
  const auth = createAuth({
    db,
    baseUrl,
    secret: env.AUTH_SECRET,
    mailer,
    extraOrigins,
    rateLimit: env.NODE_ENV === "production",
  });
  const upgrades = new UpgradeRouter();
  upgrades.attach(httpServer);
  const storage = createStorage(env);
  const jobs = new Jobs({
    databaseUrl: env.DATABASE_URL,
    db,
    storage,
    maxUploadBytes: env.MAX_UPLOAD_BYTES,
    pollingIntervalSeconds: env.IMPORT_POLL_SECONDS,
  });
  // Each step of start-up is timed on stderr, so a start that hangs says where.
  const began = performance.now();
  const step = (what: string) => console.error(`[panelproof] start: ${what} (${Math.round(performance.now() - began)} ms)`);
  await jobs.start();
  step("job queue ready");
  const captures = new CaptureManager({ db, auth, upgrades, trustedOrigins, udpHost: env.CAPTURE_UDP_HOST });
  const runs = new RunManager({ db, auth, upgrades, trustedOrigins });
  // Runs a previous process held and no longer stamps were interrupted; play resumes them.
  await runs.markInterrupted();
  step("interrupted runs marked");
  const services: Services = {
    db,
    auth,
    baseUrl,
    outboxEnabled: fakeSmtp !== null,
    version,
    upgrades,
    trustedOrigins,
    storage,
    jobs,
    captures,
    runs,
    maxUploadBytes: env.MAX_UPLOAD_BYTES,
    mailer,
  };
  handle = createApp(services, { clientDir: env.CLIENT_DIR, trustedOrigins, behindProxy: env.BEHIND_PROXY === "true" });

  return {
    url: baseUrl,
    services,
    fakeSmtp,
    async close() {
      httpServer.closeAllConnections();
      const closed = new Promise<void>((resolve) => httpServer.close(() => resolve()));
      // Captures save what they caught and imports finish their transaction before the pool closes.
      await captures.closeAll();
      // Running runs keep what arrived and are marked interrupted; play resumes them.
      await runs.closeAll();
      for (const socket of sockets) socket.destroy();
      await closed;
      await jobs.stop();
      await fakeSmtp?.close();
      mailer.close();
      await db.$client.end();
    },
  };
}
