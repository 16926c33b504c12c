import { Router } from "express";
import { asc, eq } from "drizzle-orm";
import type { MeView } from "../../shared/api/workshops";
import { isWorkshopRole } from "../../shared/workshop/roles";
import { requireActor, type Services } from "../http/context";
import { member, organization } from "../db/schema";

/** GET /api/me: who is signed in and which workshops they belong to. */
export function meRouter(services: Services) {
  const router = Router();
  router.get("/", async (req, res) => {
    const actor = await requireActor(services, req);
    const rows = await services.db
      .select({ id: organization.id, name: organization.name, slug: organization.slug, role: member.role, createdAt: organization.createdAt })
      .from(member)
      .innerJoin(organization, eq(organization.id, member.organizationId))
      .where(eq(member.userId, actor.userId))
      .orderBy(asc(organization.name));
    const body: MeView = {
      user: { id: actor.userId, name: actor.name, email: actor.email },
      workshops: rows.flatMap((r) =>
        isWorkshopRole(r.role) ? [{ id: r.id, name: r.name, slug: r.slug, role: r.role, createdAt: r.createdAt.toISOString() }] : [],
      ),
    };
    res.json(body);
  });
  return router;
}
