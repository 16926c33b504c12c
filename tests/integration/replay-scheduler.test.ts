import { describe, expect, it } from "vitest";
import type { Frame } from "../../shared/recording/frames";
import { ArrayFrameSource } from "../../shared/replay/frame-source";
import { Player } from "../../shared/replay/player";
import { performanceClock } from "../../shared/replay/virtual-clock";
import { ReplayScheduler } from "../../server/bench/scheduler";

describe("replay scheduler on real timers", () => {
  it("delivers every frame in order, never early, and follows pause and speed changes", async () => {
    const frames: Frame[] = Array.from({ length: 40 }, (_, i) => ({ t: i * 10, v: { n: i } }));
    const seen: { t: number; wall: number }[] = [];
    let start = 0;
    const player = new Player(new ArrayFrameSource(frames), performanceClock, {
      frame: (f) => seen.push({ t: f.t, wall: performance.now() - start }),
      keyframe: () => {},
    });
    const scheduler = new ReplayScheduler(player);
    start = performance.now();
    player.play();
    scheduler.kick();
    await new Promise((r) => setTimeout(r, 120));
    player.pause();
    scheduler.kick();
    const atPause = seen.length;
    await new Promise((r) => setTimeout(r, 60));
    expect(seen.length).toBe(atPause); // nothing while paused
    player.setSpeed(4);
    player.play();
    scheduler.kick();
    while (player.state === "playing") await new Promise((r) => setTimeout(r, 10));
    scheduler.stop();

    const times = seen.map((s) => s.t);
    expect(times).toEqual([...times].sort((a, b) => a - b));
    const values = new Set(times);
    expect(values.has(390)).toBe(true);
    // Never early: a frame at t was not sent before t of recording time had passed at 1x.
    for (const s of seen.filter((x) => x.t <= 100)) expect(s.wall).toBeGreaterThanOrEqual(s.t - 1);
    expect(player.state).toBe("finished");
  });

  it("gives the event loop a turn between every two frames, even when frames fall due faster than a timer can fire", async () => {
    // 200 frames 1 ms apart at 16x: one every 62.5 microseconds of wall time, all waited out on the spot.
    const frames: Frame[] = Array.from({ length: 200 }, (_, i) => ({ t: i, v: { n: i } }));
    let turns = 0;
    let framesSent = 0;
    const turnsAtFrame: number[] = [];
    const player = new Player(new ArrayFrameSource(frames), performanceClock, {
      frame: () => {
        framesSent++;
        turnsAtFrame.push(turns);
      },
      keyframe: () => {},
    });
    const scheduler = new ReplayScheduler(player);
    const other = () => {
      turns++;
      if (player.state === "playing") setImmediate(other);
    };
    player.setSpeed(16);
    player.play();
    scheduler.kick();
    setImmediate(other);
    while (player.state === "playing") await new Promise((r) => setTimeout(r, 5));
    scheduler.stop();
    expect(framesSent).toBeGreaterThan(1);
    // Between any two frames sent, other work ran at least once.
    for (let i = 1; i < turnsAtFrame.length; i++) expect(turnsAtFrame[i]).toBeGreaterThan(turnsAtFrame[i - 1]);
  });
});
