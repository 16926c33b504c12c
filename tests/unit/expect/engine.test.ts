import { describe, expect, it } from "vitest";
import { applyTransform, formatReadout } from "../../../shared/elements/bindings";
import { expectedAt, expectTimelines, expectTimelinesStepwise, type ExpectFrame } from "../../../shared/expect";
import { linearPointer, panelOf } from "./helpers";

describe("slew-limited pointer, hand-computed", () => {
  it("reaches a stepped target at the computed time and reads linearly on the way", () => {
    // Value 0 -> 50 at t = 1000 ms is 0 -> 150 degrees; at 60 deg/s that takes 2.5 s: arrival 3500 ms.
    const p = panelOf(linearPointer({ maxSlewDegPerSec: 60 }));
    const tl = expectTimelines(p, [
      { t: 0, v: { v: 0 } },
      { t: 1000, v: { v: 50 } },
    ], { endMs: 6000 }).elements[0];
    expect(tl.angle).toEqual({ t: [0, 1000, 3500, 6000], angle: [0, 0, 150, 150], wrap: false });
    expect(expectedAt(tl, 2000).angle).toBeCloseTo(60, 9);
    expect(expectedAt(tl, 3500).angle).toBe(150);
  });

  it("turns back mid-move when the target changes, from where the needle is", () => {
    // At 2000 ms the needle is at 60 degrees heading for 150; the target drops to 30 (value 10).
    // It reverses at 60 deg/s: 30 degrees takes 500 ms, arrival at 2500 ms.
    const p = panelOf(linearPointer({ maxSlewDegPerSec: 60 }));
    const tl = expectTimelines(p, [
      { t: 0, v: { v: 0 } },
      { t: 1000, v: { v: 50 } },
      { t: 2000, v: { v: 10 } },
    ], { endMs: 4000 }).elements[0];
    expect(tl.angle!.t).toEqual([0, 1000, 2000, 2500, 4000]);
    expect(tl.angle!.angle[2]).toBeCloseTo(60, 9);
    expect(tl.angle!.angle[3]).toBeCloseTo(30, 9);
  });

  it("jumps at once when it has no slew limit (two points at one instant)", () => {
    const tl = expectTimelines(panelOf(linearPointer()), [
      { t: 0, v: { v: 0 } },
      { t: 1000, v: { v: 10 } },
    ], { endMs: 2000 }).elements[0];
    expect(tl.angle).toEqual({ t: [0, 1000, 1000, 2000], angle: [0, 0, 30, 30], wrap: false });
    expect(expectedAt(tl, 999.9).angle).toBe(0);
    expect(expectedAt(tl, 1000).angle).toBe(30);
  });

  it("follows a ramp sampled at 50 Hz exactly when the ramp is slower than the limit, in few points", () => {
    // 1 unit per 20 ms = 150 deg/s, below the 200 deg/s limit: the needle tracks the ramp.
    const frames: ExpectFrame[] = [];
    for (let i = 0; i <= 50; i++) frames.push({ t: i * 20, v: { v: i } });
    const tl = expectTimelines(panelOf(linearPointer({ maxSlewDegPerSec: 200 })), frames).elements[0];
    expect(tl.angle!.t).toEqual([0, 1000]);
    expect(tl.angle!.angle).toEqual([0, 150]);
  });

  it("falls behind a ramp faster than its limit, at the limit's speed", () => {
    // 300 deg/s ramp against a 100 deg/s needle: after 1 s the needle is at 100 degrees, the target at 300.
    const frames: ExpectFrame[] = [];
    for (let i = 0; i <= 100; i++) frames.push({ t: i * 10, v: { v: i } });
    const tl = expectTimelines(panelOf(linearPointer({ maxSlewDegPerSec: 100 })), frames, { endMs: 3000 }).elements[0];
    expect(expectedAt(tl, 1000).angle).toBeCloseTo(100, 6);
    expect(expectedAt(tl, 3000).angle).toBeCloseTo(300, 6);
  });

  it("turns a full-circle pointer through 360 degrees in a straight line", () => {
    // Altimeter 100-ft pointer: 360 degrees per 1,000 ft (a fact of the trade, CHECKS.md).
    // 950 ft -> 1,050 ft over 1 s is 342 -> 378 travel degrees; the dial shows 18 at the end, 0 at 1,000 ft.
    const p = panelOf({
      kind: "pointer",
      id: "alt-100",
      label: "altimeter 100-ft pointer",
      value: { channel: "alt" },
      scale: { kind: "full-circle", period: 1000 },
    });
    const frames: ExpectFrame[] = [];
    for (let i = 0; i <= 50; i++) frames.push({ t: i * 20, v: { alt: 950 + i * 2 } });
    const tl = expectTimelines(p, frames).elements[0];
    expect(tl.angle!.wrap).toBe(true);
    // The needle rests at its park angle (0) until the first value, at t = 0, moves it to 342.
    expect(tl.angle!.t).toEqual([0, 0, 1000]);
    expect(tl.angle!.angle[1]).toBeCloseTo(342, 9);
    expect(tl.angle!.angle[2]).toBeCloseTo(378, 9);
    expect(expectedAt(tl, 500).angle).toBeCloseTo(0, 9);
    expect(expectedAt(tl, 1000).angle).toBeCloseTo(18, 9);
    expect(expectedAt(tl, 250).angle).toBeCloseTo(351, 9);
  });
});

