import { describe, expect, it } from "vitest";
import { coverageGaps, valueMaking } from "../../../shared/compare/coverage-suggestions";
import { condition } from "../../../shared/elements/bindings";
import { panelCoverage } from "../../../shared/expect/coverage";
import { expectTimelines } from "../../../shared/expect/engine";
import type { ExpectFrame } from "../../../shared/expect/types";
import { panel as panelSchema } from "../../../shared/panel/schema";
import type { ChannelDefinition } from "../../../shared/recording/channels";

/**
 * Suggestions are read back from shared/expect/coverage.ts's real messages over a real expected
 * timeline: a change of wording there shows up here as a gap without a suggestion.
 */
const CHANNELS: ChannelDefinition[] = [
  { name: "elec.master", kind: "boolean" },
  { name: "eng1.fire_warning", kind: "boolean" },
  { name: "lamp.test", kind: "boolean" },
  { name: "ias_kt", kind: "number", unit: "kt" },
  { name: "alt.baro_ft", kind: "number", unit: "ft" },
  { name: "gear.handle", kind: "enum", values: ["UP", "DOWN"] },
  { name: "fuel.pump_cb", kind: "boolean" },
  { name: "oil.press_psi", kind: "number", unit: "psi" },
  { name: "flaps.index", kind: "number" },
  { name: "hdg.bug", kind: "number" },
  { name: "xpdr.code", kind: "text" },
  { name: "avionics.on", kind: "boolean" },
] as ChannelDefinition[];

const definition = panelSchema.parse({
  id: "suggest-panel",
  name: "Suggestions",
  airframe: "rig",
  elements: [
    { kind: "lamp", id: "fire", label: "FIRE", drive: { mode: "condition", on: { channel: "eng1.fire_warning" } }, power: { channel: "elec.master" }, test: { channel: "lamp.test" } },
    { kind: "lamp", id: "oil", label: "OIL PRESS", drive: { mode: "condition", on: { channel: "oil.press_psi", op: "lt", value: 20 } } },
    { kind: "pointer", id: "airspeed", label: "airspeed pointer", value: { channel: "ias_kt" }, scale: { kind: "sweep", points: [{ value: 0, angle: 0 }, { value: 200, angle: 300 }] } },
    {
      kind: "pointer",
      id: "oil-gauge",
      label: "oil pressure",
      value: { channel: "oil.press_psi", transform: { scale: 0.5, offset: 0 } },
      scale: { kind: "sweep", points: [{ value: 10, angle: 0 }, { value: 50, angle: 270 }] },
    },
    { kind: "pointer", id: "alt-100", label: "altimeter 100-ft pointer", value: { channel: "alt.baro_ft" }, scale: { kind: "full-circle", period: 1000 } },
    { kind: "lever", id: "gear", label: "GEAR", positions: ["up", "down"], position: { channel: "gear.handle", map: { UP: "up", DOWN: "down" } } },
    { kind: "lever", id: "flaps", label: "FLAPS", positions: ["up", "half", "full"], position: { channel: "flaps.index" } },
    { kind: "breaker", id: "fuel-cb", label: "FUEL PUMP", trip: { channel: "fuel.pump_cb" } },
    { kind: "encoder", id: "hdg", label: "HDG", detentsPerTurn: 24, value: { channel: "hdg.bug" }, valuePerDetent: 1 },
    { kind: "readout", id: "xpdr", label: "XPDR", value: { channel: "xpdr.code" }, format: { width: 4 }, blankWhen: { channel: "avionics.on", op: "false" } },
    { kind: "lamp", id: "spare", label: "SPARE", placeholder: true, drive: { mode: "condition", on: { channel: "elec.master" } } },
  ],
});

// An invented short flight: master on, the fire warning never comes, airspeed up to 120 kt (60 %
// of the dial), oil pressure 60..80 psi (30..40 on the dial: 50..75 %), altitude 320..445 ft,
// gear always DOWN, flaps from up to half, the heading bug turned up only, avionics on throughout.
const frames: ExpectFrame[] = [
  { t: 0, v: { "elec.master": true, "eng1.fire_warning": false, "lamp.test": false, ias_kt: 0, "oil.press_psi": 60, "alt.baro_ft": 320, "gear.handle": "DOWN", "flaps.index": 0, "fuel.pump_cb": false, "hdg.bug": 10, "xpdr.code": "1200", "avionics.on": true } },
  { t: 1000, v: { ias_kt: 60, "alt.baro_ft": 445, "oil.press_psi": 80, "flaps.index": 1 } },
  { t: 2000, v: { ias_kt: 120, "hdg.bug": 14 } },
  { t: 3000, v: { ias_kt: 90 } },
];

