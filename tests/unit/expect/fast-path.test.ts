import fc from "fast-check";
import { describe, expect, it } from "vitest";
import type { BoundValue } from "../../../shared/elements/bindings";
import type { ElementInput } from "../../../shared/elements/kinds";
import { expectTimelines, expectTimelinesInTurns, expectTimelinesStepwise, FRAMES_PER_CHUNK, RecordingColumns, type ExpectFrame } from "../../../shared/expect";
import { demoPanels } from "../../../shared/panel/demo";
import { panelChannels } from "../../../shared/panel/schema";
import { panelOf } from "./helpers";

/**
 * The fast engine (columns per channel, one element at a time, learnt transition tables, loops
 * with unboxed numbers) must give byte-identical timelines to the stepwise engine (an xstate actor
 * per element on one clock, every frame dispatched to listeners), on any recording.
 */

/** Every element kind, with power, test, flashing, latch, spring return, transforms, lock. */
const mixedElements: ElementInput[] = [
  { kind: "pointer", id: "p-sweep", label: "sweep", value: { channel: "a" }, maxSlewDegPerSec: 90, power: { channel: "bus" }, offFlag: true, scale: { kind: "sweep", interpolation: "monotone-cubic", points: [0, 10, 50, 100].map((value, i) => ({ value, angle: [0, 20, 200, 300][i] })) } },
  { kind: "pointer", id: "p-circle", label: "circle", value: { channel: "b", transform: { scale: 2, offset: -5 } }, power: { channel: "bus" }, scale: { kind: "full-circle", period: 40 }, maxSlewDegPerSec: 400 },
  { kind: "pointer", id: "p-same", label: "power on own channel", value: { channel: "a" }, power: { channel: "a", op: "gt", value: 20 }, scale: { kind: "sweep", points: [{ value: 0, angle: 0 }, { value: 100, angle: 270 }] } },
  { kind: "pointer", id: "p-clamp", label: "clamped transform, slow", value: { channel: "b", transform: { scale: 0.5, offset: 10, min: 0, max: 60 } }, maxSlewDegPerSec: 30, scale: { kind: "sweep", points: [{ value: 0, angle: 10 }, { value: 30, angle: 100 }, { value: 60, angle: 250 }] } },
  { kind: "pointer", id: "p-jump", label: "no slew", value: { channel: "b" }, scale: { kind: "sweep", points: [{ value: 0, angle: 0 }, { value: 100, angle: 270 }] } },
  { kind: "readout", id: "r1", label: "readout", value: { channel: "a" }, format: { width: 5, decimals: 1 }, power: { channel: "bus" }, test: { channel: "test" } },
  { kind: "readout", id: "r3", label: "clamped transform", value: { channel: "b", transform: { scale: 0.5, offset: 10, min: 0, max: 60 } }, format: { width: 4, decimals: 0 } },
  { kind: "readout", id: "r4", label: "mapped, transformed", value: { channel: "a", transform: { scale: -2, offset: 1 } }, format: { decimals: 2, map: { x: "XX" } } },
  { kind: "readout", id: "r2", label: "mapped", value: { channel: "mode" }, format: { map: { x: "XX" } }, blankWhen: { channel: "d1" } },
  { kind: "lamp", id: "l1", label: "lamp", drive: { mode: "condition", on: { channel: "d1" } }, flash: { periodMs: 400, when: { channel: "d2" } }, power: { channel: "bus" }, test: { channel: "test" }, dimmer: { channel: "a", transform: { scale: 0.01 } } },
  { kind: "lamp", id: "l2", label: "latch", drive: { mode: "latch", cautions: [{ channel: "d1" }, { channel: "d2" }, { channel: "a", op: "gt", value: 70 }], acknowledge: { channel: "d3" } }, flash: { periodMs: 500 }, power: { channel: "bus" } },
  { kind: "breaker", id: "cb", label: "breaker", trip: { channel: "d2" }, pulled: { channel: "d3" } },
  { kind: "switch", id: "sw", label: "spring", positions: ["off", "on", "start"], position: { channel: "mode", map: { x: "start", y: "on" } }, springReturn: { from: ["start"], to: "on", holdMs: 300 } },
  { kind: "switch", id: "sw2", label: "plain", positions: ["off", "on"], position: { channel: "d1" } },
  { kind: "lever", id: "lv", label: "lever", positions: ["up", "down"], position: { channel: "d2" }, lock: { channel: "d3" } },
  { kind: "button", id: "bt", label: "button", pressed: { channel: "d3" }, backlight: { drive: { mode: "condition", on: { channel: "bus" } }, test: { channel: "test" } }, power: { channel: "bus" } },
  { kind: "encoder", id: "enc2", label: "encoder, clamped transform", detentsPerTurn: 20, value: { channel: "a", transform: { scale: 0.3, offset: -2, min: 0, max: 25 } }, valuePerDetent: 0.25 },
  { kind: "encoder", id: "enc", label: "encoder", detentsPerTurn: 24, value: { channel: "b" }, valuePerDetent: 0.5, wrap: 100 },
] as ElementInput[];

