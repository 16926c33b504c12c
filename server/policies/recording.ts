import { roleCan } from "../../shared/workshop/roles";
import type { Membership } from "./actor";

/**
 * Recordings, their imports and scenarios: viewers read, plot and download them; builders and
 * owners upload, generate, rename and delete.
 */
export const recordingPolicy = {
  read: (m: Membership) => roleCan(m.role, "bench.read"),
  create: (m: Membership) => roleCan(m.role, "bench.write"),
  update: (m: Membership) => roleCan(m.role, "bench.write"),
  remove: (m: Membership) => roleCan(m.role, "bench.write"),
};
