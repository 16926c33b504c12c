import { describe, expect, it } from "vitest";
import { preloadsFor } from "../../../server/preloads";

describe("API answers named for preloading in a page's own answer", () => {
  it("names the sign-in check, the workshop and, on a report page, the report", () => {
    expect(preloadsFor("/w/abc123/runs")).toEqual(["/api/me", "/api/workshops/abc123"]);
    expect(preloadsFor("/w/abc123/runs/0b6c-9f/report")).toEqual(["/api/me", "/api/workshops/abc123", "/api/workshops/abc123/runs/0b6c-9f/export.json"]);
    expect(preloadsFor("/shared/Zm9vYmFy_-x")).toEqual(["/api/shared/Zm9vYmFy_-x"]);
  });

  it("names nothing for other pages, and never puts anything but an id into the header", () => {
    expect(preloadsFor("/sign-in")).toEqual([]);
    expect(preloadsFor("/w/abc>;%20rel=x/runs")).toEqual([]);
    expect(preloadsFor("/w/abc/runs/x,y/report")).toEqual(["/api/me", "/api/workshops/abc"]);
    expect(preloadsFor("/shared/a b")).toEqual([]);
    expect(preloadsFor(`/w/${"a".repeat(200)}`)).toEqual([]);
  });
});