const channelValue: Record<string, fc.Arbitrary<BoundValue>> = {
  a: fc.oneof(fc.double({ min: -20, max: 120, noNaN: true }), fc.integer({ min: 0, max: 100 }), fc.constant("text")),
  b: fc.double({ min: -50, max: 150, noNaN: true }),
  bus: fc.boolean(),
  test: fc.boolean(),
  d1: fc.oneof(fc.boolean(), fc.constantFrom(0, 1)),
  d2: fc.boolean(),
  d3: fc.boolean(),
  mode: fc.constantFrom("x", "y", "z", "off"),
};

/** Frames with random gaps (some zero: two frames at one instant), each listing a random subset. */
const recording = fc
  .array(
    fc.tuple(
      fc.constantFrom(0, 1, 16, 17, 100, 250, 251, 400, 1200),
      fc.shuffledSubarray(Object.keys(channelValue), { minLength: 1 }).chain((names) => fc.tuple(...names.map((n) => channelValue[n].map((v) => [n, v] as const)))),
    ),
    { minLength: 1, maxLength: 120 },
  )
  .map((rows) => {
    let t = 0;
    return rows.map(([gap, pairs]) => ({ t: (t += gap), v: Object.fromEntries(pairs) }) as ExpectFrame);
  });

describe("fast path against the stepwise engine", () => {
  const p = panelOf(...mixedElements);

  it("gives byte-identical timelines on random recordings of every element kind", () => {
    fc.assert(
      fc.property(recording, fc.integer({ min: 0, max: 3000 }), (frames, extra) => {
        const endMs = frames.at(-1)!.t + extra;
        const reference = JSON.stringify(expectTimelinesStepwise(p, frames, { endMs }));
        expect(JSON.stringify(expectTimelines(p, frames, { endMs }))).toBe(reference);
        // The whole recording as columns (the server's form), all channels or only the bound ones.
        expect(JSON.stringify(expectTimelines(p, RecordingColumns.of(frames), { endMs }))).toBe(reference);
        expect(JSON.stringify(expectTimelines(p, RecordingColumns.of(frames, panelChannels(p)), { endMs }))).toBe(reference);
      }),
      { numRuns: 300 },
    );
  });

  it("stays identical across chunk boundaries and with frames from a generator", () => {
    // More frames than one chunk holds, so element state carries from one chunk to the next.
    const frames: ExpectFrame[] = [];
    for (let i = 0; i < FRAMES_PER_CHUNK * 2 + 37; i++) {
      const t = i * 17;
      const v: Record<string, BoundValue> = { a: 50 + 45 * Math.sin(i / 300), b: (i * 0.37) % 150 };
      if (i % 97 === 0) v.bus = i % 194 !== 0;
      if (i % 53 === 0) v.d1 = (i / 53) % 2 === 0;
      if (i % 131 === 0) v.mode = ["x", "y", "off"][i % 3];
      frames.push({ t, v });
    }
    function* generated() {
      yield* frames;
    }
    const reference = JSON.stringify(expectTimelinesStepwise(p, frames));
    expect(JSON.stringify(expectTimelines(p, frames))).toBe(reference);
    expect(JSON.stringify(expectTimelines(p, generated()))).toBe(reference);
    expect(JSON.stringify(expectTimelines(p, RecordingColumns.of(generated(), ["a", "b", "bus"])))).not.toBe(reference);
    expect(JSON.stringify(expectTimelines(p, RecordingColumns.of(generated(), panelChannels(p))))).toBe(reference);
  });

  it("gives the demo panels' timelines exactly as the stepwise engine", () => {
    const frames: ExpectFrame[] = [];
    for (const panel of demoPanels) {
      const channels = [...new Set(JSON.stringify(panel.elements).match(/"channel":"[^"]+"/g)!.map((m) => m.slice(11, -1)))];
      frames.length = 0;
      for (let i = 0; i < 600; i++) {
        const v: Record<string, BoundValue> = {};
        channels.forEach((c, k) => {
          if ((i + k) % 7 === 0) v[c] = (i * (k + 3)) % 11 > 5;
          else if ((i + k) % 5 === 0) v[c] = ((i * 13 + k * 7) % 1000) / 3;
        });
        frames.push({ t: i * 50, v });
      }
      const reference = JSON.stringify(expectTimelinesStepwise(panel, frames));
      expect(JSON.stringify(expectTimelines(panel, frames)), panel.id).toBe(reference);
      expect(JSON.stringify(expectTimelines(panel, RecordingColumns.of(frames, panelChannels(panel)))), panel.id).toBe(reference);
    }
  });
});

describe("spare track buffers between computations", () => {
  it("a computation after others (reusing their buffers) gives the stepwise engine's timelines", () => {
    // Pointers whose tracks keep very different numbers of points, so the spare buffers handed
    // back come in many sizes (tests/unit/expect/tracks.test.ts checks the builder itself).
    const pointers = Array.from({ length: 12 }, (_, i) => ({
      kind: "pointer",
      id: `p${i}`,
      label: `pointer ${i}`,
      value: { channel: `c${i % 6}` },
      maxSlewDegPerSec: i % 3 === 0 ? undefined : 40 + i * 35,
      scale: { kind: "sweep", interpolation: i % 2 ? "linear" : "monotone-cubic", points: [0, 30, 100].map((value, k) => ({ value, angle: [0, 90 + i, 300][k] })) },
    })) as ElementInput[];
    const p = panelOf(...pointers);
    const frames: ExpectFrame[] = [];
    let seed = 7;
    const noise = () => ((seed = (seed * 16807) % 2147483647) / 2147483647 - 0.5) * (seed % 5);
    for (let i = 0; i < 60 * 60 * 4; i++) {
      const v: Record<string, BoundValue> = {};
      for (let c = 0; c < 6; c++) v[`c${c}`] = 50 + 45 * Math.sin(i / (200 + c * 90)) + (c % 2 ? noise() : 0);
      frames.push({ t: Math.round((i * 1000) / 60), v });
    }
    const reference = JSON.stringify(expectTimelinesStepwise(p, frames));
    for (let round = 0; round < 3; round++) {
      expect(JSON.stringify(expectTimelines(p, frames)), `round ${round}`).toBe(reference);
      expect(JSON.stringify(expectTimelines(p, RecordingColumns.of(frames))), `round ${round}, columns`).toBe(reference);
    }
  });
});

describe("computing in turns", () => {
  it("gives the same timelines, giving the caller a turn between elements once a slice is used", async () => {
    const p = panelOf(...mixedElements);
    const frames: ExpectFrame[] = [];
    for (let i = 0; i < 3000; i++) frames.push({ t: i * 20, v: { a: 50 + 45 * Math.sin(i / 90), b: (i * 0.37) % 150, ...(i % 150 === 0 ? { bus: i % 300 === 0, d1: i % 450 === 0, mode: ["x", "y", "off"][i % 3] } : {}) } });
    const columns = RecordingColumns.of(frames, panelChannels(p));
    const reference = JSON.stringify(expectTimelinesStepwise(p, frames, { endMs: 70_000 }));
    let turns = 0;
    const inTurns = await expectTimelinesInTurns(p, columns, { endMs: 70_000, sliceMs: 0, turn: async () => void turns++ });
    expect(JSON.stringify(inTurns)).toBe(reference);
    expect(turns).toBe(p.elements.length);
    // With the default slice the whole panel may fit in one: never more turns than elements.
    turns = 0;
    expect(JSON.stringify(await expectTimelinesInTurns(p, columns, { endMs: 70_000, turn: async () => void turns++ }))).toBe(reference);
    expect(turns).toBeLessThanOrEqual(p.elements.length);
  });
});
