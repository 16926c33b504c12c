import { createAccessControl } from "better-auth/plugins/access";
import { defaultStatements } from "better-auth/plugins/organization/access";

/**
 * better-auth's own permission table for its organization endpoints, kept in step
 * with shared/workshop/roles.ts. Our routes ask server/policies; better-auth's
 * endpoints (reachable under /api/auth/organization/*) ask this table, so both
 * doors agree on what each role may do.
 */
const statements = { ...defaultStatements } as const;

export const accessControl = createAccessControl(statements);

export const ownerRole = accessControl.newRole({
  organization: ["update", "delete"],
  member: ["create", "update", "delete"],
  invitation: ["create", "cancel"],
  team: [],
  ac: [],
});
export const builderRole = accessControl.newRole({
  organization: [],
  member: [],
  invitation: [],
  team: [],
  ac: [],
});
export const viewerRole = accessControl.newRole({
  organization: [],
  member: [],
  invitation: [],
  team: [],
  ac: [],
});
