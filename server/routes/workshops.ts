import { randomBytes } from "node:crypto";
import { Router } from "express";
import { and, asc, count, eq } from "drizzle-orm";
import { z } from "zod";
import {
  changeRoleBody,
  createInvitationBody,
  createWorkshopBody,
  entityId,
  updateWorkshopBody,
  type InvitationView,
  type MemberView,
  type WorkshopDetail,
} from "../../shared/api/workshops";
import { ROLE_ABILITIES, isWorkshopRole } from "../../shared/workshop/roles";
import { invitation, member, organization, user } from "../db/schema";
import { authHeaders, requireActor, requireMembership, type Services } from "../http/context";
import { HttpError, forbidden, fromAuthError, notFound } from "../http/errors";
import { parseBody, parseParams } from "../http/validate";
import { authorize } from "../policies/actor";
import { invitationPolicy } from "../policies/invitation";
import { memberPolicy } from "../policies/member";
import { workshopPolicy } from "../policies/workshop";

const workshopParams = z.object({ workshopId: entityId });
const memberParams = workshopParams.extend({ memberId: entityId });
const invitationParams = workshopParams.extend({ invitationId: entityId });

/** Runs a better-auth server call, turning its refusals into our error shape. */
async function viaAuth<T>(call: () => Promise<T>): Promise<T> {
  try {
    return await call();
  } catch (err) {
    throw fromAuthError(err) ?? err;
  }
}

function slugFor(name: string): string {
  const base = name
    .toLowerCase()
    .normalize("NFKD")
    .replace(/[^a-z0-9]+/g, "-")
    .replace(/^-+|-+$/g, "")
    .slice(0, 40);
  return `${base || "workshop"}-${randomBytes(3).toString("hex")}`;
}

