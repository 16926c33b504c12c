import { randomUUID } from "node:crypto";
import { Router } from "express";
import { and, asc, count, eq } from "drizzle-orm";
import { z } from "zod";
import { createAirframeBody, replaceChannelsBody, type AirframeDetail, type AirframeSummary } from "../../shared/api/recordings";
import { entityId } from "../../shared/api/workshops";
import type { Database } from "../db/client";
import { airframe, recording } from "../db/schema";
import { requireActor, requireMembership, type Services } from "../http/context";
import { HttpError, forbidden, notFound } from "../http/errors";
import { parseBody, parseParams } from "../http/validate";
import { authorize } from "../policies/actor";
import { airframePolicy } from "../policies/airframe";

const workshopParams = z.object({ workshopId: entityId });
const airframeParams = workshopParams.extend({ airframeId: entityId });

type AirframeRow = typeof airframe.$inferSelect;

function summaryOf(row: AirframeRow, recordingCount: number): AirframeSummary {
  return {
    id: row.id,
    name: row.name,
    description: row.description,
    channelCount: row.channels.length,
    draftChannelCount: row.channels.filter((c) => c.draft).length,
    recordingCount,
  };
}

/** One airframe of one workshop, or 404: ids from another workshop are never found. */
export async function findAirframe(db: Database, workshopId: string, airframeId: string): Promise<AirframeRow> {
  const [row] = await db
    .select()
    .from(airframe)
    .where(and(eq(airframe.id, airframeId), eq(airframe.workshopId, workshopId)));
  if (!row) throw notFound("No such airframe in this workshop.");
  return row;
}

async function detailOf(db: Database, row: AirframeRow): Promise<AirframeDetail> {
  const [n] = await db.select({ n: count() }).from(recording).where(eq(recording.airframeId, row.id));
  return { ...summaryOf(row, n?.n ?? 0), channels: row.channels };
}

function uniqueViolation(error: unknown): boolean {
  const e = error as { code?: string; cause?: { code?: string } };
  return e?.code === "23505" || e?.cause?.code === "23505";
}

/** Airframes and their channel catalogues, under /api/workshops/:workshopId/airframes. */
export function airframesRouter(services: Services) {
  const { db } = services;
  const router = Router();

  router.get("/:workshopId/airframes", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    const membership = await requireMembership(services, await requireActor(services, req), workshopId);
    authorize(airframePolicy.read(membership), forbidden);
    const rows = await db.select().from(airframe).where(eq(airframe.workshopId, workshopId)).orderBy(asc(airframe.name));
    const counts = await db
      .select({ airframeId: recording.airframeId, n: count() })
      .from(recording)
      .where(eq(recording.workshopId, workshopId))
      .groupBy(recording.airframeId);
    const byId = new Map(counts.map((c) => [c.airframeId, c.n]));
    res.json(rows.map((r) => summaryOf(r, byId.get(r.id) ?? 0)));
  });

  router.post("/:workshopId/airframes", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    const membership = await requireMembership(services, await requireActor(services, req), workshopId);
    authorize(airframePolicy.create(membership), forbidden);
    const body = parseBody(req, createAirframeBody);
    try {
      const [row] = await db
        .insert(airframe)
        .values({ id: randomUUID(), workshopId, name: body.name, description: body.description ?? null, channels: [] })
        .returning();
      res.status(201).json(await detailOf(db, row));
    } catch (error) {
      if (uniqueViolation(error)) throw new HttpError("conflict", `This workshop already has an airframe named "${body.name}".`);
      throw error;
    }
  });

  router.get("/:workshopId/airframes/:airframeId", async (req, res) => {
    const { workshopId, airframeId } = parseParams(req, airframeParams);
    const membership = await requireMembership(services, await requireActor(services, req), workshopId);
    authorize(airframePolicy.read(membership), forbidden);
    res.json(await detailOf(db, await findAirframe(db, workshopId, airframeId)));
  });

  /** The catalogue as a JSON file to keep or share; PUT its `channels` back to import it. */
  router.get("/:workshopId/airframes/:airframeId/channels.json", async (req, res) => {
    const { workshopId, airframeId } = parseParams(req, airframeParams);
    const membership = await requireMembership(services, await requireActor(services, req), workshopId);
    authorize(airframePolicy.read(membership), forbidden);
    const row = await findAirframe(db, workshopId, airframeId);
    const file = `${row.name.replace(/[^A-Za-z0-9._-]+/g, "-").replace(/^-+|-+$/g, "") || "airframe"}.channels.json`;
    res.setHeader("Content-Disposition", `attachment; filename="${file}"`);
    res.type("application/json").send(JSON.stringify(await detailOf(db, row), null, 2));
  });

  router.put("/:workshopId/airframes/:airframeId/channels", async (req, res) => {
    const { workshopId, airframeId } = parseParams(req, airframeParams);
    const membership = await requireMembership(services, await requireActor(services, req), workshopId);
    authorize(airframePolicy.update(membership), forbidden);
    await findAirframe(db, workshopId, airframeId);
    const body = parseBody(req, replaceChannelsBody);
    const [row] = await db
      .update(airframe)
      .set({ channels: body.channels, updatedAt: new Date() })
      .where(and(eq(airframe.id, airframeId), eq(airframe.workshopId, workshopId)))
      .returning();
    res.json(await detailOf(db, row));
  });

  return router;
}
