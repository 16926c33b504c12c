import { roleCan } from "../../shared/workshop/roles";
import type { Membership } from "./actor";

/**
 * Live captures: every member may watch one; only builders and owners start, stop or feed one
 * (feeding over WebSocket with a session needs the same right as starting it).
 */
export const capturePolicy = {
  read: (m: Membership) => roleCan(m.role, "bench.read"),
  start: (m: Membership) => roleCan(m.role, "bench.write"),
  stop: (m: Membership) => roleCan(m.role, "bench.write"),
  feed: (m: Membership) => roleCan(m.role, "bench.write"),
};
