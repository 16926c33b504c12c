import { describe, expect, it } from "vitest";
import { ROLE_ABILITIES, WORKSHOP_ABILITIES, isWorkshopRole, roleCan } from "../../shared/workshop/roles";

describe("workshop roles", () => {
  it("owners may do everything, builders change the bench, viewers only read", () => {
    for (const ability of WORKSHOP_ABILITIES) expect(roleCan("owner", ability)).toBe(true);
    expect(roleCan("builder", "bench.write")).toBe(true);
    expect(roleCan("builder", "invitation.create")).toBe(false);
    expect(roleCan("builder", "member.changeRole")).toBe(false);
    expect([...ROLE_ABILITIES.viewer].every((a) => a.endsWith(".read"))).toBe(true);
    expect(roleCan("viewer", "bench.write")).toBe(false);
  });

  it("every ability a builder has, an owner has; every ability a viewer has, a builder has", () => {
    for (const a of ROLE_ABILITIES.builder) expect(ROLE_ABILITIES.owner.has(a)).toBe(true);
    for (const a of ROLE_ABILITIES.viewer) expect(ROLE_ABILITIES.builder.has(a)).toBe(true);
  });

  it("unknown role names, including better-auth's built-in ones, may do nothing", () => {
    for (const name of ["admin", "member", "", "OWNER", null, undefined]) {
      expect(isWorkshopRole(name)).toBe(false);
      for (const a of WORKSHOP_ABILITIES) expect(roleCan(name, a)).toBe(false);
    }
  });
});
