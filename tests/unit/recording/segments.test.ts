import { deflateSync } from "fflate";
import { describe, expect, it } from "vitest";
import { RecordingColumns } from "../../../shared/expect/recording-columns";
import { stateAtFrames, type Frame } from "../../../shared/recording/frames";
import {
  decodeSegment,
  decodeSegmentInto,
  encodeSegment,
  findSegmentIndex,
  framesOfSegments,
  Segmenter,
  segmentFrames,
  stateAt,
  type RecordingSegment,
} from "../../../shared/recording/segments";
import { recordingFailure } from "./helpers";

/** Ten minutes of a climbing, flashing, gear-cycling rig, with a quiet gap in the middle. */
function syntheticFrames(): Frame[] {
  const frames: Frame[] = [{ t: 0, v: { "alt.baro_ft": 0, "gear.handle": "DOWN", "annun.flash": false, "xpdr.code": "1200" } }];
  for (let t = 100; t < 600_000; t += 100) {
    if (t > 200_000 && t < 260_000) continue;
    const v: Frame["v"] = { "alt.baro_ft": Math.round(t / 10) };
    if (t % 500 === 0) v["annun.flash"] = t % 1000 === 0;
    if (t === 30_000) v["gear.handle"] = "UP";
    if (t === 400_000) v["gear.handle"] = "DOWN";
    if (t % 60_000 === 0) v["xpdr.code"] = String(1000 + t / 60_000);
    frames.push({ t, v });
  }
  return frames;
}

/** Counts reads of each segment's payload, the only part of a segment that needs decoding. */
function counted(segments: RecordingSegment[]): { segments: RecordingSegment[]; reads: number[] } {
  const reads = segments.map(() => 0);
  const watched = segments.map((segment, i) => {
    const copy = { ...segment };
    Object.defineProperty(copy, "payload", {
      get: () => {
        reads[i]++;
        return segment.payload;
      },
    });
    return copy;
  });
  return { segments: watched, reads };
}