const coverage = panelCoverage(definition, expectTimelines(definition, frames, { endMs: 4000 }));
const gaps = coverageGaps(definition.elements, coverage, CHANNELS);
const suggestion = (gap: string) => gaps.find((g) => g.gap === gap)?.suggestion;

describe("coverage gaps with a suggestion of what a scenario should add", () => {
  it("lights a lamp that never lit through its own drive condition", () => {
    expect(suggestion("FIRE lamp never lit")).toBe("add a step that sets eng1.fire_warning to true");
    // A threshold condition: one below it makes the lamp light.
    expect(suggestion("OIL PRESS lamp never lit")).toBe("add a step that sets oil.press_psi to 19");
  });

  it("covers a lamp test and an unpowered lamp with the test and power conditions", () => {
    expect(suggestion("FIRE lamp never seen in a lamp test")).toBe("add a step that sets lamp.test to true");
    expect(suggestion("FIRE lamp never seen unpowered")).toBe("add a step that sets elec.master to false");
  });

  it("ramps a pointer to the channel value at the end of its scale, through the transform", () => {
    expect(suggestion("airspeed pointer never above 60% of its scale")).toBe("add a ramp of ias_kt to 200");
    // Oil pressure dial reads psi x 0.5: its top (50) is 100 psi, its bottom (10) 20 psi.
    expect(suggestion("oil pressure pointer never above 75% of its scale")).toBe("add a ramp of oil.press_psi to 100");
    expect(suggestion("oil pressure pointer never below 50% of its scale")).toBe("add a ramp of oil.press_psi down to 20");
  });

  it("turns a full-circle pointer through one whole period", () => {
    const gap = gaps.find((g) => g.elementId === "alt-100");
    expect(gap?.gap).toMatch(/^altimeter 100-ft pointer swept only \d+% of its turn$/);
    expect(gap?.suggestion).toBe("add a ramp of alt.baro_ft through at least 1000 (one whole turn of the dial)");
  });

  it("moves levers to the positions never reached, with the channel's own values", () => {
    // Mapped enum: the map's key; a numeric channel without a map: the position's index.
    expect(suggestion('GEAR lever never in "up"')).toBe('add a step that sets gear.handle to "UP"');
    expect(suggestion('FLAPS lever never in "full"')).toBe("add a step that sets flaps.index to 2");
  });

  it("trips breakers, turns encoders both ways and blanks readouts", () => {
    expect(suggestion("FUEL PUMP breaker never tripped")).toBe("add a step that sets fuel.pump_cb to true");
    expect(suggestion("HDG encoder never turned anticlockwise")).toBe("add a ramp of hdg.bug down by 5 (five detents)");
    expect(gaps.some((g) => g.gap === "HDG encoder never turned clockwise")).toBe(false);
    expect(suggestion("XPDR readout never blank")).toBe("add a step that sets avionics.on to false");
  });

  it("has a suggestion for every gap of this panel, and none for placeholders", () => {
    expect(gaps.filter((g) => g.suggestion === null)).toEqual([]);
    expect(gaps.some((g) => g.elementId === "spare")).toBe(false);
    expect(gaps.every((g) => g.panelId === "suggest-panel")).toBe(true);
  });
});

describe("a value that makes a condition hold or fail", () => {
  const c = (input: unknown) => condition.parse(input);
  it("follows each operator", () => {
    expect(valueMaking(c({ channel: "a", op: "eq", value: "UP" }), true)).toBe('"UP"');
    expect(valueMaking(c({ channel: "a", op: "eq", value: "UP" }), false, { name: "a", kind: "enum", values: ["UP", "DOWN"] } as ChannelDefinition)).toBe('"DOWN"');
    expect(valueMaking(c({ channel: "a", op: "ne", value: 3 }), true)).toBe("4");
    expect(valueMaking(c({ channel: "a", op: "gt", value: 100 }), true)).toBe("101");
    expect(valueMaking(c({ channel: "a", op: "ge", value: 100 }), false)).toBe("99");
    expect(valueMaking(c({ channel: "a", op: "le", value: 5 }), true)).toBe("5");
    expect(valueMaking(c({ channel: "a", op: "in", values: ["A", "B"] }), true)).toBe('"A"');
    expect(valueMaking(c({ channel: "a", op: "in", values: ["A", "B"] }), false, { name: "a", kind: "enum", values: ["A", "B", "C"] } as ChannelDefinition)).toBe('"C"');
    // A boolean-style condition on a numeric channel: 1 and 0.
    expect(valueMaking(c({ channel: "a" }), true, { name: "a", kind: "number" } as ChannelDefinition)).toBe("1");
    expect(valueMaking(c({ channel: "a", op: "false" }), false)).toBe("true");
  });
});
