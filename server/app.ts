import { ClientPage } from "./client-chunks";
import { preloadsFor, screenModuleFor } from "./preloads";
import path from "node:path";
import express, { type RequestHandler } from "express";
import { toNodeHandler } from "better-auth/node";
import type { Services } from "./http/context";
import { HttpError, errorHandler, unknownApiRoute } from "./http/errors";
import { healthRouter } from "./routes/health";
import { invitationsRouter } from "./routes/invitations";
import { meRouter } from "./routes/me";
import { outboxRouter } from "./routes/outbox";
import { workshopsRouter } from "./routes/workshops";
import { airframesRouter } from "./routes/airframes";
import { capturesRouter } from "./routes/captures";
import { recordingsRouter } from "./routes/recordings";
import { panelsRouter } from "./routes/panels";
import { runsRouter, sharedRouter } from "./routes/runs";
import { runReportsRouter } from "./routes/run-reports";
import { benchRouter } from "./routes/bench";

export interface AppOptions {
  /** Folder with the built client; served with a fallback to index.html for client routes. */
  clientDir?: string;
  trustedOrigins: string[];
  /** True when a reverse proxy in front sets X-Forwarded-For. */
  behindProxy?: boolean;
}

/**
 * Browsers send cookies with cross-site requests in some cases; a changing request
 * that names a foreign Origin is refused before any route sees it.
 */
function sameOriginWrites(trusted: string[]): RequestHandler {
  return (req, _res, next) => {
    if (req.method === "GET" || req.method === "HEAD" || req.method === "OPTIONS") return next();
    const origin = req.get("origin");
    if (origin && !trusted.includes(origin)) return next(new HttpError("forbidden", `Requests from ${origin} are not accepted.`));
    next();
  };
}

export function createApp(services: Services, options: AppOptions) {
  const app = express();
  app.disable("x-powered-by");
  app.set("trust proxy", "loopback");

  // better-auth reads its own bodies, so it is mounted before the JSON parser. It sees
  // a Web Request without the socket, so hand it the peer address for rate limiting,
  // overwriting whatever a client sent (set behind a proxy that you trust instead).
  const authHandler = toNodeHandler(services.auth);
  app.all("/api/auth/*splat", (req, res) => {
    if (!options.behindProxy) req.headers["x-forwarded-for"] = req.socket.remoteAddress ?? "";
    return authHandler(req, res);
  });

  app.use("/api", express.json({ limit: "1mb" }), sameOriginWrites(options.trustedOrigins));
  app.use("/api/health", healthRouter(services));
  app.use("/api/me", meRouter(services));
  app.use("/api/workshops", workshopsRouter(services));
  app.use("/api/workshops", airframesRouter(services));
  app.use("/api/workshops", recordingsRouter(services));
  app.use("/api/workshops", capturesRouter(services));
  app.use("/api/workshops", panelsRouter(services));
  app.use("/api/workshops", runsRouter(services));
  app.use("/api/workshops", benchRouter(services));
  app.use("/api/shared", sharedRouter(services));
  app.use("/api", runReportsRouter(services));
  app.use("/api/invitations", invitationsRouter(services));
  app.use("/api/outbox", outboxRouter(services));
  app.use("/api", unknownApiRoute);

  if (options.clientDir) {
    const dir = path.resolve(options.clientDir);
    app.use(express.static(dir, { index: false, maxAge: "1h" }));
    const page = new ClientPage(dir);
    // Client routes (React Router) all load the same page, naming what the screen will need first.
    app.get("/{*splat}", (req, res) => {
      const preloads = preloadsFor(req.path);
      if (preloads.length) res.set("link", preloads.map((p) => `<${p}>; rel=preload; as=fetch; crossorigin=anonymous`).join(", "));
      res.set("cache-control", "public, max-age=0");
      res.type("html").send(page.html(screenModuleFor(req.path)));
    });
  }
  app.use(errorHandler);
  return app;
}
