import { roleCan } from "../../shared/workshop/roles";
import type { Actor, Membership } from "./actor";

export interface InvitationTarget {
  email: string;
  status: string;
  expiresAt: Date;
}

/** Invitations: owners send, list and cancel them; only the invited address can accept or decline one. */
export const invitationPolicy = {
  read: (m: Membership) => roleCan(m.role, "invitation.read"),
  create: (m: Membership) => roleCan(m.role, "invitation.create"),
  cancel: (m: Membership) => roleCan(m.role, "invitation.cancel"),
  respond: (actor: Actor, invitation: InvitationTarget, now: Date) =>
    actor.email === invitation.email.toLowerCase() && invitation.status === "pending" && invitation.expiresAt > now,
};