describe("power, parking and the OFF flag", () => {
  it("parks at its park angle at the slew rate with the OFF flag, and returns when powered", () => {
    // At 2000 ms power fails with the needle at 150 degrees; parking at 0 at 100 deg/s takes 1.5 s.
    const p = panelOf(linearPointer({ maxSlewDegPerSec: 100, power: { channel: "bus" }, parkAngle: 0 }));
    const tl = expectTimelines(p, [
      { t: 0, v: { bus: true, v: 50 } },
      { t: 2000, v: { bus: false } },
      { t: 5000, v: { v: 20 } },
      { t: 6000, v: { bus: true } },
    ], { endMs: 8000 }).elements[0];
    expect(tl.tracks.flag).toEqual([
      { t: 0, shows: false },
      { t: 2000, shows: true },
      { t: 6000, shows: false },
    ]);
    expect(expectedAt(tl, 3500).angle).toBeCloseTo(0, 9);
    expect(expectedAt(tl, 5500).angle).toBe(0); // the value changed while parked: still parked
    expect(expectedAt(tl, 6300).angle).toBeCloseTo(30, 9);
    expect(expectedAt(tl, 6600).angle).toBeCloseTo(60, 9); // value 20 = 60 degrees, reached at 6600
    expect(expectedAt(tl, 7000)).toMatchObject({ flag: false, mode: "following" });
  });

  it("starts parked until its power channel says powered", () => {
    const p = panelOf(linearPointer({ power: { channel: "bus" }, parkAngle: -10 }));
    const tl = expectTimelines(p, [{ t: 0, v: { v: 50 } }], { endMs: 100 }).elements[0];
    expect(expectedAt(tl, 50)).toMatchObject({ flag: true, angle: -10, mode: "parked" });
  });
});

