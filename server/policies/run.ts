import { roleCan } from "../../shared/workshop/roles";
import type { Membership } from "./actor";

/**
 * Runs: viewers list, read, watch and export reports; builders and owners create runs, control
 * them (play, pause, seek...), drive a virtual panel in one, and judge them again.
 */
export const runPolicy = {
  read: (m: Membership) => roleCan(m.role, "bench.read"),
  create: (m: Membership) => roleCan(m.role, "bench.write"),
  control: (m: Membership) => roleCan(m.role, "bench.write"),
  drive: (m: Membership) => roleCan(m.role, "bench.write"),
  rejudge: (m: Membership) => roleCan(m.role, "bench.write"),
  /** Compare two runs, read history, expected states and a pointer's traces: like reading a report. */
  compare: (m: Membership) => roleCan(m.role, "bench.read"),
  /** E-mail a report (to members or any address): builders and owners, as for share links. */
  email: (m: Membership) => roleCan(m.role, "bench.write"),
};
