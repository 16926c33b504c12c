import { Router } from "express";
import { eq } from "drizzle-orm";
import { z } from "zod";
import { entityId, type InvitationPreview } from "../../shared/api/workshops";
import { isWorkshopRole } from "../../shared/workshop/roles";
import { invitation, organization, user } from "../db/schema";
import { authHeaders, requireActor, type Services } from "../http/context";
import { HttpError, fromAuthError, notFound } from "../http/errors";
import { parseParams } from "../http/validate";
import { authorize } from "../policies/actor";
import { invitationPolicy } from "../policies/invitation";

const params = z.object({ invitationId: entityId });

/**
 * The invited person's side. The invitation id is long and random and travels only
 * in the e-mail, so the preview answers without sign-in (the page must say whom to
 * sign up as); accepting or declining needs the invited address signed in.
 */
export function invitationsRouter(services: Services) {
  const { db, auth } = services;
  const router = Router();

  async function load(invitationId: string) {
    const [row] = await db
      .select({
        id: invitation.id,
        email: invitation.email,
        role: invitation.role,
        status: invitation.status,
        expiresAt: invitation.expiresAt,
        workshopName: organization.name,
        invitedBy: user.name,
      })
      .from(invitation)
      .innerJoin(organization, eq(organization.id, invitation.organizationId))
      .leftJoin(user, eq(user.id, invitation.inviterId))
      .where(eq(invitation.id, invitationId));
    if (!row || !isWorkshopRole(row.role)) throw notFound("This invitation does not exist.");
    return { ...row, role: row.role };
  }

  router.get("/:invitationId", async (req, res) => {
    const { invitationId } = parseParams(req, params);
    const row = await load(invitationId);
    const body: InvitationPreview = {
      id: row.id,
      workshopName: row.workshopName,
      email: row.email,
      role: row.role,
      status: row.status as InvitationPreview["status"],
      expired: row.expiresAt <= new Date(),
      invitedBy: row.invitedBy,
    };
    res.json(body);
  });

  for (const action of ["accept", "decline"] as const) {
    router.post(`/:invitationId/${action}`, async (req, res) => {
      const { invitationId } = parseParams(req, params);
      const actor = await requireActor(services, req);
      const row = await load(invitationId);
      authorize(invitationPolicy.respond(actor, row, new Date()), () => {
        if (actor.email !== row.email.toLowerCase())
          return new HttpError("forbidden", `This invitation was sent to ${row.email}; you are signed in as ${actor.email}.`);
        if (row.status !== "pending") return new HttpError("conflict", `This invitation is already ${row.status}.`);
        return new HttpError("conflict", "This invitation has expired; ask the workshop's owner for a new one.");
      });
      try {
        if (action === "accept") {
          const result = await auth.api.acceptInvitation({ headers: authHeaders(req), body: { invitationId } });
          res.json({ workshopId: result?.member.organizationId ?? null, status: "accepted" });
        } else {
          await auth.api.rejectInvitation({ headers: authHeaders(req), body: { invitationId } });
          res.json({ status: "rejected" });
        }
      } catch (err) {
        throw fromAuthError(err) ?? err;
      }
    });
  }
  return router;
}
