import fc from "fast-check";
import { describe, expect, it } from "vitest";
import type { Frame } from "../../../shared/recording/frames";
import { segmentFrames } from "../../../shared/recording/segments";
import { ArrayFrameSource } from "../../../shared/replay/frame-source";
import { replaySync } from "../../../shared/replay/player";
import { SegmentFrameSource } from "../../../shared/replay/segment-source";

/** Frames with random gaps (a stored recording has one frame per instant) and random channels. */
const recording = fc
  .array(
    fc.tuple(
      fc.constantFrom(1, 1, 16, 17, 250, 900, 4000),
      fc.dictionary(fc.constantFrom("a", "b", "c", "d"), fc.oneof(fc.integer({ min: -5, max: 5 }), fc.boolean(), fc.constantFrom("UP", "DOWN")), { minKeys: 1 }),
    ),
    { minLength: 1, maxLength: 150 },
  )
  .map((rows) => {
    let t = 0;
    return rows.map(([gap, v]) => ({ t: (t += gap), v }) as Frame);
  });

const plain = <T extends object>(x: T | null) => (x === null ? null : { ...x });

describe("frames read from stored segments", () => {
  it("answer every question as the frames in memory do, whatever the cuts (property)", () => {
    fc.assert(
      fc.property(
        recording,
        fc.constantFrom(50, 1000, 5000),
        fc.integer({ min: 1, max: 40 }),
        fc.array(fc.tuple(fc.integer({ min: -10, max: 40_000 }), fc.integer({ min: 0, max: 6000 })), { maxLength: 25 }),
        (frames, segmentMs, maxFramesPerSegment, questions) => {
          const durationMs = frames.at(-1)!.t;
          const memory = new ArrayFrameSource(frames, durationMs);
          const stored = new SegmentFrameSource(segmentFrames(frames, { segmentMs, maxFramesPerSegment }), durationMs, 2);
          for (const [t, span] of questions) {
            expect(stored.framesBetween(t, t + span)).toEqual(memory.framesBetween(t, t + span));
            expect({ ...stored.stateAt(t) }).toEqual({ ...memory.stateAt(t) });
            expect(plain(stored.nextFrameAfter(t))).toEqual(plain(memory.nextFrameAfter(t)));
          }
          // A whole replay sends the same frames.
          const [a, b] = [replaySync(stored, { stepMs: 7 }), replaySync(memory, { stepMs: 7 })];
          expect(a.sent).toEqual(b.sent);
          expect(a.keyframes.map((k) => ({ t: k.t, state: { ...k.state } }))).toEqual(b.keyframes.map((k) => ({ t: k.t, state: { ...k.state } })));
        },
      ),
      { numRuns: 200 },
    );
  });

  it("decodes a segment once while playing through it, and ahead of time when warmed", () => {
    const frames: Frame[] = Array.from({ length: 600 }, (_, i) => ({ t: i * 50, v: { a: i } }));
    const source = new SegmentFrameSource(segmentFrames(frames, { segmentMs: 5000 }), 29_950);
    let t = 0;
    for (; t < 9_000; t += 50) source.framesBetween(t - 50, t);
    expect(source.decodes).toBe(2); // 0–5 s and 5–10 s
    source.warm(10_000);
    expect(source.decodes).toBe(3);
    source.framesBetween(9_950, 10_000);
    expect(source.decodes).toBe(3); // already there
    expect(() => new SegmentFrameSource([{ startMs: 10, payload: new Uint8Array() }, { startMs: 5, payload: new Uint8Array() }], 20)).toThrow(RangeError);
  });
});
