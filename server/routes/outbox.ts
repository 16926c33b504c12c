import { Router } from "express";
import { desc, eq } from "drizzle-orm";
import { z } from "zod";
import type { OutboxMessageView } from "../../shared/api/workshops";
import { outboxMessage } from "../db/schema";
import type { Services } from "../http/context";
import { notFound } from "../http/errors";
import { parseParams, parseQuery } from "../http/validate";
import { authorize } from "../policies/actor";
import { outboxPolicy } from "../policies/outbox";

const listQuery = z.object({ to: z.string().max(254).optional() });

function view(row: typeof outboxMessage.$inferSelect): OutboxMessageView {
  return {
    id: row.id,
    from: row.fromAddress,
    to: row.toAddresses,
    subject: row.subject,
    text: row.text,
    html: row.html,
    receivedAt: row.receivedAt.toISOString(),
  };
}

/** Mail caught by the local fake SMTP server. Off (404) when a real SMTP host is configured. */
export function outboxRouter(services: Services) {
  const { db } = services;
  const router = Router();
  const gone = () => notFound("The outbox exists only while mail goes to the local fake SMTP server.");

  router.get("/", async (req, res) => {
    authorize(outboxPolicy.read(services.outboxEnabled), gone);
    const { to } = parseQuery(req, listQuery);
    const rows = await db.select().from(outboxMessage).orderBy(desc(outboxMessage.receivedAt)).limit(200);
    const wanted = to?.toLowerCase();
    res.json(rows.map(view).filter((m) => !wanted || m.to.some((t) => t.toLowerCase() === wanted)));
  });

  router.get("/:messageId", async (req, res) => {
    authorize(outboxPolicy.read(services.outboxEnabled), gone);
    const { messageId } = parseParams(req, z.object({ messageId: z.string().uuid() }));
    const [row] = await db.select().from(outboxMessage).where(eq(outboxMessage.id, messageId));
    if (!row) throw notFound("No such message.");
    res.json(view(row));
  });

  router.delete("/", async (_req, res) => {
    authorize(outboxPolicy.read(services.outboxEnabled), gone);
    await db.delete(outboxMessage);
    res.status(204).end();
  });
  return router;
}
