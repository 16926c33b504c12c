import { readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { judgeOffline, tolerancesOf } from "../../../shared/compare/judge";
import { expectTimelines, type ExpectFrame } from "../../../shared/expect";
import { parseRecording } from "../../../shared/recording/recording-file";
import { flightGauges, warningPanel } from "../../../shared/panel/demo";
import type { Panel } from "../../../shared/panel/schema";
import { faultList, simulateSeen, type Fault } from "../../../shared/virtual/faults";

// The invented demo flight and the fire-drill scenario's recording: every lamp and pointer moves in them.
const demoFrames = parseRecording(readFileSync(path.resolve(__dirname, "../../../recordings/demo-pattern-flight.ppr.jsonl"), "utf8")).frames as ExpectFrame[];

function runWith(panel: Panel, faults: Fault[], pointerReportMs = 50) {
  const timelines = expectTimelines(panel, demoFrames);
  const { samples, gaps } = simulateSeen(timelines, faults, { pointerReportMs });
  const byId = new Map(panel.elements.map((e) => [e.id, e]));
  return judgeOffline(timelines, samples, gaps.map((gap) => ({ elementIds: panel.elements.map((e) => e.id), gap })), (id) => tolerancesOf(byId.get(id)));
}

describe("the tester tested: a virtual panel with known faults", () => {
  it("a healthy virtual panel passes (or is untested) on every element", () => {
    for (const panel of [warningPanel, flightGauges]) {
      const result = runWith(panel, []);
      expect(result.mismatches).toEqual([]);
      expect(result.counts.fail).toBe(0);
      expect(result.counts.no_data).toBe(0);
    }
  });

  it("two injected faults fail exactly those two elements", () => {
    const healthy = runWith(flightGauges, []);
    const pointer = healthy.elements.find((e) => e.kind === "pointer" && e.status === "pass")!;
    const readout = healthy.elements.find((e) => e.kind === "readout" && e.status === "pass");
    const faults: Fault[] = [{ kind: "pointer_offset", element: pointer.elementId, degrees: 15 }];
    if (readout) faults.push({ kind: "digit_dropped", element: readout.elementId, position: 0 });
    const result = runWith(flightGauges, faults, 5);
    const failing = result.elements.filter((e) => e.status === "fail").map((e) => e.elementId).sort();
    expect(failing).toEqual(faults.map((f) => ("element" in f ? f.element : "")).sort());
    const offset = result.mismatches.filter((m) => m.elementId === pointer.elementId);
    expect(offset.length).toBeGreaterThan(0);
    // While the needle rests, the error is the offset itself; while it moves, a held report adds its staleness.
    const errors = offset.map((m) => m.worstError);
    expect(Math.max(...errors)).toBeGreaterThanOrEqual(15 - 1e-9);
    expect(offset.reduce((ms, m) => ms + m.endMs - m.startMs, 0)).toBeGreaterThan(0.8 * (demoFrames.at(-1)!.t - demoFrames[0].t));
  });

  it("a stuck lamp fails where the lamp should have changed, and only there", () => {
    const healthy = runWith(warningPanel, []);
    const exercised = healthy.elements.find((e) => e.kind === "lamp" && e.status === "pass")!;
    const result = runWith(warningPanel, [{ kind: "lamp_stuck", element: exercised.elementId, lit: false }]);
    expect(result.elements.filter((e) => e.status === "fail").map((e) => e.elementId)).toEqual([exercised.elementId]);
  });

  it("a lamp that follows too late is called late", () => {
    const healthy = runWith(warningPanel, []);
    const lamp = healthy.elements.find((e) => e.kind === "lamp" && e.status === "pass")!;
    const result = runWith(warningPanel, [{ kind: "added_lag", element: lamp.elementId, ms: 600 }]);
    const mine = result.mismatches.filter((m) => m.elementId === lamp.elementId);
    expect(mine.length).toBeGreaterThan(0);
    expect(mine.every((m) => m.kind === "late")).toBe(true);
  });

  it("a disconnect gives no data, never a pass, and no mismatch inside the gap", () => {
    const result = runWith(flightGauges, [{ kind: "disconnect", fromMs: 10_000, toMs: 30_000 }]);
    expect(result.counts.no_data).toBeGreaterThan(0);
    for (const m of result.mismatches) expect(m.endMs <= 10_000 || m.startMs >= 30_000).toBe(true);
  });

  it("validates fault lists from outside", () => {
    expect(faultList.safeParse([{ kind: "pointer_offset", element: "x", degrees: 5 }]).success).toBe(true);
    expect(faultList.safeParse([{ kind: "pointer_offset", element: "x" }]).success).toBe(false);
    expect(faultList.safeParse([{ kind: "melt", element: "x" }]).success).toBe(false);
  });
});
