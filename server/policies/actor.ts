import type { WorkshopRole } from "../../shared/workshop/roles";

/** Who is asking: a signed-in person. Anonymous requests have no actor. */
export interface Actor {
  userId: string;
  email: string;
  name: string;
}

/** The actor's place in one workshop. */
export interface Membership {
  workshopId: string;
  workshopName: string;
  memberId: string;
  role: WorkshopRole;
}

/** Throws the route's refusal when a policy says no. Every route calls this before it acts. */
export function authorize(allowed: boolean, refusal: () => Error): asserts allowed {
  if (!allowed) throw refusal();
}
