import { roleCan } from "../../shared/workshop/roles";
import type { Membership } from "./actor";

export interface MemberTarget {
  memberId: string;
  role: string;
}

/** Members: everyone in the workshop sees who is in it; only owners change roles or remove people. */
export const memberPolicy = {
  read: (m: Membership) => roleCan(m.role, "member.read"),
  changeRole: (m: Membership, target: MemberTarget, ownerCount: number, newRole: string) =>
    roleCan(m.role, "member.changeRole") &&
    // A workshop always keeps at least one owner.
    !(target.role === "owner" && newRole !== "owner" && ownerCount <= 1),
  remove: (m: Membership, target: MemberTarget, ownerCount: number) =>
    roleCan(m.role, "member.remove") && !(target.role === "owner" && ownerCount <= 1),
};
