import { assign, setup } from "xstate";
import { isValidSpeed } from "./virtual-clock";

/**
 * The player's modes as a state machine: idle, loading, ready, playing, paused, seeking,
 * finished, failed. It only decides; the host (server bench or browser) does the loading,
 * the clock and the sending, and tells the machine what happened. No side effects inside.
 */
export interface PlayerContext {
  durationMs: number;
  speed: number;
  /** Where the replay stands, in recording milliseconds (updated by the host as it plays). */
  positionMs: number;
  /** A segment to repeat, or null. */
  loop: { fromMs: number; toMs: number } | null;
  /** Whether to play on once a seek completes. */
  resumeAfterSeek: boolean;
  seekTargetMs: number;
  error: string | null;
}

export type PlayerEvent =
  | { type: "LOAD" }
  | { type: "LOADED"; durationMs: number }
  | { type: "FAIL"; reason: string }
  | { type: "PLAY" }
  | { type: "PAUSE" }
  | { type: "SEEK"; toMs: number }
  | { type: "SEEK_DONE" }
  | { type: "STEP"; toMs: number }
  | { type: "PROGRESS"; positionMs: number }
  | { type: "REACHED_END" }
  | { type: "SET_SPEED"; speed: number }
  | { type: "SET_LOOP"; loop: { fromMs: number; toMs: number } | null };

const clampTo = (ms: number, durationMs: number) => Math.min(Math.max(0, ms), durationMs);

export const playerMachine = setup({
  types: { context: {} as PlayerContext, events: {} as PlayerEvent },
  guards: {
    validSpeed: ({ event }) => event.type === "SET_SPEED" && isValidSpeed(event.speed),
    validLoop: ({ context, event }) =>
      event.type === "SET_LOOP" &&
      (event.loop === null || (event.loop.fromMs >= 0 && event.loop.toMs <= context.durationMs && event.loop.fromMs < event.loop.toMs)),
    looping: ({ context }) => context.loop !== null,
    resumeAfterSeek: ({ context }) => context.resumeAfterSeek,
  },
  actions: {
    setDuration: assign({ durationMs: ({ event }) => (event.type === "LOADED" ? event.durationMs : 0), positionMs: 0 }),
    setError: assign({ error: ({ event }) => (event.type === "FAIL" ? event.reason : "unknown failure") }),
    setSpeed: assign({ speed: ({ context, event }) => (event.type === "SET_SPEED" ? event.speed : context.speed) }),
    setLoop: assign({ loop: ({ context, event }) => (event.type === "SET_LOOP" ? event.loop : context.loop) }),
    setPosition: assign({
      positionMs: ({ context, event }) =>
        event.type === "PROGRESS" || event.type === "STEP"
          ? clampTo(event.type === "PROGRESS" ? event.positionMs : event.toMs, context.durationMs)
          : context.positionMs,
    }),
    beginSeekPaused: assign({
      resumeAfterSeek: false,
      seekTargetMs: ({ context, event }) => (event.type === "SEEK" ? clampTo(event.toMs, context.durationMs) : context.positionMs),
    }),
    beginSeekPlaying: assign({
      resumeAfterSeek: true,
      seekTargetMs: ({ context, event }) => (event.type === "SEEK" ? clampTo(event.toMs, context.durationMs) : context.positionMs),
    }),
    retargetSeek: assign({
      seekTargetMs: ({ context, event }) => (event.type === "SEEK" ? clampTo(event.toMs, context.durationMs) : context.seekTargetMs),
    }),
    beginRestart: assign({ resumeAfterSeek: true, seekTargetMs: 0 }),
    beginLoopRestart: assign({ resumeAfterSeek: true, seekTargetMs: ({ context }) => context.loop?.fromMs ?? 0 }),
    finishSeek: assign({ positionMs: ({ context }) => context.seekTargetMs }),
    atEnd: assign({ positionMs: ({ context }) => context.durationMs }),
  },
}).createMachine({
  id: "player",
  initial: "idle",
  context: { durationMs: 0, speed: 1, positionMs: 0, loop: null, resumeAfterSeek: false, seekTargetMs: 0, error: null },
  on: {
    FAIL: { target: ".failed", actions: "setError" },
    SET_SPEED: { guard: "validSpeed", actions: "setSpeed" },
  },
  states: {
    idle: { on: { LOAD: "loading" } },
    loading: { on: { LOADED: { target: "ready", actions: "setDuration" } } },
    ready: {
      on: {
        PLAY: "playing",
        SEEK: { target: "seeking", actions: "beginSeekPaused" },
        STEP: { actions: "setPosition" },
        SET_LOOP: { guard: "validLoop", actions: "setLoop" },
      },
    },
    playing: {
      on: {
        PAUSE: "paused",
        PROGRESS: { actions: "setPosition" },
        SEEK: { target: "seeking", actions: "beginSeekPlaying" },
        SET_LOOP: { guard: "validLoop", actions: "setLoop" },
        REACHED_END: [
          { guard: "looping", target: "seeking", actions: "beginLoopRestart" },
          { target: "finished", actions: "atEnd" },
        ],
      },
    },
    paused: {
      on: {
        PLAY: "playing",
        STEP: { actions: "setPosition" },
        SEEK: { target: "seeking", actions: "beginSeekPaused" },
        SET_LOOP: { guard: "validLoop", actions: "setLoop" },
      },
    },
    seeking: {
      on: {
        SEEK_DONE: [
          { guard: "resumeAfterSeek", target: "playing", actions: "finishSeek" },
          { target: "paused", actions: "finishSeek" },
        ],
        // A newer seek replaces the one in flight.
        SEEK: { actions: "retargetSeek" },
      },
    },
    finished: {
      on: {
        PLAY: { target: "seeking", actions: "beginRestart" },
        SEEK: { target: "seeking", actions: "beginSeekPaused" },
      },
    },
    failed: { type: "final" },
  },
});

export type PlayerState = "idle" | "loading" | "ready" | "playing" | "paused" | "seeking" | "finished" | "failed";
