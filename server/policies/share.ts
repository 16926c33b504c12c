import { roleCan } from "../../shared/workshop/roles";
import type { Membership } from "./actor";

/**
 * Share links to a run's report: builders and owners make and revoke them; every member may
 * list them (ids and dates, never tokens). Anyone holding a valid token reads that one report
 * and nothing else (routes/runs.ts, GET /api/shared/:token).
 */
export const sharePolicy = {
  list: (m: Membership) => roleCan(m.role, "bench.read"),
  create: (m: Membership) => roleCan(m.role, "bench.write"),
  revoke: (m: Membership) => roleCan(m.role, "bench.write"),
};
