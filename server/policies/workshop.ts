import { roleCan } from "../../shared/workshop/roles";
import type { Actor, Membership } from "./actor";

/** Workshops: any signed-in person may start one; members read it; owners change it. */
export const workshopPolicy = {
  create: (actor: Actor | null) => actor !== null,
  read: (m: Membership) => roleCan(m.role, "workshop.read"),
  update: (m: Membership) => roleCan(m.role, "workshop.update"),
};
