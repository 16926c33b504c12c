import { Router } from "express";
import { z } from "zod";
import { startCaptureBody, type CaptureView } from "../../shared/api/recordings";
import { entityId } from "../../shared/api/workshops";
import { requireActor, requireMembership, type Services } from "../http/context";
import { forbidden, notFound } from "../http/errors";
import { parseBody, parseParams } from "../http/validate";
import { authorize } from "../policies/actor";
import { capturePolicy } from "../policies/capture";
import { findAirframe } from "./airframes";

const workshopParams = z.object({ workshopId: entityId });
const captureParams = workshopParams.extend({ captureId: entityId });

/** Live captures, under /api/workshops/:workshopId/captures. The listening is in server/capture. */
export function capturesRouter(services: Services) {
  const { db, captures } = services;
  const router = Router();

  router.post("/:workshopId/captures", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    const actor = await requireActor(services, req);
    authorize(capturePolicy.start(await requireMembership(services, actor, workshopId)), forbidden);
    const body = parseBody(req, startCaptureBody);
    const frame = await findAirframe(db, workshopId, body.airframeId);
    const { view, token } = await captures.start({
      workshopId,
      airframeId: frame.id,
      airframeName: frame.name,
      channels: frame.channels,
      name: body.name,
      udpPort: body.udpPort,
      createdById: actor.userId,
    });
    res.status(201).json({ ...view, token } satisfies CaptureView);
  });

  router.get("/:workshopId/captures", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    authorize(capturePolicy.read(await requireMembership(services, await requireActor(services, req), workshopId)), forbidden);
    // Captures whose process is gone are marked interrupted first (server/capture/manager.ts).
    res.json(await captures.list(workshopId));
  });

  router.get("/:workshopId/captures/:captureId", async (req, res) => {
    const { workshopId, captureId } = parseParams(req, captureParams);
    authorize(capturePolicy.read(await requireMembership(services, await requireActor(services, req), workshopId)), forbidden);
    const view = await captures.view(workshopId, captureId);
    if (!view) throw notFound("No such capture in this workshop.");
    res.json(view);
  });

  router.post("/:workshopId/captures/:captureId/stop", async (req, res) => {
    const { workshopId, captureId } = parseParams(req, captureParams);
    authorize(capturePolicy.stop(await requireMembership(services, await requireActor(services, req), workshopId)), forbidden);
    const view = await captures.stop(workshopId, captureId);
    if (!view) throw notFound("No such capture in this workshop.");
    res.json(view);
  });

  return router;
}
