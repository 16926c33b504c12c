import { Router } from "express";
import { z } from "zod";
import type { SerialPortList } from "../../shared/api/bench";
import { entityId } from "../../shared/api/workshops";
import { requireActor, requireMembership, type Services } from "../http/context";
import { forbidden } from "../http/errors";
import { parseParams } from "../http/validate";
import { listSerialPorts } from "../links/serial-transport";
import { authorize } from "../policies/actor";
import { benchPolicy } from "../policies/bench";

const workshopParams = z.object({ workshopId: entityId });

/** The bench machine under /api/workshops/:workshopId/bench (issue 5): its serial ports. */
export function benchRouter(services: Services) {
  const router = Router();

  router.get("/:workshopId/bench/serial-ports", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    const m = await requireMembership(services, await requireActor(services, req), workshopId);
    authorize(benchPolicy.listSerialPorts(m), () => forbidden("Only builders and owners link panels to the bench."));
    const body: SerialPortList = {
      ports: await listSerialPorts(),
      note: "Ports of the machine the bench runs on. A pseudo-terminal (for example one made by socat) is not listed: type its path.",
    };
    res.json(body);
  });

  return router;
}
