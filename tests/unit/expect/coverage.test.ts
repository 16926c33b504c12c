import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { valueToTravelAngle } from "../../../shared/elements/scale";
import { expectTimelines, panelCoverage, travelAngleFunction, type ExpectFrame } from "../../../shared/expect";
import { linearPointer, panelOf } from "./helpers";

describe("coverage", () => {
  it("says in words what a recording never did", () => {
    const p = panelOf(
      { kind: "lamp", id: "fire", label: "FIRE", drive: { mode: "condition", on: { channel: "fire" } }, test: { channel: "test" } },
      { kind: "lamp", id: "gear", label: "GEAR", drive: { mode: "condition", on: { channel: "gear" } }, flash: { periodMs: 500, when: { channel: "moving" } } },
      linearPointer({ id: "asi", label: "airspeed pointer", value: { channel: "ias" } }),
      { kind: "breaker", id: "cb", label: "PUMP", trip: { channel: "cb" } },
      { kind: "switch", id: "start", label: "START", positions: ["OFF", "ON", "START"], position: { channel: "sw" } },
      { kind: "button", id: "ack", label: "ACK", pressed: { channel: "ack" } },
      { kind: "encoder", id: "hdg", label: "HDG", detentsPerTurn: 24, value: { channel: "hdg" }, valuePerDetent: 1 },
      { kind: "readout", id: "qnh", label: "QNH", value: { channel: "qnh" }, power: { channel: "bus" } },
      { kind: "lamp", id: "spare", label: "SPARE", drive: { mode: "condition", on: { channel: "spare" } }, placeholder: true },
    );
    const frames: ExpectFrame[] = [
      { t: 0, v: { fire: false, gear: false, ias: 10, sw: "OFF", ack: false, hdg: 100, qnh: 1013, bus: true } },
      { t: 1000, v: { gear: true, ias: 40, sw: "ON", hdg: 103 } },
      { t: 2000, v: { ias: 60 } },
    ];
    const coverage = panelCoverage(p, expectTimelines(p, frames, { endMs: 5000 }));
    expect(coverage.messages).toEqual([
      "FIRE lamp never lit",
      "FIRE lamp never seen in a lamp test",
      "GEAR lamp never flashed",
      "airspeed pointer never above 60% of its scale",
      "airspeed pointer never below 10% of its scale",
      "PUMP breaker never tripped",
      'START switch never in "START"',
      "ACK button never pressed",
      "HDG encoder never turned anticlockwise",
      "QNH readout never blank",
    ]);
    const asi = coverage.elements.find((e) => e.id === "asi")!;
    expect(asi.scaleRange).toEqual({ lowest: 0.1, highest: 0.6 });
    expect(asi.sweptShare).toBeCloseTo(0.5, 12);
    expect(coverage.elements.find((e) => e.id === "spare")).toMatchObject({ placeholder: true, messages: [], reached: {} });
    expect(coverage.elements.find((e) => e.id === "start")!.reached.position).toEqual(["OFF", "ON"]);
  });

  it("measures a full-circle pointer's share of its turn", () => {
    const p = panelOf({ kind: "pointer", id: "alt", label: "altimeter 100-ft pointer", value: { channel: "alt" }, scale: { kind: "full-circle", period: 1000 } });
    const half = panelCoverage(p, expectTimelines(p, [{ t: 0, v: { alt: 0 } }, { t: 100, v: { alt: 250 } }, { t: 200, v: { alt: 497 } }]));
    expect(half.elements[0].sweptShare).toBeGreaterThan(0.45);
    expect(half.elements[0].sweptShare).toBeLessThan(0.56);
    expect(half.messages[0]).toMatch(/^altimeter 100-ft pointer swept only \d+% of its turn$/);
    const frames: ExpectFrame[] = [];
    for (let i = 0; i <= 60; i++) frames.push({ t: i * 20, v: { alt: i * 20 } });
    const full = panelCoverage(p, expectTimelines(p, frames));
    expect(full.elements[0].sweptShare).toBe(1);
    expect(full.messages).toEqual([]);
  });
});

describe("travelAngleFunction", () => {
  it("gives the same angles as valueToTravelAngle", () => {
    fc.assert(
      fc.property(
        fc.double({ min: 1, max: 100_000, noNaN: true }),
        fc.double({ min: -360, max: 360, noNaN: true }),
        fc.constantFrom("clockwise" as const, "counterclockwise" as const),
        fc.double({ min: -1e6, max: 1e6, noNaN: true }),
        (period, angleAtZero, turn, value) => {
          const scale = { kind: "full-circle" as const, period, angleAtZero, turn };
          expect(travelAngleFunction(scale)(value)).toBe(valueToTravelAngle(scale, value));
        },
      ),
    );
  });
});
