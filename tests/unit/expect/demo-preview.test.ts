import { readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { expectedAt, expectTimelines, panelCoverage, type ExpectFrame } from "../../../shared/expect";
import { demoPanels, flightGauges } from "../../../shared/panel/demo";
import { valueToAngle } from "../../../shared/elements/scale";

/** The demo recording's frames: a header line, then one `{ t, v }` frame per line. */
function demoFrames(): ExpectFrame[] {
  const text = readFileSync(path.resolve(__dirname, "../../../recordings/demo-pattern-flight.ppr.jsonl"), "utf8");
  return text
    .split("\n")
    .slice(1)
    .filter((line) => line.trim() !== "")
    .map((line) => JSON.parse(line) as ExpectFrame);
}

describe("demo panels against the demo recording", () => {
  it("preview every demo panel, the same way twice", () => {
    const frames = demoFrames();
    for (const p of demoPanels) {
      const first = expectTimelines(p, frames);
      expect(first.elements.map((e) => e.id)).toEqual(p.elements.map((e) => e.id));
      expect(JSON.stringify(expectTimelines(p, frames))).toBe(JSON.stringify(first));
      expect(first.endMs).toBe(frames.at(-1)!.t);
      panelCoverage(p, first); // must not throw on any demo element
    }
  });

  it("shows the airspeed pointer at the recording's airspeed once it has caught up", () => {
    const frames = demoFrames();
    const asi = expectTimelines(flightGauges, frames).elements.find((e) => e.id === "airspeed")!;
    // 0 kt sits on the dead band at 0 degrees (scale table in shared/panel/demo/panels.ts).
    expect(expectedAt(asi, 0).angle).toBe(0);
    const fast = frames.find((f) => typeof f.v.ias_kt === "number" && (f.v.ias_kt as number) >= 90)!;
    expect(fast).toBeDefined();
    // Frames here are 2 s apart (steps): a second after one, the needle has settled on its value.
    const at = fast.t + 1000;
    let ias = 0;
    for (const f of frames) if (f.t <= at && typeof f.v.ias_kt === "number") ias = f.v.ias_kt;
    const scale = flightGauges.elements.find((e) => e.id === "airspeed")!;
    if (scale.kind !== "pointer") throw new Error("airspeed must be a pointer");
    // The needle (240 deg/s) has long caught up with a slowly changing airspeed.
    expect(expectedAt(asi, at).angle).toBeCloseTo(valueToAngle(scale.scale, ias).angle, 6);
    expect(expectedAt(asi, at).angle).toBeGreaterThan(100);
  });
});
