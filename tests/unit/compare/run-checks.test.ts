import { SimulatedClock } from "xstate";
import { describe, expect, it } from "vitest";
import { InputWalk, walkSteps, type WalkSnapshot } from "../../../shared/compare/input-walk";
import { judgeOffline, tolerancesOf } from "../../../shared/compare/judge";
import { applyObservations, MAX_CHECKPOINTS_PER_ELEMENT, observationCheckpoints } from "../../../shared/compare/observations";
import { setupCheck } from "../../../shared/compare/setup-check";
import { expectTimelines } from "../../../shared/expect/engine";
import type { ExpectFrame } from "../../../shared/expect/types";
import { panel as panelSchema } from "../../../shared/panel/schema";

/**
 * The checks beside the replay (issue 6): the set-up check, the input walk's sequencer on a
 * simulated clock, and observation checkpoints with their answers joining the results.
 */

// An invented rig: a gear lever, a three-way flap lever, a breaker, a test button, a lamp and a needle.
const definition = panelSchema.parse({
  id: "checks-panel",
  name: "Checks",
  airframe: "rig",
  elements: [
    { kind: "lever", id: "gear", label: "GEAR", positions: ["up", "down"], position: { channel: "gear.handle", map: { UP: "up", DOWN: "down" } } },
    { kind: "lever", id: "flaps", label: "FLAPS", positions: ["up", "mid", "down"], position: { channel: "flaps.pos", map: { "0": "up", "1": "mid", "2": "down" } } },
    { kind: "breaker", id: "gen-cb", label: "GEN", trip: { channel: "gen.trip" }, pulled: { channel: "gen.pulled" } },
    { kind: "button", id: "test", label: "TEST", pressed: { channel: "lamp.test" } },
    { kind: "lamp", id: "unsafe", label: "GEAR UNSAFE", drive: { mode: "condition", on: { channel: "gear.unsafe" } } },
    { kind: "pointer", id: "airspeed", label: "airspeed pointer", value: { channel: "ias_kt" }, scale: { kind: "sweep", points: [{ value: 0, angle: 0 }, { value: 200, angle: 300 }] } },
    { kind: "lamp", id: "spare", label: "SPARE", placeholder: true, drive: { mode: "condition", on: { channel: "gear.unsafe" } } },
  ],
});

const frames: ExpectFrame[] = [
  { t: 0, v: { "gear.handle": "DOWN", "flaps.pos": "0", "gen.trip": false, "gen.pulled": false, "lamp.test": false, "gear.unsafe": false, ias_kt: 0 } },
  { t: 1000, v: { ias_kt: 100 } },
  { t: 2000, v: { "gear.handle": "UP", "gear.unsafe": true } },
  { t: 4000, v: { "gear.unsafe": false, ias_kt: 120 } },
  { t: 6000, v: { "flaps.pos": "1", ias_kt: 121 } },
];
const timelines = expectTimelines(definition, frames, { endMs: 8000 });

describe("the set-up check", () => {
  it("lists reported positions that differ from the recording's first instant, in words", () => {
    const reported: Record<string, string> = { gear: "up", flaps: "up", "gen-cb": "pulled" };
    const check = setupCheck(definition.elements, timelines, 0, (id) => reported[id]);
    expect(check.differences.map((d) => [d.elementId, d.reported, d.expected])).toEqual([
      ["gear", "up", "down"],
      ["gen-cb", "pulled", "in"],
    ]);
    expect(check.differences[0].sentence).toBe("GEAR lever is up, the recording starts down");
    expect(check.differences[1].sentence).toBe("GEN breaker is pulled, the recording starts in");
    // Buttons, lamps and pointers are not set by hand before a flight; nothing unreported here.
    expect(check.unreported).toEqual([]);
  });

  it("compares with the recording at the instant play starts, and never blocks on what was not reported", () => {
    const later = setupCheck(definition.elements, timelines, 3000, (id) => ({ gear: "up" })[id]);
    expect(later.differences).toEqual([]);
    expect(later.unreported.map((u) => u.elementId)).toEqual(["flaps", "gen-cb"]);
    expect(later.unreported[0].sentence).toBe("FLAPS lever has not reported its position; the recording starts up");
  });
});

