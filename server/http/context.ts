import type { Request } from "express";
import { fromNodeHeaders } from "better-auth/node";
import { and, eq } from "drizzle-orm";
import { isWorkshopRole } from "../../shared/workshop/roles";
import type { Auth } from "../auth/auth";
import type { Database } from "../db/client";
import { member, organization } from "../db/schema";
import type { Actor, Membership } from "../policies/actor";
import type { UpgradeRouter } from "../realtime/upgrades";
import type { StorageDriver } from "../storage";
import type { Jobs } from "../jobs/queue";
import type { CaptureManager } from "../capture/manager";
import type { RunManager } from "../bench/run-manager";
import type { Mailer } from "../mail/mailer";
import { notFound, unauthenticated } from "./errors";

export interface Services {
  db: Database;
  auth: Auth;
  baseUrl: string;
  /** True when mail goes to the in-process fake and the Outbox page is on. */
  outboxEnabled: boolean;
  version: string;
  /** WebSocket endpoints register here (server/realtime/upgrades.ts). */
  upgrades: UpgradeRouter;
  /** Origins a browser may connect from (the app's own, plus configured extras). */
  trustedOrigins: string[];
  /** Uploaded files (recording sources). */
  storage: StorageDriver;
  /** Background jobs (imports). */
  jobs: Jobs;
  /** Live captures held by this process. */
  captures: CaptureManager;
  /** Runs held by this process: sessions, panel links, watchers. */
  runs: RunManager;
  /** Largest upload in bytes (also the largest unpacked size of a gzip upload). */
  maxUploadBytes: number;
  /** Outgoing mail (e-mailed run reports); the fake SMTP server in development and tests. */
  mailer: Mailer;
}

export function authHeaders(req: Request): Headers {
  return fromNodeHeaders(req.headers);
}

/** The signed-in person, or null. */
export async function currentActor(services: Services, req: Request): Promise<Actor | null> {
  const session = await services.auth.api.getSession({ headers: authHeaders(req) });
  if (!session) return null;
  return { userId: session.user.id, email: session.user.email.toLowerCase(), name: session.user.name };
}

export async function requireActor(services: Services, req: Request): Promise<Actor> {
  const actor = await currentActor(services, req);
  if (!actor) throw unauthenticated();
  return actor;
}

/**
 * The actor's membership of one workshop. Someone who is not a member gets
 * "not found", never "forbidden": the workshop's existence is not theirs to learn.
 */
export async function requireMembership(services: Services, actor: Actor, workshopId: string): Promise<Membership> {
  const rows = await services.db
    .select({ memberId: member.id, role: member.role, workshopName: organization.name })
    .from(member)
    .innerJoin(organization, eq(organization.id, member.organizationId))
    .where(and(eq(member.organizationId, workshopId), eq(member.userId, actor.userId)))
    .limit(1);
  const row = rows[0];
  if (!row || !isWorkshopRole(row.role)) throw notFound("No such workshop.");
  return { workshopId, workshopName: row.workshopName, memberId: row.memberId, role: row.role };
}
