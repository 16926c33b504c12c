import { describe, expect, it } from "vitest";
import type { ChannelDefinition } from "../../../shared/recording/channels";
import { emptyState, FrameSequencer, type Frame } from "../../../shared/recording/frames";
import { decodeSegment, encodeSegment, type DecodedSegment } from "../../../shared/recording/segments";
import { ChannelStatsCollector } from "../../../server/recordings/stats";
import { bareFileName } from "../../../src/features/recordings/upload";

/**
 * The import path's hand-written pieces against what they must produce: segments decode to
 * exactly what went in (awkward numbers and text included), the frame sequencer keeps only
 * changes, and the per-channel stats count what the frames hold.
 */

describe("segments", () => {
  it("decode back to the same keyframe and frames, awkward numbers and text included", () => {
    const segment: DecodedSegment = {
      startMs: 5_000,
      keyframe: Object.assign(emptyState(), { "a.b": -0, big: 1e21, small: 1e-7, quote: 'say "hi"\n', on: false }),
      frames: [
        { t: 5_000, v: { "a.b": 0.1 + 0.2 } },
        { t: 5_040, v: { quote: "\u2028ü", on: true } },
      ],
    };
    const decoded = decodeSegment(encodeSegment(segment));
    expect(decoded.startMs).toBe(5_000);
    expect({ ...decoded.keyframe }).toEqual({ "a.b": 0, big: 1e21, small: 1e-7, quote: 'say "hi"\n', on: false });
    expect(decoded.frames).toEqual(segment.frames);
  });
});

describe("per-channel stats", () => {
  const channels: ChannelDefinition[] = [
    { name: "gear.handle", kind: "enum", values: ["UP", "DOWN", "TRANSIT"] },
    { name: "alt.baro_ft", kind: "number", unit: "ft" },
    { name: "elec.master", kind: "boolean" },
    { name: "xpdr.code", kind: "text", maxLength: 4 },
    { name: "never.set", kind: "enum", values: ["A", "B"] },
  ];

  it("counts how many frames set each named value, zero for those never set, in the channel's order", () => {
    const stats = new ChannelStatsCollector();
    const gear = ["DOWN", "UP", "DOWN", "UP", "DOWN"];
    gear.forEach((g, i) => stats.add({ t: i * 100, v: { "gear.handle": g, "alt.baro_ft": 1000 - i * 250, "elec.master": i % 2 === 0 } }));
    const [handle, alt, master, code, never] = stats.result(channels);
    expect(handle).toMatchObject({ changes: 5, distinct: ["DOWN", "UP"] });
    expect(handle.valueCounts).toEqual([
      { value: "UP", count: 2 },
      { value: "DOWN", count: 3 },
      { value: "TRANSIT", count: 0 },
    ]);
    expect(alt).toMatchObject({ changes: 5, min: 0, max: 1000, distinct: null, valueCounts: null });
    expect(master).toMatchObject({ changes: 5, distinct: [true, false], valueCounts: null });
    expect(code).toMatchObject({ changes: 0, distinct: [], valueCounts: null });
    expect(never.valueCounts).toEqual([
      { value: "A", count: 0 },
      { value: "B", count: 0 },
    ]);
  });

  it("lists at most 50 distinct values of a text channel while counting its changes", () => {
    const stats = new ChannelStatsCollector();
    for (let i = 0; i < 120; i++) stats.add({ t: i, v: { "xpdr.code": String(1000 + i) } });
    const code = stats.result(channels)[3];
    expect(code.changes).toBe(120);
    expect(code.distinct).toHaveLength(50);
    expect(code.distinct![0]).toBe("1000");
  });
});

describe("the uploaded file's name", () => {
  it("keeps only the last path part, without quotes or control characters", () => {
    expect(bareFileName("C:\\flights\\evening circuit.ppr.jsonl")).toBe("evening circuit.ppr.jsonl");
    expect(bareFileName("/home/rowan/a\"b\u0007.csv")).toBe("ab.csv");
    expect(bareFileName("folder/")).toBeNull();
    expect(bareFileName("x".repeat(300))).toHaveLength(255);
  });
});

describe("the frame sequencer keeps only changes", () => {
  it("drops values equal to the state wherever they sit in the frame, and frames with no change", () => {
    const sequencer = new FrameSequencer();
    const out: (Frame | null)[] = [];
    const feed: [number, Frame["v"]][] = [
      [0, { a: 1, b: 1 }],
      [10, { a: 1, b: 2, c: 3 }], // a unchanged first
      [20, { b: 3, c: 3, d: true }], // c unchanged in the middle
      [30, { a: 2, d: true }], // d unchanged last
      [40, { a: 2, b: 3 }], // nothing changed: no frame
      [50, { e: "x" }],
    ];
    for (const [t, v] of feed) out.push(sequencer.accept(t, { ...v }, { line: t }));
    out.push(sequencer.finish());
    expect(out.filter((f) => f !== null)).toEqual([
      { t: 0, v: { a: 1, b: 1 } },
      { t: 10, v: { b: 2, c: 3 } },
      { t: 20, v: { b: 3, d: true } },
      { t: 30, v: { a: 2 } },
      { t: 50, v: { e: "x" } },
    ]);
    expect(sequencer.framesEmitted).toBe(5);
  });
});
