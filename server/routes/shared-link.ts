import { createHash } from "node:crypto";
import type { Response } from "express";
import { eq } from "drizzle-orm";
import { z } from "zod";
import type { Database } from "../db/client";
import { run, shareLink } from "../db/schema";
import { notFound } from "../http/errors";

/** Share tokens are stored hashed: a database read never reveals a working link. */
export function hashShareToken(token: string): string {
  return createHash("sha256").update(token).digest("hex");
}

/**
 * The run a share link opens, for every door a link has (its report, expected view, traces).
 * Unknown or malformed tokens 404; revoked and expired links are answered here with 410 saying
 * which, and null comes back (the caller sends nothing more). Never cached by the browser.
 */
export async function sharedRunOf(db: Database, token: unknown, res: Response): Promise<{ row: typeof run.$inferSelect; expiresAt: Date } | null> {
  const parsed = z.string().min(10).max(100).safeParse(token);
  if (!parsed.success) throw notFound("No such shared report.");
  const [link] = await db.select().from(shareLink).where(eq(shareLink.tokenHash, hashShareToken(parsed.data)));
  if (!link) throw notFound("No such shared report.");
  res.set("cache-control", "no-store");
  if (link.revokedAt) {
    res.status(410).json({ error: { code: "revoked", message: "This share link was revoked by the workshop." } });
    return null;
  }
  if (link.expiresAt.getTime() <= Date.now()) {
    res.status(410).json({ error: { code: "expired", message: `This share link expired on ${link.expiresAt.toISOString()}.` } });
    return null;
  }
  const [row] = await db.select().from(run).where(eq(run.id, link.runId));
  if (!row) throw notFound("No such shared report.");
  return { row, expiresAt: link.expiresAt };
}
