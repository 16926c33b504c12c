import { roleCan } from "../../shared/workshop/roles";
import type { Membership } from "./actor";

/**
 * The bench machine itself: which serial ports it has is for those who link panels to runs
 * (builders and owners), not for viewers.
 */
export const benchPolicy = {
  listSerialPorts: (m: Membership) => roleCan(m.role, "bench.write"),
};
