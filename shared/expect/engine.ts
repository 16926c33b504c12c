import { createActor, SimulatedClock, type Actor, type AnyActorLogic } from "xstate";
import { applyTransform, conditionTest, formatReadout, positionResolver, UNKNOWN_POSITION, type BoundValue, type Condition } from "../elements/bindings";
import {
  advanceClockTo,
  breakerMachine,
  buttonMachine,
  lampMachine,
  latchMachine,
  leverMachine,
  pointerMachine,
  readoutMachine,
  switchMachine,
} from "../elements/behaviours";
import type { Element, LampOutput, PointerElement, ReadoutElement } from "../elements/kinds";
import { angleFunction, normalizeAngle, shortestArc } from "../elements/scale/scale";
import type { Panel } from "../panel/schema";
import { SlewFollower } from "./slew";
import { DiscreteTrackBuilder, LinearTrackBuilder } from "./tracks";
import type { BreakerShows, ElementTimeline, ExpectedTimelines, ExpectFrame, LampShows } from "./types";

export interface ExpectOptions {
  /** Where the timelines end. Default: the last frame's instant. */
  endMs?: number;
  /**
   * Two samples of a pointer's value at most this far apart are joined by a straight line (the
   * value moved continuously between them); farther apart, the value held and then stepped.
   */
  rampGapMs?: number;
  /**
   * Pointer tracks drop points that lie within this many degrees of the line through their
   * neighbours. Far below any pointer tolerance, it keeps an hour at 60 Hz small.
   */
  angleResolutionDeg?: number;
}

export const EXPECT_DEFAULTS = { rampGapMs: 250, angleResolutionDeg: 0.05 } as const;

type Listener = (value: BoundValue, t: number) => void;

interface Runner {
  timeline: ElementTimeline;
  listeners: [string, Listener][];
  /** Records the initial state at the recording's start. */
  start(t: number): void;
  /** Re-reads the machine after timers fired at `t` (only runners with timers). */
  afterTimers?(t: number): void;
  finish(t: number): void;
  stop(): void;
}

interface Build {
  clock: SimulatedClock;
  options: Required<Omit<ExpectOptions, "endMs">>;
}

/**
 * Turns a recording (frames in time order) and a panel into every element's expected timeline.
 *
 * Pure and deterministic: the machines run on one SimulatedClock that follows the frames' own
 * instants, never wall time, and every element reads channels in the order the frames list them.
 * A machine gets an event only when one of its inputs changes (a condition flipping, a position
 * changing), never per sample; continuous motion is a plain loop (SlewFollower).
 */
export function expectTimelines(panel: Pick<Panel, "id" | "elements">, frames: Iterable<ExpectFrame>, options: ExpectOptions = {}): ExpectedTimelines {
  const clock = new SimulatedClock();
  const build: Build = {
    clock,
    options: {
      rampGapMs: options.rampGapMs ?? EXPECT_DEFAULTS.rampGapMs,
      angleResolutionDeg: options.angleResolutionDeg ?? EXPECT_DEFAULTS.angleResolutionDeg,
    },
  };
  const runners = panel.elements.map((el) => compileElement(el, build));

  const byChannel = new Map<string, Listener[]>();
  for (const runner of runners) {
    for (const [channel, listener] of runner.listeners) {
      const list = byChannel.get(channel);
      if (list) list.push(listener);
      else byChannel.set(channel, [listener]);
    }
  }
  const timed = runners.filter((r) => r.afterTimers);
  const onDeadline = timed.length ? (at: number) => timed.forEach((r) => r.afterTimers!(at)) : undefined;

  const startMs = 0;
  for (const runner of runners) runner.start(startMs);
  let last = startMs;
  for (const frame of frames) {
    const t = frame.t;
    if (t > clock.now()) advanceClockTo(clock, t, onDeadline);
    const values = frame.v;
    for (const channel in values) {
      const listeners = byChannel.get(channel);
      if (listeners === undefined) continue;
      const value = values[channel];
      for (let i = 0; i < listeners.length; i++) listeners[i](value, t);
    }
    last = t;
  }
  const endMs = Math.max(options.endMs ?? last, last);
  advanceClockTo(clock, endMs, onDeadline);
  for (const runner of runners) {
    runner.finish(endMs);
    runner.stop();
  }
  return { panelId: panel.id, startMs, endMs, elements: runners.map((r) => r.timeline) };
}