describe("the input walk", () => {
  it("asks every input position, starting after where each element rests and ending where it was", () => {
    const steps = walkSteps([{ panelId: "p", elements: definition.elements }], (_p, id) => ({ gear: "down", flaps: "up", "gen-cb": "in" })[id]);
    expect(steps.map((s) => `${s.elementId}:${s.position}`)).toEqual(["gear:up", "gear:down", "flaps:mid", "flaps:down", "flaps:up", "gen-cb:pulled", "gen-cb:in", "test:pressed"]);
    expect(steps.map((s) => s.prompt)).toEqual([
      "Move the GEAR lever to up",
      "Move the GEAR lever to down",
      "Move the FLAPS lever to mid",
      "Move the FLAPS lever to down",
      "Move the FLAPS lever to up",
      "Pull the GEN breaker",
      "Push the GEN breaker in",
      "Press the TEST button",
    ]);
  });

  it("records pass, wrong position and timeout on a simulated clock", () => {
    const clock = new SimulatedClock();
    const steps = walkSteps([{ panelId: "p", elements: definition.elements.filter((e) => e.id === "gear" || e.id === "flaps") }], (_p, id) => ({ gear: "down", flaps: "up" })[id]);
    const seen: WalkSnapshot[] = [];
    const walk = new InputWalk(steps, { timeoutMs: 10_000, settleMs: 1500, clock, onChange: (s) => seen.push(s) });
    expect(walk.asked?.prompt).toBe("Move the GEAR lever to up");
    clock.increment(700);
    walk.input({ panelId: "p", elementId: "gear", position: "up" });
    expect(walk.asked?.prompt).toBe("Move the GEAR lever to down");
    // Another element's input does not answer for this one.
    walk.input({ panelId: "p", elementId: "flaps", position: "down" });
    clock.increment(10_000);
    expect(walk.asked?.prompt).toBe("Move the FLAPS lever to mid");
    // A three-way lever passing its middle: "down" then "mid" within the settle time is a pass...
    walk.input({ panelId: "p", elementId: "flaps", position: "down" });
    clock.increment(500);
    walk.input({ panelId: "p", elementId: "flaps", position: "mid" });
    expect(walk.asked?.prompt).toBe("Move the FLAPS lever to down");
    // ...but a wrong position that stays for the settle time is wrong.
    walk.input({ panelId: "p", elementId: "flaps", position: "up" });
    clock.increment(1499);
    expect(walk.asked?.position).toBe("down");
    clock.increment(1);
    expect(walk.asked?.position).toBe("up");
    walk.skip();
    expect(walk.state).toBe("done");
    const last = walk.snapshot();
    expect(last.steps.map((s) => [s.position, s.result, s.seen])).toEqual([
      ["up", "pass", null],
      ["down", "timeout", null],
      ["mid", "pass", null],
      ["down", "wrong_position", "up"],
      ["up", "skipped", null],
    ]);
    expect(last.steps[0].tookMs).toBe(700);
    expect(last.steps[1].tookMs).toBe(10_000);
    // Told once at the start, once per answered step.
    expect(seen.map((s) => s.current)).toEqual([0, 1, 2, 3, 4, 5]);
    expect(seen.at(-1)?.state).toBe("done");
  });

  it("can be cancelled; an empty walk is done at once", () => {
    const walk = new InputWalk(walkSteps([{ panelId: "p", elements: definition.elements }], () => null), { timeoutMs: 1000, clock: new SimulatedClock() });
    walk.cancel();
    expect(walk.state).toBe("cancelled");
    expect(walk.asked).toBeNull();
    expect(new InputWalk([], { timeoutMs: 1000, clock: new SimulatedClock() }).state).toBe("done");
  });
});