describe("lamps in the engine", () => {
  const fire = {
    kind: "lamp" as const,
    id: "fire",
    label: "FIRE",
    drive: { mode: "condition" as const, on: { channel: "fire" } },
    flash: { periodMs: 500 },
    power: { channel: "bus" },
    test: { channel: "test" },
  };

  it("is off, flashing with its period, lit in a lamp test, dark without power", () => {
    const tl = expectTimelines(panelOf(fire), [
      { t: 0, v: { bus: true, fire: false, test: false } },
      { t: 1000, v: { fire: true } },
      { t: 2000, v: { fire: false } },
      { t: 3000, v: { test: true } },
      { t: 4000, v: { bus: false } },
      { t: 5000, v: { bus: true, test: false } },
    ], { endMs: 6000 }).elements[0];
    expect(tl.tracks.lamp).toEqual([
      { t: 0, shows: { state: "off" } },
      { t: 1000, shows: { state: "flashing", periodMs: 500, level: 255 } },
      { t: 2000, shows: { state: "off" } },
      { t: 3000, shows: { state: "on", level: 255 } },
      { t: 4000, shows: { state: "off" } },
      { t: 5000, shows: { state: "off" } },
    ].filter((c, i, all) => i === 0 || JSON.stringify(c.shows) !== JSON.stringify(all[i - 1].shows)));
    expect(tl.tracks.mode!.map((c) => c.shows)).toEqual(["off", "flashing", "off", "testing", "dark", "off"]);
  });

  it("follows a dimmer as its level while lit", () => {
    const tl = expectTimelines(
      panelOf({
        kind: "lamp",
        id: "flood",
        label: "flood",
        drive: { mode: "condition", on: { channel: "dim", op: "gt", value: 0 } },
        dimmer: { channel: "dim", transform: { scale: 0.01 } },
      }),
      [
        { t: 0, v: { dim: 0 } },
        { t: 100, v: { dim: 50 } },
        { t: 200, v: { dim: 100 } },
      ],
    ).elements[0];
    expect(tl.tracks.lamp!.map((c) => c.shows)).toEqual([{ state: "off" }, { state: "on", level: 128 }, { state: "on", level: 255 }]);
  });

  it("latches a master caution until acknowledged, and again on a caution that clears and returns", () => {
    const p = panelOf({
      kind: "lamp",
      id: "master-caution",
      label: "MASTER CAUTION",
      drive: { mode: "latch", cautions: [{ channel: "c1" }, { channel: "c2" }], acknowledge: { channel: "ack" } },
      flash: { periodMs: 800 },
    });
    const tl = expectTimelines(p, [
      { t: 0, v: { c1: false, c2: false, ack: false } },
      { t: 1000, v: { c1: true } },
      { t: 2000, v: { ack: true } },
      { t: 2100, v: { ack: false } },
      { t: 3000, v: { c1: false } },
      { t: 4000, v: { c1: true } },
      { t: 5000, v: { c2: true } }, // already alerting: stays alerting
      { t: 6000, v: { ack: true } },
    ], { endMs: 7000 }).elements[0];
    const flashing = { state: "flashing", periodMs: 800, level: 255 };
    expect(tl.tracks.lamp).toEqual([
      { t: 0, shows: { state: "off" } },
      { t: 1000, shows: flashing },
      { t: 2000, shows: { state: "off" } },
      { t: 4000, shows: flashing },
      { t: 6000, shows: { state: "off" } },
    ]);
  });
});