// ---------------------------------------------------------------------------------------------

function newTimeline(el: Element): ElementTimeline {
  return { id: el.id, kind: el.kind, label: el.label, placeholder: el.placeholder, tracks: {} };
}

/** A listener that calls `onFlip` only when the condition's result changes (it starts false). */
function watch(c: Condition, onFlip: (on: boolean, t: number) => void): [string, Listener] {
  const test = conditionTest(c);
  let state = false;
  return [
    c.channel,
    (value, t) => {
      const next = test(value);
      if (next !== state) {
        state = next;
        onFlip(next, t);
      }
    },
  ];
}

function stateName(value: unknown): string {
  if (typeof value === "string") return value;
  // Parallel or nested states: "region.state" pairs in a fixed (declaration) order.
  const parts: string[] = [];
  const walk = (v: unknown, prefix: string) => {
    if (typeof v === "string") parts.push(prefix ? `${prefix}.${v}` : v);
    else if (v && typeof v === "object") for (const [k, sub] of Object.entries(v)) walk(sub, prefix ? `${prefix}.${k}` : k);
  };
  walk(value, "");
  return parts.join(" ");
}

function lampKey(s: LampShows): string {
  return s.state === "off" ? "off" : s.state === "on" ? `on ${s.level}` : `flashing ${s.periodMs} ${s.level}`;
}

const OFF: LampShows = { state: "off" };

/**
 * The lamp part of a lamp element or a lit button: a lamp or latch machine, a dimmer, and the
 * lamp track. `power` is the owning element's power condition.
 */
function lampPart(out: LampOutput, power: Condition | undefined, build: Build, timeline: ElementTimeline, withMode: boolean) {
  const lamp = new DiscreteTrackBuilder<LampShows>();
  const mode = new DiscreteTrackBuilder<string>();
  timeline.tracks.lamp = lamp.changes;
  if (withMode) timeline.tracks.mode = mode.changes;
  const listeners: [string, Listener][] = [];
  let level = 255;
  const period = out.flash?.periodMs ?? 0;
  const drive = out.drive;

  let read: () => { name: string; shows: LampShows };
  let actor: Actor<AnyActorLogic>;
  if (drive.mode === "condition") {
    const a = createActor(lampMachine, {
      clock: build.clock,
      input: { alwaysPowered: power === undefined, flashes: out.flash !== undefined, alwaysFlashWhenLit: out.flash?.when === undefined },
    });
    actor = a as unknown as Actor<AnyActorLogic>;
    read = () => {
      const name = a.getSnapshot().value;
      const shows: LampShows =
        name === "testing"
          ? { state: "on", level: 255 }
          : name === "steady"
            ? { state: "on", level }
            : name === "flashing"
              ? { state: "flashing", periodMs: period, level }
              : OFF;
      return { name, shows };
    };
    listeners.push(watch(drive.on, (on, t) => send({ type: "LIGHT", on }, t)));
    if (out.flash?.when) listeners.push(watch(out.flash.when, (on, t) => send({ type: "FLASH_WHEN", on }, t)));
  } else {
    const a = createActor(latchMachine, { clock: build.clock, input: { cautionCount: drive.cautions.length, alwaysPowered: power === undefined } });
    actor = a as unknown as Actor<AnyActorLogic>;
    read = () => {
      const snapshot = a.getSnapshot();
      const supply = snapshot.value.supply;
      const alerting = snapshot.value.alert === "alerting";
      const shows: LampShows =
        supply === "dark"
          ? OFF
          : supply === "testing"
            ? { state: "on", level: 255 }
            : !alerting
              ? OFF
              : out.flash
                ? { state: "flashing", periodMs: period, level }
                : { state: "on", level };
      return { name: stateName(snapshot.value), shows };
    };
    drive.cautions.forEach((c, index) => listeners.push(watch(c, (on, t) => send({ type: "CAUTION", index, on }, t))));
    listeners.push(watch(drive.acknowledge, (on, t) => send({ type: "ACKNOWLEDGE", on }, t)));
  }
  if (out.test) listeners.push(watch(out.test, (on, t) => send({ type: "TEST", on }, t)));
  if (power) listeners.push(watch(power, (on, t) => send({ type: "POWER", on }, t)));
  if (out.dimmer) {
    const dimmer = out.dimmer;
    listeners.push([
      dimmer.channel,
      (value, t) => {
        if (typeof value !== "number") return;
        const fraction = applyTransform(dimmer.transform, value);
        level = Math.round(Math.min(1, Math.max(0, fraction)) * 255);
        record(t);
      },
    ]);
  }

  function record(t: number) {
    const { name, shows } = read();
    lamp.set(t, shows, lampKey(shows));
    if (withMode) mode.set(t, name, name);
  }
  function send(event: { type: string; [k: string]: unknown }, t: number) {
    actor.send(event as never);
    record(t);
  }
  actor.start();
  return { listeners, record, stop: () => actor.stop() };
}