/** Workshops and, under each, its members and invitations. */
export function workshopsRouter(services: Services) {
  const { db, auth } = services;
  const router = Router();

  async function ownerCount(workshopId: string) {
    const [row] = await db
      .select({ n: count() })
      .from(member)
      .where(and(eq(member.organizationId, workshopId), eq(member.role, "owner")));
    return row?.n ?? 0;
  }

  async function detail(workshopId: string, role: keyof typeof ROLE_ABILITIES): Promise<WorkshopDetail> {
    const [w] = await db.select().from(organization).where(eq(organization.id, workshopId));
    if (!w) throw notFound("No such workshop.");
    const [m] = await db.select({ n: count() }).from(member).where(eq(member.organizationId, workshopId));
    return {
      id: w.id,
      name: w.name,
      slug: w.slug,
      role,
      createdAt: w.createdAt.toISOString(),
      memberCount: m?.n ?? 0,
      abilities: [...ROLE_ABILITIES[role]],
    };
  }

  router.post("/", async (req, res) => {
    const actor = await requireActor(services, req);
    authorize(workshopPolicy.create(actor), forbidden);
    const body = parseBody(req, createWorkshopBody);
    const created = await viaAuth(() =>
      auth.api.createOrganization({ headers: authHeaders(req), body: { name: body.name, slug: slugFor(body.name) } }),
    );
    if (!created) throw new HttpError("internal", "The workshop could not be created.");
    res.status(201).json(await detail(created.id, "owner"));
  });

  router.get("/:workshopId", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    const membership = await requireMembership(services, await requireActor(services, req), workshopId);
    authorize(workshopPolicy.read(membership), forbidden);
    res.json(await detail(workshopId, membership.role));
  });

  router.patch("/:workshopId", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    const membership = await requireMembership(services, await requireActor(services, req), workshopId);
    authorize(workshopPolicy.update(membership), forbidden);
    const body = parseBody(req, updateWorkshopBody);
    await db.update(organization).set({ name: body.name }).where(eq(organization.id, workshopId));
    res.json(await detail(workshopId, membership.role));
  });

  router.get("/:workshopId/members", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    const membership = await requireMembership(services, await requireActor(services, req), workshopId);
    authorize(memberPolicy.read(membership), forbidden);
    const rows = await db
      .select({ id: member.id, userId: user.id, name: user.name, email: user.email, role: member.role, joinedAt: member.createdAt })
      .from(member)
      .innerJoin(user, eq(user.id, member.userId))
      .where(eq(member.organizationId, workshopId))
      .orderBy(asc(user.name));
    const body: MemberView[] = rows.flatMap((r) =>
      isWorkshopRole(r.role) ? [{ ...r, role: r.role, joinedAt: r.joinedAt.toISOString() }] : [],
    );
    res.json(body);
  });

  async function targetMember(workshopId: string, memberId: string) {
    const [target] = await db
      .select({ memberId: member.id, role: member.role })
      .from(member)
      .where(and(eq(member.id, memberId), eq(member.organizationId, workshopId)));
    if (!target) throw notFound("No such member in this workshop.");
    return target;
  }

  router.patch("/:workshopId/members/:memberId", async (req, res) => {
    const { workshopId, memberId } = parseParams(req, memberParams);
    const membership = await requireMembership(services, await requireActor(services, req), workshopId);
    const target = await targetMember(workshopId, memberId);
    const body = parseBody(req, changeRoleBody);
    authorize(memberPolicy.changeRole(membership, target, await ownerCount(workshopId), body.role), () =>
      membership.role === "owner"
        ? new HttpError("conflict", "A workshop must keep at least one owner.")
        : forbidden("Only owners change roles."),
    );
    await viaAuth(() =>
      auth.api.updateMemberRole({ headers: authHeaders(req), body: { memberId, role: body.role, organizationId: workshopId } }),
    );
    res.json({ id: memberId, role: body.role });
  });

  router.delete("/:workshopId/members/:memberId", async (req, res) => {
    const { workshopId, memberId } = parseParams(req, memberParams);
    const membership = await requireMembership(services, await requireActor(services, req), workshopId);
    const target = await targetMember(workshopId, memberId);
    authorize(memberPolicy.remove(membership, target, await ownerCount(workshopId)), () =>
      membership.role === "owner"
        ? new HttpError("conflict", "A workshop must keep at least one owner.")
        : forbidden("Only owners remove members."),
    );
    await viaAuth(() =>
      auth.api.removeMember({ headers: authHeaders(req), body: { memberIdOrEmail: memberId, organizationId: workshopId } }),
    );
    res.status(204).end();
  });

  router.get("/:workshopId/invitations", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    const membership = await requireMembership(services, await requireActor(services, req), workshopId);
    authorize(invitationPolicy.read(membership), () => forbidden("Only owners see invitations."));
    const rows = await db
      .select({
        id: invitation.id,
        email: invitation.email,
        role: invitation.role,
        status: invitation.status,
        expiresAt: invitation.expiresAt,
        invitedBy: user.name,
      })
      .from(invitation)
      .leftJoin(user, eq(user.id, invitation.inviterId))
      .where(eq(invitation.organizationId, workshopId))
      .orderBy(asc(invitation.createdAt));
    const body: InvitationView[] = rows.flatMap((r) =>
      isWorkshopRole(r.role) && ["pending", "accepted", "rejected", "canceled"].includes(r.status)
        ? [{ ...r, role: r.role, status: r.status as InvitationView["status"], expiresAt: r.expiresAt.toISOString() }]
        : [],
    );
    res.json(body);
  });

  router.post("/:workshopId/invitations", async (req, res) => {
    const { workshopId } = parseParams(req, workshopParams);
    const membership = await requireMembership(services, await requireActor(services, req), workshopId);
    authorize(invitationPolicy.create(membership), () => forbidden("Only owners invite people."));
    const body = parseBody(req, createInvitationBody);
    const already = await db
      .select({ id: member.id })
      .from(member)
      .innerJoin(user, eq(user.id, member.userId))
      .where(and(eq(member.organizationId, workshopId), eq(user.email, body.email)));
    if (already.length > 0) throw new HttpError("conflict", `${body.email} is already a member of this workshop.`);
    const created = await viaAuth(() =>
      auth.api.createInvitation({
        headers: authHeaders(req),
        body: { email: body.email, role: body.role, organizationId: workshopId, resend: true },
      }),
    );
    res.status(201).json({ id: created.id, email: created.email, role: created.role, status: created.status });
  });

  router.delete("/:workshopId/invitations/:invitationId", async (req, res) => {
    const { workshopId, invitationId } = parseParams(req, invitationParams);
    const membership = await requireMembership(services, await requireActor(services, req), workshopId);
    authorize(invitationPolicy.cancel(membership), () => forbidden("Only owners cancel invitations."));
    const [row] = await db
      .select({ id: invitation.id })
      .from(invitation)
      .where(and(eq(invitation.id, invitationId), eq(invitation.organizationId, workshopId)));
    if (!row) throw notFound("No such invitation in this workshop.");
    await viaAuth(() => auth.api.cancelInvitation({ headers: authHeaders(req), body: { invitationId } }));
    res.status(204).end();
  });

  return router;
}
