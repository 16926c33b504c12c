import { readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { judgeOffline, tolerancesOf } from "../../../shared/compare/judge";
import { expectTimelines, type ExpectFrame } from "../../../shared/expect";
import { demoPanels } from "../../../shared/panel/demo";
import { generateScenario } from "../../../shared/recording/scenario";
import { simulateSeen } from "../../../shared/virtual/faults";

describe("the demo full panel check", () => {
  const generated = generateScenario(readFileSync(path.resolve(__dirname, "../../../recordings/demo-full-panel-check.scenario.json"), "utf8"));
  const frames = generated.frames as ExpectFrame[];

  it("exercises every output element of every demo panel, and a healthy panel passes them all", () => {
    for (const panel of demoPanels) {
      const timelines = expectTimelines(panel, frames);
      const { samples } = simulateSeen(timelines, []);
      const byId = new Map(panel.elements.map((e) => [e.id, e]));
      const result = judgeOffline(timelines, samples, [], (id) => tolerancesOf(byId.get(id)));
      for (const e of result.elements) {
        const el = byId.get(e.elementId)!;
        if (el.placeholder) expect(e.status).toBe("placeholder");
        else if (el.kind === "encoder" || (el.kind === "button" && !("backlight" in el && el.backlight))) expect(e.status).toBe("untested");
        else expect({ panel: panel.id, element: e.elementId, status: e.status }).toEqual({ panel: panel.id, element: e.elementId, status: "pass" });
      }
    }
  });
});
