import { z } from "zod";

/**
 * A workshop's roles. Owners run the workshop (members, invitations, settings);
 * builders change panels, recordings and runs; viewers read.
 *
 * This table is the single source of what a role may do. The server's policies
 * (server/policies) enforce it; the client reads it only to hide what the role
 * cannot do.
 */
export const WORKSHOP_ROLES = ["owner", "builder", "viewer"] as const;
export const workshopRole = z.enum(WORKSHOP_ROLES);
export type WorkshopRole = z.infer<typeof workshopRole>;

/** Everything a member can be allowed to do inside one workshop. */
export const WORKSHOP_ABILITIES = [
  "workshop.read",
  "workshop.update",
  "workshop.delete",
  "member.read",
  "member.changeRole",
  "member.remove",
  "invitation.read",
  "invitation.create",
  "invitation.cancel",
  "bench.read",
  "bench.write",
] as const;
export type WorkshopAbility = (typeof WORKSHOP_ABILITIES)[number];

const READ: WorkshopAbility[] = ["workshop.read", "member.read", "bench.read"];

export const ROLE_ABILITIES: Record<WorkshopRole, ReadonlySet<WorkshopAbility>> = {
  owner: new Set(WORKSHOP_ABILITIES),
  builder: new Set([...READ, "bench.write"]),
  viewer: new Set(READ),
};

export function isWorkshopRole(value: unknown): value is WorkshopRole {
  return typeof value === "string" && (WORKSHOP_ROLES as readonly string[]).includes(value);
}

/** True when a member with `role` may do `ability`. Unknown roles may do nothing. */
export function roleCan(role: string | null | undefined, ability: WorkshopAbility): boolean {
  return isWorkshopRole(role) && ROLE_ABILITIES[role].has(ability);
}

export const ROLE_DESCRIPTIONS: Record<WorkshopRole, string> = {
  owner: "Runs the workshop: members, invitations and settings, plus everything a builder does.",
  builder: "Creates and changes panels, recordings and runs.",
  viewer: "Reads panels, recordings, runs and reports; changes nothing.",
};
