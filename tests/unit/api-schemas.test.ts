import { describe, expect, it } from "vitest";
import { z } from "zod";
import { STATUS_FOR_CODE, apiErrorBody, issuesFromZod } from "../../shared/api/errors";
import { createInvitationBody, createWorkshopBody, entityId } from "../../shared/api/workshops";

describe("shared API schemas", () => {
  it("trims and bounds workshop names", () => {
    expect(createWorkshopBody.parse({ name: "  Attic Pedestal  " })).toEqual({ name: "Attic Pedestal" });
    expect(createWorkshopBody.safeParse({ name: "x" }).success).toBe(false);
    expect(createWorkshopBody.safeParse({ name: "y".repeat(81) }).success).toBe(false);
    expect(createWorkshopBody.safeParse({ name: "ok name", extra: 1 }).success).toBe(false);
  });

  it("normalises invitation addresses and refuses owner or unknown roles", () => {
    expect(createInvitationBody.parse({ email: " Pat@Panelproof.Example ", role: "viewer" })).toEqual({
      email: "pat@panelproof.example",
      role: "viewer",
    });
    expect(createInvitationBody.safeParse({ email: "pat@panelproof.example", role: "owner" }).success).toBe(false);
    expect(createInvitationBody.safeParse({ email: "pat@panelproof.example", role: "admin" }).success).toBe(false);
    expect(createInvitationBody.safeParse({ email: "no-at-sign", role: "viewer" }).success).toBe(false);
  });

  it("accepts only printable identifiers", () => {
    expect(entityId.safeParse("abc_DEF-123").success).toBe(true);
    for (const bad of ["", "has space", "../etc", "a".repeat(65), "semi;colon"]) expect(entityId.safeParse(bad).success).toBe(false);
  });

  it("turns zod issues into paths that say where the value came from", () => {
    const result = z.object({ a: z.object({ b: z.number() }) }).safeParse({ a: { b: "x" } });
    expect(result.success).toBe(false);
    if (!result.success) expect(issuesFromZod(result.error, "body")[0].path).toBe("body.a.b");
  });

  it("maps every error code to an HTTP error status and validates the error body", () => {
    for (const status of Object.values(STATUS_FOR_CODE)) expect(status).toBeGreaterThanOrEqual(400);
    expect(apiErrorBody.safeParse({ error: { code: "not_found", message: "x" } }).success).toBe(true);
    expect(apiErrorBody.safeParse({ error: { code: "teapot", message: "x" } }).success).toBe(false);
  });
});
