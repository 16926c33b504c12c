import { roleCan } from "../../shared/workshop/roles";
import type { Membership } from "./actor";

/**
 * Panels, their photos, markers, previews and device tokens: viewers read, preview and export;
 * builders and owners create, change, mirror, duplicate and delete, and make or revoke tokens.
 */
export const panelPolicy = {
  read: (m: Membership) => roleCan(m.role, "bench.read"),
  create: (m: Membership) => roleCan(m.role, "bench.write"),
  update: (m: Membership) => roleCan(m.role, "bench.write"),
  remove: (m: Membership) => roleCan(m.role, "bench.write"),
  manageTokens: (m: Membership) => roleCan(m.role, "bench.write"),
};
