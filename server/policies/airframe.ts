import { roleCan } from "../../shared/workshop/roles";
import type { Membership } from "./actor";

/** Airframes and their channel catalogues: every member reads them; builders and owners change them. */
export const airframePolicy = {
  read: (m: Membership) => roleCan(m.role, "bench.read"),
  create: (m: Membership) => roleCan(m.role, "bench.write"),
  update: (m: Membership) => roleCan(m.role, "bench.write"),
};