function compileElement(el: Element, build: Build): Runner {
  switch (el.kind) {
    case "lamp": {
      const timeline = newTimeline(el);
      const part = lampPart(el, el.power, build, timeline, true);
      return { timeline, listeners: part.listeners, start: part.record, finish: () => {}, stop: part.stop };
    }
    case "pointer":
      return pointerRunner(el, build);
    case "readout":
      return readoutRunner(el, build);
    case "breaker": {
      const timeline = newTimeline(el);
      const track = new DiscreteTrackBuilder<BreakerShows>();
      timeline.tracks.breaker = track.changes;
      const actor = createActor(breakerMachine, { clock: build.clock }).start();
      const record = (t: number) => {
        const shows = actor.getSnapshot().value;
        track.set(t, shows, shows);
      };
      const listeners: [string, Listener][] = [watch(el.trip, (on, t) => (actor.send({ type: "TRIP", on }), record(t)))];
      if (el.pulled) listeners.push(watch(el.pulled, (on, t) => (actor.send({ type: "PULL", on }), record(t))));
      return { timeline, listeners, start: record, finish: () => {}, stop: () => actor.stop() };
    }
    case "switch":
    case "lever": {
      const timeline = newTimeline(el);
      const position = new DiscreteTrackBuilder<string>();
      const mode = new DiscreteTrackBuilder<string>();
      timeline.tracks.position = position.changes;
      timeline.tracks.mode = mode.changes;
      const resolve = positionResolver(el.position, el.positions);
      let lastName: string = UNKNOWN_POSITION;
      const listeners: [string, Listener][] = [];
      let actor: Actor<typeof switchMachine> | Actor<typeof leverMachine>;
      if (el.kind === "switch") {
        actor = createActor(switchMachine, {
          clock: build.clock,
          input: { initial: UNKNOWN_POSITION, springFrom: el.springReturn?.from, springTo: el.springReturn?.to, holdMs: el.springReturn?.holdMs },
        }).start();
      } else {
        const lever = createActor(leverMachine, { clock: build.clock, input: { initial: UNKNOWN_POSITION } }).start();
        actor = lever;
        if (el.lock) listeners.push(watch(el.lock, (on, t) => (lever.send({ type: "LOCK", on }), record(t))));
      }
      const record = (t: number) => {
        const snapshot = actor.getSnapshot();
        position.set(t, snapshot.context.position, snapshot.context.position);
        const name = stateName(snapshot.value);
        mode.set(t, name, name);
      };
      listeners.unshift([
        el.position.channel,
        (value, t) => {
          const name = resolve(value);
          if (name === lastName) return;
          lastName = name;
          (actor as Actor<typeof switchMachine>).send({ type: "POSITION", name });
          record(t);
        },
      ]);
      return {
        timeline,
        listeners,
        start: record,
        afterTimers: el.kind === "switch" && el.springReturn ? record : undefined,
        finish: () => {},
        stop: () => actor.stop(),
      };
    }
    case "button": {
      const timeline = newTimeline(el);
      const pressed = new DiscreteTrackBuilder<boolean>();
      timeline.tracks.pressed = pressed.changes;
      const actor = createActor(buttonMachine, { clock: build.clock }).start();
      const record = (t: number) => {
        const down = actor.getSnapshot().value === "pressed";
        pressed.set(t, down, down ? "1" : "0");
      };
      const listeners: [string, Listener][] = [watch(el.pressed, (on, t) => (actor.send({ type: "PRESS", on }), record(t)))];
      const backlight = el.backlight ? lampPart(el.backlight, el.power, build, timeline, false) : null;
      if (backlight) listeners.push(...backlight.listeners);
      return {
        timeline,
        listeners,
        start: (t) => (record(t), backlight?.record(t)),
        finish: () => {},
        stop: () => (actor.stop(), backlight?.stop()),
      };
    }
    case "encoder": {
      const timeline = newTimeline(el);
      const detents = new DiscreteTrackBuilder<number>();
      timeline.tracks.detents = detents.changes;
      // Fields, not closure variables: doubles in fields are not boxed on every write.
      const state = { started: false, previous: 0, turned: 0, count: 0 }; // turned: in the channel's (transformed) units
      return {
        timeline,
        listeners: [
          [
            el.value.channel,
            (value, t) => {
              if (typeof value !== "number") return;
              const v = applyTransform(el.value.transform, value);
              if (state.started) {
                let delta = v - state.previous;
                if (el.wrap !== undefined) {
                  delta = ((((delta + el.wrap / 2) % el.wrap) + el.wrap) % el.wrap) - el.wrap / 2;
                }
                state.turned += delta;
                const count = Math.round(state.turned / el.valuePerDetent) + 0;
                if (count !== state.count) {
                  state.count = count;
                  detents.set(t, count, String(count));
                }
              }
              state.previous = v;
              state.started = true;
            },
          ],
        ],
        start: (t) => detents.set(t, 0, "0"),
        finish: () => {},
        stop: () => {},
      };
    }
  }
}

