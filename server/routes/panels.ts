import { createHash, randomBytes, randomUUID } from "node:crypto";
import { Readable } from "node:stream";
import { Router, type Request } from "express";
import { and, asc, desc, eq } from "drizzle-orm";
import { z, ZodError } from "zod";
import {
  copyPanelBody,
  createPanelBody,
  createTokenBody,
  elementIdParam,
  expectedQuery,
  listPanelsQuery,
  MOTION_MAX_STRETCHES,
  motionQuery,
  markersBody,
  mirrorPanelBody,
  renamePanelBody,
  replacePanelBody,
  type CreatedTokenView,
  type DeviceTokenView,
  type ExpectedView,
  type MotionView,
  type PanelDetail,
  type PanelSummary,
} from "../../shared/api/panels";
import { entityId } from "../../shared/api/workshops";
import { applyTransform } from "../../shared/elements/bindings";
import { accelerationDegreesPerSecond2, maxDegreesPerSecond, motionDemand, type ValueSample } from "../../shared/elements/scale";
import { expectTimelinesInTurns, panelCoverage } from "../../shared/expect";
import { deviceHeader, exportPanelJson, mirrorPanel, panel as panelSchema, panelChannels, type Panel } from "../../shared/panel";
import type { Database } from "../db/client";
import { airframe, deviceToken, panel, recording, user } from "../db/schema";
import { requireActor, requireMembership, type Services } from "../http/context";
import { HttpError, forbidden, notFound } from "../http/errors";
import { parseBody, parseParams, parseQuery } from "../http/validate";
import { authorize } from "../policies/actor";
import { panelPolicy } from "../policies/panel";
import { kindCounts, mirrorNames, suffixedSlug, validDefinition, withPhotoKey, withoutPhotoKey } from "../panels/definition";
import { photoExtension, preparePhoto, readRawBody } from "../panels/photo";
import { recordingColumnsOf } from "../recordings/read";
import { nextTurn } from "../turns";
import { findAirframe } from "./airframes";

const workshopParams = z.object({ workshopId: entityId });
const panelParams = workshopParams.extend({ panelId: entityId });
const tokenParams = panelParams.extend({ tokenId: entityId });
const elementParams = panelParams.extend({ elementId: elementIdParam });

const summaryColumns = {
  id: panel.id,
  slug: panel.slug,
  name: panel.name,
  airframeId: panel.airframeId,
  airframeName: airframe.name,
  definition: panel.definition,
  photoKey: panel.photoKey,
  photoType: panel.photoType,
  mirrorOf: panel.mirrorOf,
  createdBy: user.name,
  updatedAt: panel.updatedAt,
};

type PanelRow = {
  id: string;
  slug: string;
  name: string;
  airframeId: string;
  airframeName: string;
  definition: Panel;
  photoKey: string | null;
  photoType: string | null;
  mirrorOf: string | null;
  createdBy: string | null;
  updatedAt: Date;
};

function summaryOf(row: PanelRow): PanelSummary {
  return {
    id: row.id,
    slug: row.slug,
    name: row.name,
    airframeId: row.airframeId,
    airframeName: row.airframeName,
    elementCount: row.definition.elements.length,
    placeholderCount: row.definition.elements.filter((e) => e.placeholder).length,
    kinds: kindCounts(row.definition),
    hasPhoto: row.photoKey !== null,
    mirrorOf: row.mirrorOf,
    createdBy: row.createdBy,
    updatedAt: row.updatedAt.toISOString(),
  };
}

function detailOf(row: PanelRow): PanelDetail {
  return { ...summaryOf(row), definition: row.definition };
}

function tokenViewOf(row: typeof deviceToken.$inferSelect): DeviceTokenView {
  return {
    id: row.id,
    label: row.label,
    createdAt: row.createdAt.toISOString(),
    lastUsedAt: row.lastUsedAt?.toISOString() ?? null,
    revokedAt: row.revokedAt?.toISOString() ?? null,
  };
}

function uniqueViolation(error: unknown): boolean {
  const e = error as { code?: string; cause?: { code?: string } };
  return e?.code === "23505" || e?.cause?.code === "23505";
}

