import fc from "fast-check";
import { describe, expect, it } from "vitest";
import type { ChannelState, Frame } from "../../../shared/recording/frames";
import { ArrayFrameSource, coalesceFrames } from "../../../shared/replay/frame-source";
import { Player, replaySync } from "../../../shared/replay/player";
import { ManualClock } from "../../../shared/replay/virtual-clock";

const frames: Frame[] = [
  { t: 0, v: { "gear.handle": "down", "alt.baro_ft": 0 } },
  { t: 100, v: { "alt.baro_ft": 10 } },
  { t: 200, v: { "alt.baro_ft": 20 } },
  { t: 250, v: { "gear.handle": "up" } },
  { t: 1000, v: { "alt.baro_ft": 500 } },
];

function recorder() {
  const sent: { frame: Frame; latenessMs: number; merged: number }[] = [];
  const keyframes: { t: number; state: ChannelState }[] = [];
  return {
    sent,
    keyframes,
    sink: { frame: (frame: Frame, info: { latenessMs: number; merged: number }) => sent.push({ frame, ...info }), keyframe: (t: number, state: ChannelState) => keyframes.push({ t, state }) },
  };
}

describe("frame source", () => {
  it("answers the state at any instant from a checkpoint plus at most a few frames", () => {
    const many: Frame[] = Array.from({ length: 5000 }, (_, i) => ({ t: i * 10, v: { n: i, [`c${i % 7}`]: i } }));
    const source = new ArrayFrameSource(many, undefined, 64);
    expect(source.stateAt(-1)).toEqual({});
    expect(source.stateAt(0)).toEqual({ n: 0, c0: 0 });
    const at = source.stateAt(12_345); // frames 0..1234
    expect(at.n).toBe(1234);
    for (let k = 0; k < 7; k++) expect(at[`c${k}`]).toBe(1234 - ((1234 - k) % 7));
    expect(source.framesBetween(100, 130).map((f) => f.t)).toEqual([110, 120, 130]);
    expect(source.nextFrameAfter(49_990)).toBeNull();
  });

  it("merges frames due together with later values winning", () => {
    expect(coalesceFrames([{ t: 1, v: { a: 1, b: 1 } }, { t: 2, v: { a: 2 } }])).toEqual({ t: 2, v: { a: 2, b: 1 } });
    expect(coalesceFrames([])).toBeNull();
  });

  it("refuses frames out of time order", () => {
    expect(() => new ArrayFrameSource([{ t: 5, v: {} }, { t: 4, v: {} }])).toThrow(/before frame 0/);
  });
});

describe("player", () => {
  it("starts with a keyframe, then sends each frame when it falls due", () => {
    const wall = new ManualClock();
    const out = recorder();
    const player = new Player(new ArrayFrameSource(frames), wall, out.sink);
    expect(player.state).toBe("ready");
    player.play();
    expect(out.keyframes).toEqual([{ t: 0, state: { "gear.handle": "down", "alt.baro_ft": 0 } }]);
    expect(player.wallDelayToNextFrame()).toBe(100);
    wall.advance(100);
    player.tick();
    expect(out.sent.map((s) => s.frame)).toEqual([{ t: 100, v: { "alt.baro_ft": 10 } }]);
    expect(out.sent[0].latenessMs).toBe(0);
  });

  it("coalesces late frames into one send, in order, and says how late", () => {
    const wall = new ManualClock();
    const out = recorder();
    const player = new Player(new ArrayFrameSource(frames), wall, out.sink);
    player.play();
    wall.advance(260); // the host slept through three frames
    player.tick();
    expect(out.sent).toEqual([{ frame: { t: 250, v: { "alt.baro_ft": 20, "gear.handle": "up" } }, latenessMs: 160, merged: 3 }]);
  });

  it("plays at 8x, pauses, seeks with a keyframe and finishes", () => {
    const wall = new ManualClock();
    const out = recorder();
    const player = new Player(new ArrayFrameSource(frames), wall, out.sink);
    player.setSpeed(8);
    player.play();
    wall.advance(25); // 200 ms of recording
    player.tick();
    expect(player.position).toBe(200);
    player.pause();
    wall.advance(1000);
    player.tick();
    expect(player.position).toBe(200);
    player.seek(900);
    expect(player.state).toBe("paused");
    expect(out.keyframes.at(-1)).toEqual({ t: 900, state: { "gear.handle": "up", "alt.baro_ft": 20 } });
    player.play();
    wall.advance(12.5);
    player.tick();
    expect(player.state).toBe("finished");
    expect(out.sent.at(-1)?.frame).toEqual({ t: 1000, v: { "alt.baro_ft": 500 } });
    // Play after the end starts over from the top.
    player.play();
    expect(player.state).toBe("playing");
    expect(out.keyframes.at(-1)?.t).toBe(0);
  });

  it("steps one frame at a time while paused", () => {
    const out = recorder();
    const player = new Player(new ArrayFrameSource(frames), new ManualClock(), out.sink);
    player.play();
    player.pause();
    expect(player.step()?.t).toBe(100);
    expect(player.step()?.t).toBe(200);
    expect(player.position).toBe(200);
    expect(player.state).toBe("paused");
  });

  it("loops a segment with a keyframe at each restart", () => {
    const wall = new ManualClock();
    const out = recorder();
    const player = new Player(new ArrayFrameSource(frames), wall, out.sink);
    player.setLoop({ fromMs: 100, toMs: 250 });
    player.seek(100);
    player.play();
    for (let i = 0; i < 40; i++) {
      wall.advance(10);
      player.tick();
    }
    expect(player.state).toBe("playing");
    const restarts = out.keyframes.filter((k) => k.t === 100);
    expect(restarts.length).toBeGreaterThanOrEqual(3);
    expect(out.sent.every((s) => s.frame.t >= 100 && s.frame.t <= 250)).toBe(true);
    expect(() => player.setLoop({ fromMs: 500, toMs: 100 })).toThrow(RangeError);
  });

  it("gives a late joiner the state at the current position", () => {
    const wall = new ManualClock();
    const player = new Player(new ArrayFrameSource(frames), wall, recorder().sink);
    player.play();
    wall.advance(300);
    player.tick();
    expect(player.keyframeForLateJoiner()).toEqual({ t: 300, state: { "gear.handle": "up", "alt.baro_ft": 20 } });
  });

  it("whatever the speed and wake-up pattern, delivers every value once, in order, ending in the recording's final state", () => {
    fc.assert(
      fc.property(
        fc.array(fc.record({ dt: fc.integer({ min: 0, max: 50 }), ch: fc.integer({ min: 0, max: 4 }), value: fc.integer() }), { minLength: 1, maxLength: 60 }),
        fc.constantFrom(0.1, 0.5, 1, 2, 8, 16),
        fc.integer({ min: 1, max: 40 }),
        (steps, speed, stepMs) => {
          let t = 0;
          const source: Frame[] = [];
          for (const s of steps) {
            t += s.dt;
            const last = source.at(-1);
            if (last && last.t === t) last.v[`c${s.ch}`] = s.value;
            else source.push({ t, v: { [`c${s.ch}`]: s.value } });
          }
          const { sent, keyframes } = replaySync(new ArrayFrameSource(source), { speed, stepMs });
          const times = sent.map((s) => s.frame.t);
          expect([...times].sort((a, b) => a - b)).toEqual(times);
          const final: Record<string, unknown> = { ...keyframes[0].state };
          for (const s of sent) Object.assign(final, s.frame.v);
          expect(final).toEqual(new ArrayFrameSource(source).stateAt(t));
        },
      ),
      { numRuns: 200 },
    );
  });
});
