import { z } from "zod";
import { workshopRole } from "../workshop/roles";

/** Identifiers are opaque strings made by the server; keep them short and printable. */
export const entityId = z.string().min(1).max(64).regex(/^[A-Za-z0-9_-]+$/, "must be an identifier");

export const workshopName = z
  .string()
  .trim()
  .min(2, "must be at least 2 characters")
  .max(80, "must be at most 80 characters");

export const createWorkshopBody = z.object({ name: workshopName }).strict();
export type CreateWorkshopBody = z.infer<typeof createWorkshopBody>;

export const updateWorkshopBody = z.object({ name: workshopName }).strict();
export type UpdateWorkshopBody = z.infer<typeof updateWorkshopBody>;

export const workshopSummary = z.object({
  id: z.string(),
  name: z.string(),
  slug: z.string(),
  role: workshopRole,
  createdAt: z.string(),
});
export type WorkshopSummary = z.infer<typeof workshopSummary>;

export const workshopDetail = workshopSummary.extend({
  memberCount: z.number().int(),
  abilities: z.array(z.string()),
});
export type WorkshopDetail = z.infer<typeof workshopDetail>;

export const memberView = z.object({
  id: z.string(),
  userId: z.string(),
  name: z.string(),
  email: z.string(),
  role: workshopRole,
  joinedAt: z.string(),
});
export type MemberView = z.infer<typeof memberView>;

export const changeRoleBody = z.object({ role: workshopRole }).strict();
export type ChangeRoleBody = z.infer<typeof changeRoleBody>;

export const emailAddress = z.string().trim().toLowerCase().max(254).pipe(z.email("must be an e-mail address"));

export const createInvitationBody = z
  .object({
    email: emailAddress,
    // Owners are made by creating a workshop or by promotion, not by invitation.
    role: z.enum(["builder", "viewer"], { message: "must be builder or viewer" }),
  })
  .strict();
export type CreateInvitationBody = z.infer<typeof createInvitationBody>;

export const INVITATION_STATUSES = ["pending", "accepted", "rejected", "canceled"] as const;

export const invitationView = z.object({
  id: z.string(),
  email: z.string(),
  role: workshopRole,
  status: z.enum(INVITATION_STATUSES),
  expiresAt: z.string(),
  invitedBy: z.string().nullable(),
});
export type InvitationView = z.infer<typeof invitationView>;

/** What the invited person sees before accepting. */
export const invitationPreview = z.object({
  id: z.string(),
  workshopName: z.string(),
  email: z.string(),
  role: workshopRole,
  status: z.enum(INVITATION_STATUSES),
  expired: z.boolean(),
  invitedBy: z.string().nullable(),
});
export type InvitationPreview = z.infer<typeof invitationPreview>;

export const meView = z.object({
  user: z.object({ id: z.string(), name: z.string(), email: z.string() }),
  workshops: z.array(workshopSummary),
});
export type MeView = z.infer<typeof meView>;

export const healthView = z.object({
  app: z.literal("ok"),
  database: z.enum(["ok", "unreachable"]),
  mail: z.enum(["outbox", "smtp"]),
  version: z.string(),
});
export type HealthView = z.infer<typeof healthView>;

export const outboxMessageView = z.object({
  id: z.string(),
  from: z.string(),
  to: z.array(z.string()),
  subject: z.string(),
  text: z.string(),
  html: z.string().nullable(),
  receivedAt: z.string(),
});
export type OutboxMessageView = z.infer<typeof outboxMessageView>;
