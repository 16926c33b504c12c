import { createActor, type Actor } from "xstate";
import type { ChannelState, Frame } from "../recording/frames";
import { coalesceFrames, type FrameSource } from "./frame-source";
import { playerMachine, type PlayerState } from "./player-machine";
import { ManualClock, VirtualClock, type WallClock } from "./virtual-clock";

/** Where a player's output goes: every link of the run, through the bench's hub. */
export interface ReplaySink {
  /** Values that changed; `latenessMs` is wall time between when the first of them fell due and now. */
  frame(frame: Frame, info: { latenessMs: number; merged: number }): void;
  /** Every channel's value: after a seek, on a loop restart, and for a link that joins late. */
  keyframe(t: number, state: ChannelState): void;
}

/**
 * One replay: the player machine decides, the virtual clock keeps time, the frame source
 * supplies frames, the sink sends them. The host calls `tick()` when `wallDelayToNextFrame()`
 * says a frame is due (the server's scheduler) or in a loop (the synchronous replayer).
 */
export class Player {
  readonly clock: VirtualClock;
  private readonly actor: Actor<typeof playerMachine>;
  /** Every frame with t <= sentUpTo has been sent. */
  private sentUpTo = -1;

  constructor(
    private readonly source: FrameSource,
    wall: WallClock,
    private readonly sink: ReplaySink,
  ) {
    this.clock = new VirtualClock(wall);
    this.actor = createActor(playerMachine).start();
    this.actor.send({ type: "LOAD" });
    this.actor.send({ type: "LOADED", durationMs: source.durationMs });
  }

  get state(): PlayerState {
    return this.actor.getSnapshot().value as PlayerState;
  }

  get snapshot() {
    const s = this.actor.getSnapshot();
    return { state: s.value as PlayerState, ...s.context, positionMs: this.position };
  }

  /** Recording time that has been delivered. */
  get position() {
    return Math.max(0, this.sentUpTo);
  }

  private end() {
    const loop = this.actor.getSnapshot().context.loop;
    return loop ? loop.toMs : this.source.durationMs;
  }

  play() {
    const before = this.state;
    this.actor.send({ type: "PLAY" });
    if (before === "finished") this.completeSeek();
    if (this.state === "playing") {
      if (this.sentUpTo < 0) this.sendKeyframeAt(0);
      this.clock.start();
    }
  }

  pause() {
    this.clock.pause();
    this.actor.send({ type: "PAUSE" });
  }

  setSpeed(speed: number) {
    this.clock.setSpeed(speed); // throws on an invalid speed before the machine sees it
    this.actor.send({ type: "SET_SPEED", speed });
  }

  setLoop(loop: { fromMs: number; toMs: number } | null) {
    this.actor.send({ type: "SET_LOOP", loop });
    const applied = this.actor.getSnapshot().context.loop;
    if (JSON.stringify(applied) !== JSON.stringify(loop)) throw new RangeError("the loop must lie within the recording, start before it ends");
  }

  seek(toMs: number) {
    this.actor.send({ type: "SEEK", toMs });
    if (this.state === "seeking") this.completeSeek();
  }

  /** Sends the next frame after the current position and stops there (paused or ready only). */
  step(): Frame | null {
    if (this.state !== "paused" && this.state !== "ready") return null;
    const next = this.source.nextFrameAfter(this.sentUpTo);
    if (!next || next.t > this.end()) return null;
    this.sink.frame(next, { latenessMs: 0, merged: 1 });
    this.sentUpTo = next.t;
    this.clock.seek(next.t);
    this.actor.send({ type: "STEP", toMs: next.t });
    if (this.state === "ready") this.actor.send({ type: "SEEK", toMs: next.t }), this.actor.send({ type: "SEEK_DONE" });
    return next;
  }

  /** What a link that joins now must receive first. */
  keyframeForLateJoiner(): { t: number; state: ChannelState } {
    const t = this.position;
    return { t, state: this.source.stateAt(t) };
  }

  /** Wall milliseconds until the next frame falls due; Infinity when not playing or nothing is left. */
  wallDelayToNextFrame(): number {
    if (this.state !== "playing") return Infinity;
    const next = this.source.nextFrameAfter(this.sentUpTo);
    const due = next && next.t <= this.end() ? next.t : this.end();
    return this.clock.wallDelayUntil(due);
  }

  /** Sends everything due by now, as one frame when several fell due together. */
  tick() {
    if (this.state !== "playing") return;
    const end = this.end();
    const now = Math.min(this.clock.now(), end);
    if (now > this.sentUpTo) {
      const due = this.source.framesBetween(this.sentUpTo, now);
      const merged = coalesceFrames(due);
      if (merged) {
        const latenessMs = (this.clock.now() - due[0].t) / this.clock.speed;
        this.sink.frame(merged, { latenessMs, merged: due.length });
      }
      this.sentUpTo = now;
      this.actor.send({ type: "PROGRESS", positionMs: now });
    }
    if (now >= end) {
      this.actor.send({ type: "REACHED_END" });
      if ((this.state as PlayerState) === "seeking") this.completeSeek(); // a loop starts over
      else this.clock.pause();
    }
  }

  private completeSeek() {
    const target = this.actor.getSnapshot().context.seekTargetMs;
    this.sendKeyframeAt(target);
    this.clock.seek(target);
    this.actor.send({ type: "SEEK_DONE" });
    if (this.state === "playing") this.clock.start();
    else this.clock.pause();
  }

  private sendKeyframeAt(t: number) {
    this.sink.keyframe(t, this.source.stateAt(t));
    // stateAt(t) already holds the frames at exactly t, so they count as sent.
    this.sentUpTo = t;
  }

  stop() {
    this.actor.stop();
  }
}

/**
 * Plays a whole source at `speed` without waiting, on a manual clock: the same code path as
 * a live replay, for tests and offline judging.
 */
export function replaySync(source: FrameSource, options: { speed?: number; stepMs?: number } = {}) {
  const wall = new ManualClock();
  const sent: { frame: Frame; wallMs: number; latenessMs: number; merged: number }[] = [];
  const keyframes: { t: number; state: ChannelState }[] = [];
  const player = new Player(source, wall, {
    frame: (frame, info) => sent.push({ frame, wallMs: wall.now(), ...info }),
    keyframe: (t, state) => keyframes.push({ t, state }),
  });
  if (options.speed) player.setSpeed(options.speed);
  player.play();
  let guard = 0;
  while (player.state === "playing") {
    // Without stepMs, wake exactly when the next frame falls due; with it, wake every
    // stepMs of wall time like a coarse host timer, so late frames get coalesced.
    wall.advance(options.stepMs ?? Math.max(0, player.wallDelayToNextFrame()));
    player.tick();
    if (++guard > 50_000_000) throw new Error("replaySync did not finish");
  }
  return { sent, keyframes, player };
}
