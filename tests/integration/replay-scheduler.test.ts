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

  it("plays two runs at once, interleaved, each in order and never early", async () => {
    const frames: Frame[] = Array.from({ length: 60 }, (_, i) => ({ t: i * 3, v: { n: i } }));
    const sent: { run: string; t: number; wall: number }[] = [];
    const start = performance.now();
    const runs = ["first", "second"].map((run) => {
      const player = new Player(new ArrayFrameSource(frames), performanceClock, {
        frame: (f) => sent.push({ run, t: f.t, wall: performance.now() - start }),
        keyframe: () => {},
      });
      return { player, scheduler: new ReplayScheduler(player) };
    });
    for (const r of runs) {
      r.player.play();
      r.scheduler.kick();
    }
    while (runs.some((r) => r.player.state === "playing")) await new Promise((r) => setTimeout(r, 5));
    runs.forEach((r) => r.scheduler.stop());
    for (const run of ["first", "second"]) {
      const own = sent.filter((s) => s.run === run).map((s) => s.t);
      expect(own).toEqual([...own].sort((a, b) => a - b));
      expect(own.at(-1)).toBe(177);
    }
    // Neither waited for the other to finish.
    const lastOfFirst = sent.findLastIndex((s) => s.run === "first");
    const firstOfSecond = sent.findIndex((s) => s.run === "second");
    expect(firstOfSecond).toBeLessThan(lastOfFirst);
    for (const s of sent) expect(s.wall).toBeGreaterThanOrEqual(s.t - 1);
  });
});
