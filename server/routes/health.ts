import { Router } from "express";
import { sql } from "drizzle-orm";
import type { HealthView } from "../../shared/api/workshops";
import type { Services } from "../http/context";

/** GET /api/health: is the app up, can it reach its database. Public, no data. */
export function healthRouter(services: Services) {
  const router = Router();
  router.get("/", async (_req, res) => {
    let database: HealthView["database"] = "ok";
    try {
      await services.db.execute(sql`select 1`);
    } catch {
      database = "unreachable";
    }
    const body: HealthView = {
      app: "ok",
      database,
      mail: services.outboxEnabled ? "outbox" : "smtp",
      version: services.version,
    };
    res.status(database === "ok" ? 200 : 503).json(body);
  });
  return router;
}
