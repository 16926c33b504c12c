import { describe, expect, it } from "vitest";
import { diffHeadline, diffRuns, isFailing, passRate, type ElementOutcome } from "../../../shared/compare/run-diff";
import type { ElementStatus } from "../../../shared/compare/types";

const P = "panel-1";
const outcome = (elementId: string, status: ElementStatus, mismatchCount = status === "fail" ? 2 : 0): ElementOutcome => ({ panelId: P, elementId, label: elementId.toUpperCase(), status, mismatchCount });
const ids = (list: { elementId: string }[]) => list.map((e) => e.elementId);

describe("comparing two runs of one panel and recording", () => {
  it("groups fixed, still failing and new failures (the issue's 'fixed 3, still failing 2, new 1')", () => {
    const earlier = [
      outcome("a", "fail"),
      outcome("b", "fail"),
      outcome("c", "no_data"),
      outcome("d", "fail"),
      outcome("e", "no_data"),
      outcome("f", "pass"),
      outcome("g", "pass"),
      outcome("h", "untested"),
    ];
    const later = [
      outcome("a", "pass"),
      outcome("b", "pass"),
      outcome("c", "pass"),
      outcome("d", "fail", 5),
      outcome("e", "fail"),
      outcome("f", "no_data"),
      outcome("g", "pass"),
      outcome("h", "pass"),
    ];
    const diff = diffRuns(earlier, later);
    expect(ids(diff.fixed)).toEqual(["a", "b", "c"]);
    expect(ids(diff.stillFailing)).toEqual(["d", "e"]);
    expect(ids(diff.newlyFailing)).toEqual(["f"]);
    expect(ids(diff.unchanged)).toEqual(["g"]);
    expect(ids(diff.otherwiseChanged)).toEqual(["h"]);
    expect(diffHeadline(diff)).toBe("fixed 3, still failing 2, new 1");
    // Each change keeps both verdicts and both mismatch counts.
    expect(diff.stillFailing[0]).toEqual({ panelId: P, elementId: "d", label: "D", before: "fail", after: "fail", mismatchesBefore: 2, mismatchesAfter: 5 });
    expect(diff.fixed[2]).toMatchObject({ before: "no_data", after: "pass" });
  });

  it("lists elements only one run knows as added or removed, never as fixed or new", () => {
    const diff = diffRuns([outcome("old", "fail"), outcome("kept", "pass")], [outcome("kept", "pass"), outcome("fresh", "fail")]);
    expect(ids(diff.removed)).toEqual(["old"]);
    expect(diff.removed[0]).toMatchObject({ before: "fail", after: null });
    expect(ids(diff.added)).toEqual(["fresh"]);
    expect(diff.added[0]).toMatchObject({ before: null, after: "fail" });
    expect(diff.fixed).toEqual([]);
    expect(diff.newlyFailing).toEqual([]);
  });

  it("matches elements by panel as well as id (element ids are unique per panel only)", () => {
    const earlier = [{ ...outcome("fire", "fail"), panelId: "left" }, { ...outcome("fire", "pass"), panelId: "right" }];
    const later = [{ ...outcome("fire", "pass"), panelId: "left" }, { ...outcome("fire", "fail"), panelId: "right" }];
    const diff = diffRuns(earlier, later);
    expect(diff.fixed.map((c) => c.panelId)).toEqual(["left"]);
    expect(diff.newlyFailing.map((c) => c.panelId)).toEqual(["right"]);
  });

  it("puts every element in exactly one group", () => {
    const statuses: ElementStatus[] = ["pass", "fail", "untested", "no_data", "placeholder"];
    const earlier = statuses.flatMap((b, i) => statuses.map((_, j) => outcome(`e${i}-${j}`, b)));
    const later = statuses.flatMap((_, i) => statuses.map((a, j) => outcome(`e${i}-${j}`, a)));
    const diff = diffRuns(earlier, later);
    const all = Object.values(diff).flatMap((g) => ids(g));
    expect(all.sort()).toEqual(ids(later).sort());
    // 2 failing verdicts before x 2 after = 4 still failing; 2 x 3 fixed; 3 x 2 new.
    expect([diff.fixed.length, diff.stillFailing.length, diff.newlyFailing.length]).toEqual([6, 4, 6]);
  });

  it("counts failing as fail or no data", () => {
    expect(["pass", "fail", "untested", "no_data", "placeholder"].filter((s) => isFailing(s as ElementStatus))).toEqual(["fail", "no_data"]);
  });
});

describe("a run's pass rate", () => {
  it("is passed among judged elements; untested and placeholders left out", () => {
    expect(passRate({ pass: 3, fail: 1, no_data: 0, untested: 4, placeholder: 2 })).toBe(0.75);
    expect(passRate({ pass: 1, fail: 1, no_data: 2 })).toBe(0.25);
    expect(passRate({ untested: 3 })).toBeNull();
    expect(passRate({})).toBeNull();
  });
});