describe("observation checkpoints", () => {
  const panels = [{ panelId: "p", elements: definition.elements, timelines }];
  const window = { fromMs: 0, endMs: 8000 };

  it("asks at each change of an observed element once its lag budget has passed", () => {
    const plans = observationCheckpoints(panels, [{ panelId: "p", elementId: "unsafe" }, { panelId: "p", elementId: "flaps" }], window);
    // The lamp's lag budget is 150 ms, the lever's 250 ms, each plus 100 ms.
    expect(plans.map((c) => [c.elementId, c.atMs, c.question])).toEqual([
      ["unsafe", 2250, "Is the GEAR UNSAFE lamp lit now?"],
      ["unsafe", 4250, "Is the GEAR UNSAFE lamp dark now?"],
      ["flaps", 6350, "Is the FLAPS lever at mid now?"],
    ]);
    expect(plans[0].id).toBe("p:unsafe:2000");
    expect(plans[0].expected).toBe("on");
  });

  it("asks about a needle where it comes to rest after a real move, and caps the count", () => {
    const plans = observationCheckpoints(panels, [{ panelId: "p", elementId: "airspeed" }], window);
    // 0 -> 100 kt at 1 s (150°), 100 -> 120 kt at 4 s (180°); 120 -> 121 kt is under 5°.
    expect(plans.map((c) => [c.atMs, c.expected])).toEqual([
      [1400, "150°"],
      [4400, "180°"],
    ]);
    const busy = expectTimelines(definition, Array.from({ length: 40 }, (_, i) => ({ t: i * 200, v: { "gear.unsafe": i % 2 === 1 } })), { endMs: 8000 });
    const many = observationCheckpoints([{ panelId: "p", elements: definition.elements, timelines: busy }], [{ panelId: "p", elementId: "unsafe" }], window);
    expect(many).toHaveLength(MAX_CHECKPOINTS_PER_ELEMENT);
    expect(many[0].atMs).toBe(200 + 250);
  });

  it("joins answers to the results: a no fails with an observed mismatch, a yes passes an element without data", () => {
    const judgement = judgeOffline({ ...timelines, startMs: 0, endMs: 8000 }, [], [], (id) => tolerancesOf(definition.elements.find((e) => e.id === id)));
    expect(judgement.elements.find((e) => e.elementId === "unsafe")?.status).toBe("no_data");
    const observed = [{ panelId: "p", elementId: "unsafe" }, { panelId: "p", elementId: "airspeed" }, { panelId: "p", elementId: "flaps" }];
    const applied = applyObservations(judgement, "p", definition.elements, observed, [
      { panelId: "p", elementId: "unsafe", atMs: 2250, expected: "on", answer: "yes" },
      { panelId: "p", elementId: "unsafe", atMs: 4250, expected: "off", answer: "no" },
      { panelId: "p", elementId: "airspeed", atMs: 1400, expected: "150°", answer: "yes" },
      { panelId: "p", elementId: "flaps", atMs: 6350, expected: "mid", answer: "skip" },
    ]);
    const status = (id: string) => applied.elements.find((e) => e.elementId === id)?.status;
    expect(status("unsafe")).toBe("fail");
    expect(status("airspeed")).toBe("pass");
    // Observed, only skipped, no link data: nothing confirmed either way.
    expect(status("flaps")).toBe("untested");
    // Not observed: the link's verdict stands.
    expect(status("gear")).toBe("no_data");
    expect(applied.mismatches).toEqual([
      { elementId: "unsafe", track: "lamp", kind: "observed", startMs: 4250, endMs: 4250, worstError: 0, expected: "off", seen: "not so, by the builder's eye", atMs: 4250 },
    ]);
    expect(applied.counts.fail).toBe(1);
    expect(Object.values(applied.counts).reduce((a, b) => a + b, 0)).toBe(definition.elements.length);
  });
});