class ReadoutState {
  formatted = "";
  lastKey = 0;
  hasKey = false;
}

function readoutRunner(el: ReadoutElement, build: Build): Runner {
  const timeline = newTimeline(el);
  const text = new DiscreteTrackBuilder<string>();
  const mode = new DiscreteTrackBuilder<string>();
  timeline.tracks.text = text.changes;
  timeline.tracks.mode = mode.changes;
  const actor = createActor(readoutMachine, { clock: build.clock, input: { alwaysPowered: el.power === undefined } }).start();
  const allLit = "8".repeat(el.format.width ?? 0);
  const state = new ReadoutState();
  const format = el.format;
  const factor = 10 ** format.decimals;
  // The digits depend only on the rounded magnitude and the sign, unless a map renames values.
  const digitsKey = format.map ? null : (v: number) => (v < 0 ? -1 : 1) * Math.round(Math.abs(v) * factor);
  const record = (t: number) => {
    const name = actor.getSnapshot().value;
    const shows = name === "showing" ? state.formatted : name === "testing" ? allLit : "";
    text.set(t, shows, shows);
    mode.set(t, name, name);
  };
  const listeners: [string, Listener][] = [
    [
      el.value.channel,
      (v, t) => {
        if (typeof v === "number") {
          const value = applyTransform(el.value.transform, v);
          if (digitsKey) {
            const key = digitsKey(value);
            if (key === state.lastKey && state.hasKey) return;
            state.lastKey = key;
            state.hasKey = true;
          }
          state.formatted = formatReadout(format, value);
        } else {
          state.hasKey = false;
          state.formatted = formatReadout(format, v);
        }
        record(t);
      },
    ],
  ];
  if (el.power) listeners.push(watch(el.power, (on, t) => (actor.send({ type: "POWER", on }), record(t))));
  if (el.blankWhen) listeners.push(watch(el.blankWhen, (on, t) => (actor.send({ type: "BLANK", on }), record(t))));
  if (el.test) listeners.push(watch(el.test, (on, t) => (actor.send({ type: "TEST", on }), record(t))));
  return { timeline, listeners, start: record, finish: () => {}, stop: () => actor.stop() };
}