function slugTaken(slug: string, path = "body.definition.id"): HttpError {
  return new HttpError("conflict", `This workshop already has a panel "${slug}".`, [
    { path, message: `"${slug}" is already the identifier of another panel in this workshop` },
  ]);
}

/** A file name from a slug (lowercase letters, digits and dashes already). */
const fileBase = (slug: string) => slug.replace(/[^a-z0-9-]+/g, "-") || "panel";

/** SHA-256 of a device token, hex: what the database keeps instead of the token. */
export function hashDeviceToken(token: string): string {
  return createHash("sha256").update(token, "utf8").digest("hex");
}

/** Panels, their photos, previews and device tokens, under /api/workshops/:workshopId/panels. */
export function panelsRouter(services: Services) {
  const { db, storage } = services;
  const router = Router();

  async function member(req: Request, workshopId: string) {
    return requireMembership(services, await requireActor(services, req), workshopId);
  }

  async function findPanel(workshopId: string, panelId: string): Promise<PanelRow> {
    const [row] = await db
      .select(summaryColumns)
      .from(panel)
      .innerJoin(airframe, eq(airframe.id, panel.airframeId))
      .leftJoin(user, eq(user.id, panel.createdById))
      .where(and(eq(panel.id, panelId), eq(panel.workshopId, workshopId)));
    if (!row) throw notFound("No such panel in this workshop.");
    return row;
  }

  /** Finds a free slug: `base`, else `base-2`, `base-3`... */
  async function freeSlug(workshopId: string, base: string): Promise<string> {
    const taken = new Set((await db.select({ slug: panel.slug }).from(panel).where(eq(panel.workshopId, workshopId))).map((r) => r.slug));
    if (!taken.has(base)) return base;
    for (let n = 2; ; n++) {
      const candidate = suffixedSlug(base, `-${n}`);
      if (!taken.has(candidate)) return candidate;
    }
  }

  async function insertPanel(values: typeof panel.$inferInsert, conflictPath: string): Promise<PanelRow> {
    try {
      await db.insert(panel).values(values);
    } catch (error) {
      if (uniqueViolation(error)) throw slugTaken(values.slug, conflictPath);
      throw error;
    }
    return findPanel(values.workshopId, values.id);
  }

  async function copyPhoto(workshopId: string, panelId: string, from: PanelRow): Promise<{ photoKey: string | null; photoType: string | null }> {
    if (!from.photoKey || !from.photoType) return { photoKey: null, photoType: null };
    const key = photoKeyFor(workshopId, panelId, from.photoType as "image/jpeg");
    await storage.put(key, await storage.get(from.photoKey), from.photoType);
    return { photoKey: key, photoType: from.photoType };
  }

  router.get("/:workshopId/panels", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    authorize(panelPolicy.read(await member(req, workshopId)), forbidden);
    const query = parseQuery(req, listPanelsQuery);
    const where = [eq(panel.workshopId, workshopId)];
    if (query.airframeId) where.push(eq(panel.airframeId, query.airframeId));
    const rows = await db
      .select(summaryColumns)
      .from(panel)
      .innerJoin(airframe, eq(airframe.id, panel.airframeId))
      .leftJoin(user, eq(user.id, panel.createdById))
      .where(and(...where))
      .orderBy(asc(panel.name), asc(panel.slug));
    res.json(rows.map(summaryOf));
  });

  /** Create or import: the definition is validated whole, then against the airframe's catalogue. */
  router.post("/:workshopId/panels", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    const actor = await requireActor(services, req);
    authorize(panelPolicy.create(await requireMembership(services, actor, workshopId)), forbidden);
    const body = parseBody(req, createPanelBody);
    const frame = await findAirframe(db, workshopId, body.airframeId);
    const definition = withPhotoKey(validDefinition(body.definition, frame.channels), null);
    const row = await insertPanel(
      {
        id: randomUUID(),
        workshopId,
        airframeId: frame.id,
        slug: definition.id,
        name: definition.name,
        definition,
        createdById: actor.userId,
      },
      "body.definition.id",
    );
    res.status(201).json(detailOf(row));
  });

  router.get("/:workshopId/panels/:panelId", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    authorize(panelPolicy.read(await member(req, workshopId)), forbidden);
    res.json(detailOf(await findPanel(workshopId, panelId)));
  });

  router.put("/:workshopId/panels/:panelId", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    authorize(panelPolicy.update(await member(req, workshopId)), forbidden);
    const body = parseBody(req, replacePanelBody);
    const row = await findPanel(workshopId, panelId);
    const frame = await findAirframe(db, workshopId, row.airframeId);
    const definition = withPhotoKey(validDefinition(body.definition, frame.channels), row.photoKey);
    try {
      await db
        .update(panel)
        .set({ definition, slug: definition.id, name: definition.name, updatedAt: new Date() })
        .where(and(eq(panel.id, panelId), eq(panel.workshopId, workshopId)));
    } catch (error) {
      if (uniqueViolation(error)) throw slugTaken(definition.id);
      throw error;
    }
    res.json(detailOf(await findPanel(workshopId, panelId)));
  });

  router.patch("/:workshopId/panels/:panelId", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    authorize(panelPolicy.update(await member(req, workshopId)), forbidden);
    const body = parseBody(req, renamePanelBody);
    const row = await findPanel(workshopId, panelId);
    const definition = { ...row.definition, name: body.name };
    await db
      .update(panel)
      .set({ definition, name: body.name, updatedAt: new Date() })
      .where(and(eq(panel.id, panelId), eq(panel.workshopId, workshopId)));
    res.json(detailOf(await findPanel(workshopId, panelId)));
  });

  router.delete("/:workshopId/panels/:panelId", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    authorize(panelPolicy.remove(await member(req, workshopId)), forbidden);
    const row = await findPanel(workshopId, panelId);
    // Device tokens go with the row (on delete cascade); mirrors keep their definition, losing only the link.
    await db.delete(panel).where(and(eq(panel.id, panelId), eq(panel.workshopId, workshopId)));
    if (row.photoKey) await storage.delete(row.photoKey).catch((e) => console.error("[storage] delete failed:", e));
    res.status(204).end();
  });

  router.post("/:workshopId/panels/:panelId/duplicate", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    const actor = await requireActor(services, req);
    authorize(panelPolicy.create(await requireMembership(services, actor, workshopId)), forbidden);
    const body = parseBody(req, copyPanelBody);
    const source = await findPanel(workshopId, panelId);
    const slug = body.slug ?? (await freeSlug(workshopId, suffixedSlug(source.slug, "-copy")));
    const name = body.name ?? `${source.name.slice(0, 73)} (copy)`;
    const id = randomUUID();
    const photo = await copyPhoto(workshopId, id, source);
    const definition = withPhotoKey({ ...source.definition, id: slug, name }, photo.photoKey);
    try {
      const row = await insertPanel(
        { id, workshopId, airframeId: source.airframeId, slug, name, definition, ...photo, createdById: actor.userId },
        "body.slug",
      );
      res.status(201).json(detailOf(row));
    } catch (error) {
      if (photo.photoKey) await storage.delete(photo.photoKey).catch(() => {});
      throw error;
    }
  });

  /**
   * The mirror image (a right bezel from a left one): shared/panel's mirrorPanel. The photo stays
   * with the original (it shows the other physical panel); mirrored markers are a starting point.
   */
  router.post("/:workshopId/panels/:panelId/mirror", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    const actor = await requireActor(services, req);
    authorize(panelPolicy.create(await requireMembership(services, actor, workshopId)), forbidden);
    const body = parseBody(req, mirrorPanelBody);
    const source = await findPanel(workshopId, panelId);
    const names = mirrorNames(source.slug);
    const slug = body.slug ?? (await freeSlug(workshopId, names.slug));
    let mirrored: Panel;
    try {
      mirrored = mirrorPanel(withoutPhotoKey(source.definition), {
        idSuffix: names.elementSuffix,
        id: slug,
        name: body.name ?? `${source.name.slice(0, 71)} (mirror)`,
        channelMap: body.channelMap,
      });
    } catch (error) {
      if (error instanceof ZodError) {
        const issues = error.issues.map((i) => ({ path: ["definition", ...i.path.map(String)].join("."), message: i.message }));
        throw new HttpError("validation_failed", `The mirror is not a valid panel: ${issues[0].path}: ${issues[0].message}`, issues);
      }
      throw error;
    }
    const frame = await findAirframe(db, workshopId, source.airframeId);
    const definition = validDefinition(mirrored, frame.channels, "definition");
    const row = await insertPanel(
      {
        id: randomUUID(),
        workshopId,
        airframeId: source.airframeId,
        slug: definition.id,
        name: definition.name,
        definition,
        mirrorOf: source.id,
        createdById: actor.userId,
      },
      "body.slug",
    );
    res.status(201).json(detailOf(row));
  });

  router.get("/:workshopId/panels/:panelId/export.json", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    authorize(panelPolicy.read(await member(req, workshopId)), forbidden);
    const row = await findPanel(workshopId, panelId);
    res.setHeader("Content-Disposition", `attachment; filename="${fileBase(row.slug)}.panel.json"`);
    res.type("application/json").send(exportPanelJson(withoutPhotoKey(row.definition)));
  });

  router.get("/:workshopId/panels/:panelId/device-header.h", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    authorize(panelPolicy.read(await member(req, workshopId)), forbidden);
    const row = await findPanel(workshopId, panelId);
    res.setHeader("Content-Disposition", `attachment; filename="${fileBase(row.slug)}.h"`);
    res.type("text/x-c").send(deviceHeader(row.definition));
  });

  /** Raw image bytes; the type comes from the magic bytes; scaled to 2,000 px and stored. */
  router.put("/:workshopId/panels/:panelId/photo", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    authorize(panelPolicy.update(await member(req, workshopId)), forbidden);
    const row = await findPanel(workshopId, panelId);
    if (req.is("application/json") || req.is("application/x-www-form-urlencoded") || req.is("multipart/form-data")) {
      throw new HttpError("bad_request", "Send the photo's bytes as the body (Content-Type image/jpeg, image/png, image/webp or application/octet-stream).");
    }
    const photo = await preparePhoto(await readRawBody(req));
    const key = photoKeyFor(workshopId, panelId, photo.type);
    await storage.put(key, Readable.from([photo.bytes]), photo.type);
    const definition = withPhotoKey(row.definition, key);
    await db
      .update(panel)
      .set({ photoKey: key, photoType: photo.type, definition, updatedAt: new Date() })
      .where(and(eq(panel.id, panelId), eq(panel.workshopId, workshopId)));
    if (row.photoKey && row.photoKey !== key) await storage.delete(row.photoKey).catch((e) => console.error("[storage] delete failed:", e));
    res.json(detailOf(await findPanel(workshopId, panelId)));
  });

  router.get("/:workshopId/panels/:panelId/photo", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    authorize(panelPolicy.read(await member(req, workshopId)), forbidden);
    const row = await findPanel(workshopId, panelId);
    if (!row.photoKey || !row.photoType) throw notFound("This panel has no photo yet.");
    const stream = await storage.get(row.photoKey);
    res.type(row.photoType);
    res.setHeader("Cache-Control", "private, no-cache");
    res.setHeader("ETag", `"${row.photoKey.split("/").pop()}"`);
    if (req.headers["if-none-match"] === res.getHeader("ETag")) {
      stream.destroy();
      res.status(304).end();
      return;
    }
    stream.pipe(res);
  });

  router.delete("/:workshopId/panels/:panelId/photo", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    authorize(panelPolicy.update(await member(req, workshopId)), forbidden);
    const row = await findPanel(workshopId, panelId);
    await db
      .update(panel)
      .set({ photoKey: null, photoType: null, definition: withPhotoKey(row.definition, null), updatedAt: new Date() })
      .where(and(eq(panel.id, panelId), eq(panel.workshopId, workshopId)));
    if (row.photoKey) await storage.delete(row.photoKey).catch((e) => console.error("[storage] delete failed:", e));
    res.json(detailOf(await findPanel(workshopId, panelId)));
  });

  /** Where each element sits on the photo; ids must be the panel's elements. */
  router.put("/:workshopId/panels/:panelId/markers", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    authorize(panelPolicy.update(await member(req, workshopId)), forbidden);
    const body = parseBody(req, markersBody);
    const row = await findPanel(workshopId, panelId);
    const ids = new Set(row.definition.elements.map((e) => e.id));
    const unknown = Object.keys(body.markers).filter((id) => !ids.has(id));
    if (unknown.length) {
      const issues = unknown.map((id) => ({ path: `body.markers.${id}`, message: `no element "${id}" on this panel` }));
      throw new HttpError("validation_failed", `${issues[0].path}: ${issues[0].message}`, issues);
    }
    const definition = panelSchema.parse({ ...row.definition, photo: { ...(row.photoKey ? { photoKey: row.photoKey } : {}), markers: body.markers } });
    await db
      .update(panel)
      .set({ definition, updatedAt: new Date() })
      .where(and(eq(panel.id, panelId), eq(panel.workshopId, workshopId)));
    res.json(detailOf(await findPanel(workshopId, panelId)));
  });

  /**
   * Expected timelines and coverage of the panel over a stored recording of the same airframe,
   * computed with shared/expect from the recording's segments (the browser shows `expectedAt`).
   */
  router.get("/:workshopId/panels/:panelId/expected", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    authorize(panelPolicy.read(await member(req, workshopId)), forbidden);
    const { recordingId } = parseQuery(req, expectedQuery);
    const row = await findPanel(workshopId, panelId);
    const rec = await recordingForPanel(workshopId, recordingId, row);
    const columns = await recordingColumnsOf(db, rec.id, panelChannels(row.definition));
    const timelines = await expectTimelinesInTurns(row.definition, columns, { endMs: Math.max(rec.durationMs, columns.lastT), turn: nextTurn });
    const view: ExpectedView = {
      panelId: row.id,
      recordingId: rec.id,
      recordingName: rec.name,
      durationMs: rec.durationMs,
      frameCount: rec.frameCount,
      timelines,
      coverage: panelCoverage(row.definition, timelines),
    };
    res.json(view);
  });

  /** A recording of the workshop (else 404) and of the panel's airframe (else 422, `query.recordingId`). */
  async function recordingForPanel(workshopId: string, recordingId: string, row: PanelRow) {
    const [rec] = await db
      .select({ id: recording.id, name: recording.name, airframeId: recording.airframeId, durationMs: recording.durationMs, frameCount: recording.frameCount })
      .from(recording)
      .where(and(eq(recording.id, recordingId), eq(recording.workshopId, workshopId)));
    if (!rec) throw notFound("No such recording in this workshop.");
    if (rec.airframeId !== row.airframeId) {
      const message = `this recording is of another airframe than the panel's (${row.airframeName})`;
      throw new HttpError("validation_failed", `query.recordingId: ${message}`, [{ path: "query.recordingId", message }]);
    }
    return rec;
  }

  /**
   * Motion demand: the speed and acceleration a pointer's value asks of its saved motor over a
   * recording, and where the motor falls behind by more than the pointer's tolerance
   * (shared/elements/scale motionDemand). Only the pointer's own channel is read.
   */
  router.get("/:workshopId/panels/:panelId/elements/:elementId/motion", async (req, res) => {
    const { workshopId, panelId, elementId } = parseParams(req, elementParams);
    authorize(panelPolicy.read(await member(req, workshopId)), forbidden);
    const { recordingId } = parseQuery(req, motionQuery);
    const row = await findPanel(workshopId, panelId);
    const el = row.definition.elements.find((e) => e.id === elementId);
    if (!el) throw notFound("No element with that identifier on this panel.");
    const refuse = (message: string) => new HttpError("validation_failed", `params.elementId: ${message}`, [{ path: "params.elementId", message }]);
    if (el.kind !== "pointer") throw refuse(`"${el.id}" is a ${el.kind}; motion demand is for pointers`);
    if (!el.motor) throw refuse(`pointer "${el.id}" has no motor profile: set one on its scale page first`);
    const rec = await recordingForPanel(workshopId, recordingId, row);
    const channel = el.value.channel;
    const samples: ValueSample[] = [];
    const column = (await recordingColumnsOf(db, rec.id, [channel])).column(channel);
    for (let i = 0; i < column.length; i++) {
      if (column.isOther[i] === 0) samples.push({ time: column.times[i] / 1000, value: applyTransform(el.value.transform, column.numbers[i]) });
    }
    const demand = motionDemand(samples, el.scale, el.motor, { toleranceDegrees: el.tolerance.degrees });
    const view: MotionView = {
      panelId: row.id,
      elementId: el.id,
      recordingId: rec.id,
      recordingName: rec.name,
      channel,
      sampleCount: samples.length,
      toleranceDegrees: el.tolerance.degrees,
      peakDegreesPerSecond: demand.peakDegreesPerSecond,
      peakDegreesPerSecond2: demand.peakDegreesPerSecond2,
      motorMaxDegreesPerSecond: maxDegreesPerSecond(el.motor),
      motorAccelerationDegreesPerSecond2: accelerationDegreesPerSecond2(el.motor),
      keepsUp: demand.keepsUp,
      worstLagDegrees: demand.worstLagDegrees,
      behindCount: demand.behind.length,
      behind: demand.behind.slice(0, MOTION_MAX_STRETCHES).map((b) => ({
        startMs: b.start * 1000,
        endMs: b.end * 1000,
        worstLagDegrees: b.worstLagDegrees,
        worstAtMs: b.worstAt * 1000,
      })),
    };
    res.json(view);
  });

  // ---- device tokens ---------------------------------------------------------------------

  router.get("/:workshopId/panels/:panelId/tokens", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    authorize(panelPolicy.read(await member(req, workshopId)), forbidden);
    await findPanel(workshopId, panelId);
    const rows = await db.select().from(deviceToken).where(eq(deviceToken.panelId, panelId)).orderBy(desc(deviceToken.createdAt));
    res.json(rows.map(tokenViewOf));
  });

  /** The token is in this answer only; the database keeps its SHA-256. */
  router.post("/:workshopId/panels/:panelId/tokens", async (req, res) => {
    const { workshopId, panelId } = parseParams(req, panelParams);
    const actor = await requireActor(services, req);
    authorize(panelPolicy.manageTokens(await requireMembership(services, actor, workshopId)), forbidden);
    const body = parseBody(req, createTokenBody);
    await findPanel(workshopId, panelId);
    const token = `ppd_${randomBytes(24).toString("base64url")}`;
    const [row] = await db
      .insert(deviceToken)
      .values({ id: randomUUID(), panelId, label: body.label, tokenHash: hashDeviceToken(token), createdById: actor.userId })
      .returning();
    const view: CreatedTokenView = { ...tokenViewOf(row), token };
    res.status(201).json(view);
  });

  router.post("/:workshopId/panels/:panelId/tokens/:tokenId/revoke", async (req, res) => {
    const { workshopId, panelId, tokenId } = parseParams(req, tokenParams);
    authorize(panelPolicy.manageTokens(await member(req, workshopId)), forbidden);
    await findPanel(workshopId, panelId);
    const [existing] = await db.select().from(deviceToken).where(and(eq(deviceToken.id, tokenId), eq(deviceToken.panelId, panelId)));
    if (!existing) throw notFound("No such device token on this panel.");
    const [row] = existing.revokedAt
      ? [existing]
      : await db.update(deviceToken).set({ revokedAt: new Date() }).where(eq(deviceToken.id, tokenId)).returning();
    res.json(tokenViewOf(row));
  });

  return router;
}

function photoKeyFor(workshopId: string, panelId: string, type: "image/jpeg" | "image/png" | "image/webp"): string {
  return `workshops/${workshopId}/panels/${panelId}/photo-${randomBytes(6).toString("hex")}.${photoExtension(type)}`;
}

/** The panel a device token belongs to, or null (unknown or revoked); marks the token used. For the bench's network links. */
export async function panelForDeviceToken(db: Database, token: string): Promise<{ panelId: string; workshopId: string } | null> {
  const [row] = await db
    .select({ id: deviceToken.id, panelId: deviceToken.panelId, workshopId: panel.workshopId, revokedAt: deviceToken.revokedAt })
    .from(deviceToken)
    .innerJoin(panel, eq(panel.id, deviceToken.panelId))
    .where(eq(deviceToken.tokenHash, hashDeviceToken(token)));
  if (!row || row.revokedAt) return null;
  await db.update(deviceToken).set({ lastUsedAt: new Date() }).where(eq(deviceToken.id, row.id));
  return { panelId: row.panelId, workshopId: row.workshopId };
}