describe("segments", () => {
  const frames = syntheticFrames();
  const segments = segmentFrames(frames, { segmentMs: 5_000 });

  it("cut the stream into aligned windows of a few seconds, skipping empty ones", () => {
    expect(segments[0].startMs).toBe(0);
    expect(segments.every((s) => s.startMs % 5_000 === 0 && s.endMs === s.startMs + 5_000)).toBe(true);
    expect(segments.map((s) => s.index)).toEqual(segments.map((_, i) => i));
    // 120 windows in ten minutes, less the 11 windows of the quiet minute (200 s to 260 s, both ends partly used).
    expect(segments).toHaveLength(120 - 11);
    expect(segments.reduce((n, s) => n + s.frameCount, 0)).toBe(frames.length);
  });

  it("each holds a keyframe: every channel's value just before the segment", () => {
    for (const segment of segments) {
      const decoded = decodeSegment(segment.payload);
      expect(decoded.startMs).toBe(segment.startMs);
      expect({ ...decoded.keyframe }).toEqual({ ...stateAtFrames(frames, segment.startMs - 1) });
      expect(decoded.frames.length).toBe(segment.frameCount);
      expect(decoded.frames[0].t).toBe(segment.firstFrameMs);
    }
    expect(Object.keys(decodeSegment(segments[50].payload).keyframe).sort()).toEqual([
      "alt.baro_ft",
      "annun.flash",
      "gear.handle",
      "xpdr.code",
    ]);
  });

  it("stateAt gives the same state as folding every frame, at any instant", () => {
    const instants = [0, 1, 99, 100, 4_999, 5_000, 30_000, 199_999, 230_000, 260_000, 260_050, 599_900, 700_000];
    for (let t = 0; t < 620_000; t += 7_919) instants.push(t);
    for (const t of instants) {
      expect({ ...stateAt(segments, t) }, `t=${t}`).toEqual({ ...stateAtFrames(frames, t) });
    }
  });

  it("stateAt decodes exactly one segment: the one holding the instant", () => {
    for (const t of [0, 12_345, 230_000, 333_333, 599_999, 10_000_000]) {
      const watched = counted(segments);
      stateAt(watched.segments, t);
      const expectedIndex = findSegmentIndex(segments, t);
      expect(watched.reads.reduce((a, b) => a + b, 0), `t=${t}`).toBe(1);
      expect(watched.reads[expectedIndex]).toBe(1);
      expect(segments[expectedIndex].startMs).toBeLessThanOrEqual(t);
      if (expectedIndex + 1 < segments.length) expect(segments[expectedIndex + 1].startMs).toBeGreaterThan(t);
    }
  });

  it("before the first frame there is no state and nothing is decoded", () => {
    const late = segmentFrames([{ t: 12_000, v: { "gear.handle": "UP" } }]);
    const watched = counted(late);
    expect({ ...stateAt(watched.segments, 9_000) }).toEqual({});
    expect(watched.reads).toEqual([0]);
    expect({ ...stateAt(late, 12_000) }).toEqual({ "gear.handle": "UP" });
  });

  it("give back every frame unchanged", () => {
    expect([...framesOfSegments(segments)]).toEqual(frames);
  });

  it("hand their frames to a sink value by value, the same frames with no frame objects made", () => {
    const seen: Frame[] = [];
    const sink = {
      beginFrame: (t: number) => seen.push({ t, v: {} }),
      value: (channel: string, value: Frame["v"][string]) => ((seen.at(-1)!.v as Record<string, unknown>)[channel] = value),
    };
    const counts = segments.map((segment) => decodeSegmentInto(segment.payload, sink));
    expect(seen).toEqual(frames);
    expect(counts).toEqual(segments.map((segment) => segment.frameCount));
    // Into the engine's columns: only the wanted channels kept, in order, every value as given.
    const columns = new RecordingColumns(["alt.baro_ft", "gear.handle"]);
    for (const segment of segments) decodeSegmentInto(segment.payload, columns);
    expect([...columns.byChannel.keys()].sort()).toEqual(["alt.baro_ft", "gear.handle"]);
    expect(columns.frames).toBe(frames.length);
    expect(columns.lastT).toBe(frames.at(-1)!.t);
    const gear = columns.column("gear.handle");
    expect(Array.from({ length: gear.length }, (_, i) => [gear.times[i], gear.valueAt(i)])).toEqual([
      [0, "DOWN"],
      [30_000, "UP"],
      [400_000, "DOWN"],
    ]);
    expect(columns.column("alt.baro_ft").length).toBe(frames.length);
    expect(columns.column("not.recorded").length).toBe(0);
  });

  it("refuse a malformed frame or a channel missing from the segment's table, saying which", () => {
    const sink = { beginFrame: () => {}, value: () => {} };
    const raw = (json: unknown) => deflateSync(new TextEncoder().encode(JSON.stringify(json)));
    const bad = recordingFailure(() => decodeSegmentInto(raw({ v: 1, s: 5_000, c: ["a"], k: [], f: [[1, 0, 2], ["x", 0, 1]] }), sink));
    expect(bad.code).toBe("invalid_segment");
    expect(bad.message).toContain("frame 1 of the segment starting at 5000 ms");
    const missing = recordingFailure(() => decodeSegmentInto(raw({ v: 1, s: 0, c: ["a"], k: [], f: [[1, 3, 2]] }), sink));
    expect(missing.message).toContain("names channel 3, not in its table");
    const columns = new RecordingColumns();
    columns.beginFrame(10);
    expect(() => columns.beginFrame(9)).toThrow(/time order/);
  });

  it("split a busy window so one segment never holds more than the frame cap", () => {
    const busy: Frame[] = Array.from({ length: 1000 }, (_, i) => ({ t: i, v: { n: i } }));
    const split = segmentFrames(busy, { segmentMs: 5_000, maxFramesPerSegment: 300 });
    expect(split.map((s) => [s.startMs, s.frameCount])).toEqual([
      [0, 300],
      [300, 300],
      [600, 300],
      [900, 100],
    ]);
    expect({ ...stateAt(split, 650) }).toEqual({ n: 650 });
    expect([...framesOfSegments(split)]).toEqual(busy);
  });

  it("compress well: a steady recording takes far less room than its JSON text", () => {
    const payloadBytes = segments.reduce((n, s) => n + s.payload.length, 0);
    const jsonBytes = frames.reduce((n, f) => n + JSON.stringify(f).length + 1, 0);
    expect(payloadBytes).toBeLessThan(jsonBytes / 4);
  });

  it("refuse frames out of time order and payloads that are not segments", () => {
    const segmenter = new Segmenter();
    segmenter.push({ t: 10, v: { a: 1 } });
    expect(() => segmenter.push({ t: 10, v: { a: 2 } })).toThrow(RangeError);
    expect(recordingFailure(() => decodeSegment(new Uint8Array([1, 2, 3]))).code).toBe("invalid_segment");
    const encoded = encodeSegment({ startMs: 5_000, keyframe: { a: 1 }, frames: [{ t: 5_001, v: { a: 2, b: "x" } }] });
    expect(decodeSegment(encoded)).toEqual({ startMs: 5_000, keyframe: { a: 1 }, frames: [{ t: 5_001, v: { a: 2, b: "x" } }] });
  });
});

describe("segment compression", () => {
  it("reads segments deflated by Node's native zlib exactly like fflate's", async () => {
    const { deflateRawSync } = await import("node:zlib");
    const frames = Array.from({ length: 500 }, (_, i) => ({ t: i * 20, v: { "alt.baro_ft": i * 3, "gear.handle": i % 100 < 50 ? "UP" : "DOWN" } }));
    const portable = segmentFrames(frames);
    const native = segmentFrames(frames, { deflate: (b) => deflateRawSync(b, { level: 1 }) });
    expect(native.map((s) => decodeSegment(s.payload))).toEqual(portable.map((s) => decodeSegment(s.payload)));
    for (const t of [0, 1234, 9_980]) expect(stateAt(native, t)).toEqual(stateAt(portable, t));
  });
});