/** The dial angle a pointer rests at when unpowered. */
export function parkAngleOf(el: PointerElement): number {
  if (el.parkAngle !== undefined) return el.parkAngle;
  return el.scale.kind === "sweep" ? el.scale.points[0].angle : el.scale.angleAtZero;
}

/**
 * valueToTravelAngle prepared once for a full-circle scale (it looks the scale up per call; this
 * runs per sample). Same arithmetic, so the same angles: the unit tests compare the two.
 */
export function travelAngleFunction(scale: Extract<PointerElement["scale"], { kind: "full-circle" }>): (value: number) => number {
  const sign = scale.turn === "clockwise" ? 1 : -1;
  const { angleAtZero, period } = scale;
  return (value) => angleAtZero + (sign * 360 * value) / period;
}

/**
 * A pointer's per-sample state lives in object fields rather than closure variables: V8 keeps
 * doubles in fields unboxed, while every write of a double to a closure variable allocates, and
 * this path runs once per pointer per frame.
 */
class PointerState {
  following = false;
  lastSampleT = -Infinity;
  hasTarget = false;
  /** The value's angle, before any turn offset. */
  target = 0;
  /** Whole turns added to a full-circle target after power returns. */
  turnOffset = 0;
}

function pointerRunner(el: PointerElement, build: Build): Runner {
  const timeline = newTimeline(el);
  const flag = new DiscreteTrackBuilder<boolean>();
  const mode = new DiscreteTrackBuilder<string>();
  timeline.tracks.flag = flag.changes;
  timeline.tracks.mode = mode.changes;
  const wrap = el.scale.kind === "full-circle";
  const line = new LinearTrackBuilder(build.options.angleResolutionDeg);
  timeline.angle = { t: line.t, angle: line.angle, wrap };
  const follower = new SlewFollower(line, el.maxSlewDegPerSec);
  const actor = createActor(pointerMachine, { clock: build.clock, input: { alwaysPowered: el.power === undefined } }).start();
  const scale = el.scale;
  // Full-circle pointers travel in unwrapped degrees so motion through 360 stays a straight line.
  const toAngle = wrap ? travelAngleFunction(scale as Extract<PointerElement["scale"], { kind: "full-circle" }>) : angleFunction(scale);
  const park = parkAngleOf(el);
  const transform = el.value.transform;
  const rampGap = build.options.rampGapMs;
  const state = new PointerState();

  const parkTarget = (): number => {
    if (!wrap) return park;
    const p = follower.at.position;
    return p + shortestArc(normalizeAngle(p), park);
  };
  const record = (t: number) => {
    const name = actor.getSnapshot().value;
    mode.set(t, name, name);
    const showsFlag = name === "parked" && el.offFlag;
    flag.set(t, showsFlag, showsFlag ? "1" : "0");
  };

  const listeners: [string, Listener][] = [
    [
      el.value.channel,
      (value, t) => {
        if (typeof value !== "number") return;
        const angle = toAngle(transform ? applyTransform(transform, value) : value);
        const ramp = state.following && state.hasTarget && t - state.lastSampleT <= rampGap;
        state.target = angle;
        state.hasTarget = true;
        state.lastSampleT = t;
        if (state.following) follower.feed(t, angle + state.turnOffset, ramp);
      },
    ],
  ];
  if (el.power) {
    listeners.push(
      watch(el.power, (on, t) => {
        actor.send({ type: "POWER", on });
        state.following = actor.getSnapshot().value === "following";
        if (state.following) {
          if (state.hasTarget) {
            if (wrap) state.turnOffset = Math.round((follower.at.position - state.target) / 360) * 360;
            follower.feed(t, state.target + state.turnOffset, false);
          }
        } else {
          follower.feed(t, parkTarget(), false);
        }
        record(t);
      }),
    );
  }
  return {
    timeline,
    listeners,
    start: (t) => {
      state.following = actor.getSnapshot().value === "following";
      follower.start(t, park);
      record(t);
    },
    finish: (t) => follower.finish(t),
    stop: () => actor.stop(),
  };
}