describe("readouts, breakers, switches, levers, buttons, encoders in the engine", () => {
  it("formats a readout and blanks it without power", () => {
    const tl = expectTimelines(
      panelOf({ kind: "readout", id: "alt-set", label: "setting", value: { channel: "qnh" }, format: { width: 4 }, power: { channel: "bus" } }),
      [
        { t: 0, v: { qnh: 1013.2, bus: true } },
        { t: 100, v: { qnh: 998 } },
        { t: 200, v: { bus: false } },
        { t: 300, v: { qnh: 1020 } },
        { t: 400, v: { bus: true } },
      ],
    ).elements[0];
    expect(tl.tracks.text).toEqual([
      { t: 0, shows: "1013" },
      { t: 100, shows: " 998" },
      { t: 200, shows: "" },
      { t: 400, shows: "1020" },
    ]);
  });

  it("shows a readout's transformed and clamped value, formatted as formatReadout does, in both engines", () => {
    const element = { kind: "readout" as const, id: "oil", label: "oil", value: { channel: "psi", transform: { scale: 0.1, offset: 2, min: 0, max: 9 } }, format: { width: 3, decimals: 1 } };
    const values = [0, 12.3, 12.34, 40, 70, 95, 120, -50, 71.04];
    const frames: ExpectFrame[] = values.map((psi, i) => ({ t: i * 20, v: { psi } }));
    // Hand-computed: psi * 0.1 + 2, clamped to [0, 9], one decimal, width 3 (70 gives 9.0, 120 is
    // clamped to 9.0, so no change there; -50 gives -3, clamped to 0).
    const expected = [
      { t: 0, shows: "2.0" },
      { t: 20, shows: "3.2" },
      { t: 60, shows: "6.0" },
      { t: 80, shows: "9.0" },
      { t: 140, shows: "0.0" },
      { t: 160, shows: "9.0" },
    ];
    const fast = expectTimelines(panelOf(element), frames).elements[0];
    const stepwise = expectTimelinesStepwise(panelOf(element), frames).elements[0];
    expect(fast.tracks.text).toEqual(expected);
    expect(stepwise.tracks.text).toEqual(expected);
    // And text for text with the shared formatting of applyTransform's value (the parsed element:
    // the schema fills in the format's defaults).
    const parsed = panelOf(element).elements[0];
    if (parsed.kind !== "readout") throw new Error("a readout was parsed as something else");
    for (const change of expected) {
      const psi = values[change.t / 20];
      expect(formatReadout(parsed.format, applyTransform(parsed.value.transform, psi))).toBe(change.shows);
    }
  });

  it("keeps a breaker tripped until a pull and a push", () => {
    const tl = expectTimelines(
      panelOf({ kind: "breaker", id: "cb", label: "PUMP", trip: { channel: "cb", op: "eq", value: "TRIPPED" }, pulled: { channel: "pulled" } }),
      [
        { t: 0, v: { cb: "IN", pulled: false } },
        { t: 1000, v: { cb: "TRIPPED" } },
        { t: 1500, v: { cb: "IN" } },
        { t: 2000, v: { pulled: true } },
        { t: 2500, v: { pulled: false } },
      ],
    ).elements[0];
    expect(tl.tracks.breaker).toEqual([
      { t: 0, shows: "in" },
      { t: 1000, shows: "tripped" },
      { t: 2000, shows: "pulled" },
      { t: 2500, shows: "in" },
    ]);
  });

  it("springs a switch back on the recording's clock, at the hold time after it was moved", () => {
    const tl = expectTimelines(
      panelOf({
        kind: "switch",
        id: "start",
        label: "START",
        positions: ["OFF", "ON", "START"],
        position: { channel: "sw" },
        springReturn: { from: ["START"], to: "ON", holdMs: 3000 },
      }),
      [
        { t: 0, v: { sw: "OFF" } },
        { t: 1000, v: { sw: "START" } },
        { t: 2000, v: { other: 1 } },
        { t: 9000, v: { sw: "ON" } },
      ],
      { endMs: 10_000 },
    ).elements[0];
    expect(tl.tracks.position).toEqual([
      { t: 0, shows: "OFF" },
      { t: 1000, shows: "START" },
      { t: 4000, shows: "ON" },
    ]);
  });

  it("holds a locked lever and counts encoder detents across the wrap", () => {
    const p = panelOf(
      { kind: "lever", id: "gear", label: "GEAR", positions: ["up", "down"], position: { channel: "gear", map: { UP: "up", DOWN: "down" } }, lock: { channel: "lock" } },
      { kind: "encoder", id: "hdg", label: "HDG", detentsPerTurn: 24, value: { channel: "hdg" }, valuePerDetent: 1, wrap: 360 },
      { kind: "button", id: "ack", label: "ACK", pressed: { channel: "ack" }, backlight: { drive: { mode: "condition", on: { channel: "ack" } } } },
    );
    const [lever, encoder, button] = expectTimelines(p, [
      { t: 0, v: { gear: "DOWN", lock: true, hdg: 358, ack: false } },
      { t: 100, v: { gear: "UP", hdg: 359 } },
      { t: 200, v: { lock: false, hdg: 1 } },
      { t: 300, v: { hdg: 355, ack: true } },
    ]).elements;
    expect(lever.tracks.position).toEqual([
      { t: 0, shows: "down" },
      { t: 200, shows: "up" },
    ]);
    expect(encoder.tracks.detents).toEqual([
      { t: 0, shows: 0 },
      { t: 100, shows: 1 },
      { t: 200, shows: 3 },
      { t: 300, shows: -3 },
    ]);
    expect(expectedAt(button, 300)).toEqual({ pressed: true, lamp: { state: "on", level: 255 } });
  });
});

describe("determinism and placeholders", () => {
  it("gives byte-identical JSON for the same inputs", () => {
    const p = panelOf(linearPointer({ maxSlewDegPerSec: 75, power: { channel: "bus" } }), {
      kind: "switch",
      id: "sw",
      label: "SW",
      positions: ["a", "b"],
      position: { channel: "s" },
      springReturn: { from: ["b"], to: "a", holdMs: 250 },
    });
    const frames: ExpectFrame[] = [];
    for (let i = 0; i < 2000; i++) frames.push({ t: i * 17, v: { v: 50 + 40 * Math.sin(i / 30), ...(i % 97 === 0 ? { bus: i % 2 === 0, s: i % 3 ? "a" : "b" } : {}) } });
    const a = JSON.stringify(expectTimelines(p, frames));
    const b = JSON.stringify(expectTimelines(p, frames));
    expect(a).toBe(b);
  });

  it("lists placeholders with their timeline, marked never to be judged", () => {
    const tl = expectTimelines(panelOf(linearPointer({ placeholder: true })), [{ t: 0, v: { v: 10 } }]).elements[0];
    expect(tl.placeholder).toBe(true);
  });
});
