import { SimulatedClock, type AnyStateMachine } from "xstate";
import { applyTransform, conditionTest, formatReadout, positionResolver, UNKNOWN_POSITION, type BoundValue, type Condition, type ReadoutFormat, type Transform } from "../elements/bindings";
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
import { AngleComputer, normalizeAngle, shortestArc } from "../elements/scale/scale";
import type { Panel } from "../panel/schema";
import { runPointerSamples } from "./pointer-loop";
import { SlewFollower } from "./slew";
import { RecordingColumns } from "./recording-columns";
import { workSlices, type TurnOptions } from "../turns";
import { ChannelColumns, ElementFeed, type ChannelColumn, FRAMES_PER_CHUNK, type BulkListener, type Listener } from "./columns";
import { actorCell, MemoTables, type CellEvent, type MachineCell } from "./cells";
import { countKey, DiscreteTrackBuilder, flagKey, LinearTrackBuilder, textKey } from "./tracks";
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

interface Runner {
  timeline: ElementTimeline;
  listeners: [string, Listener][];
  /** The loop form of one listener (a pointer's, readout's or encoder's value), for the fast path. */
  bulk?: { listener: Listener; run: BulkListener };
  /** Records the initial state at the recording's start. */
  start(t: number): void;
  /** Re-reads the machine after timers fired at `t` (only runners with timers). */
  afterTimers?(t: number): void;
  /** The element's own clock (fast path, behaviours with delays only). */
  clock?: SimulatedClock;
  finish(t: number): void;
  stop(): void;
}

interface Build {
  /** The clock every actor runs on (stepwise: one for the panel; fast: one per timed element). */
  clock: SimulatedClock;
  /** Learnt transition tables (fast path); null: every machine runs as an actor (stepwise). */
  memo: MemoTables | null;
  options: Required<Omit<ExpectOptions, "endMs">>;
}

function buildOf(options: ExpectOptions, memo: MemoTables | null): Build {
  return {
    clock: new SimulatedClock(),
    memo,
    options: {
      rampGapMs: options.rampGapMs ?? EXPECT_DEFAULTS.rampGapMs,
      angleResolutionDeg: options.angleResolutionDeg ?? EXPECT_DEFAULTS.angleResolutionDeg,
    },
  };
}

/** A behaviour machine without delays: memoised on the fast path, an actor on the stepwise one. */
function cellOf(build: Build, machine: AnyStateMachine, input?: unknown): MachineCell {
  return build.memo ? build.memo.cell(machine, input) : actorCell(machine, build.clock, input);
}

/**
 * Turns a recording (frames in time order) and a panel into every element's expected timeline.
 *
 * Pure and deterministic: machines run on the recording's own instants, never wall time, and every
 * element reads its channels in the order the frames list them. The frames are read a chunk at a
 * time into one column per bound channel (docs/behaviours.md, "How the engine runs"); then each
 * element plays only the samples of the channels it binds, so an element whose inputs did not
 * change costs nothing. A machine gets an event only when one of its inputs changes (a condition
 * flipping, a position changing), never per sample, and machines without delays step through
 * transition tables learnt from xstate (cells.ts); continuous motion is a plain loop (SlewFollower).
 *
 * Gives exactly what `expectTimelinesStepwise` gives (a property test compares the two).
 */
export function expectTimelines(
  panel: Pick<Panel, "id" | "elements">,
  recording: Iterable<ExpectFrame> | RecordingColumns,
  options: ExpectOptions = {},
): ExpectedTimelines {
  if (recording instanceof RecordingColumns) {
    const steps = playColumns(panel, recording, options);
    for (;;) {
      const step = steps.next();
      if (step.done) return step.value;
    }
  }
  const runners = compileRunners(panel, options);
  const startMs = 0;
  const frames = recording;
  const columns = new ChannelColumns();
  const feeds = runners.map((runner) => new ElementFeed(runner, columns));
  const byChannel = columns.byChannel;

  for (const runner of runners) runner.start(startMs);
  let last = startMs;
  let seq = 0;
  let framesInChunk = 0;
  const flush = () => {
    for (let i = 0; i < feeds.length; i++) feeds[i].play();
    columns.clear();
    framesInChunk = 0;
  };
  // Frames usually list the same channels in the same order: the column found for the k-th key
  // of the last frame is kept, and a key that is the same string again skips the map lookup.
  const keyAt: string[] = [];
  const columnAt: (ChannelColumn | null)[] = [];
  const read = (frame: ExpectFrame) => {
    const t = frame.t;
    const values = frame.v;
    let k = 0;
    for (const channel in values) {
      let column: ChannelColumn | null;
      if (keyAt[k] === channel) column = columnAt[k];
      else {
        column = byChannel.get(channel) ?? null;
        keyAt[k] = channel;
        columnAt[k] = column;
      }
      if (column !== null) column.add(t, values[channel], seq++);
      k++;
    }
    last = t;
    if (++framesInChunk === FRAMES_PER_CHUNK) flush();
  };
  // An index loop over an array: for-of would make an iterator result per frame.
  if (Array.isArray(frames)) for (let i = 0; i < frames.length; i++) read(frames[i] as ExpectFrame);
  else for (const frame of frames) read(frame);
  flush();
  return finishRunners(panel, runners, startMs, last, options);
}

/**
 * `expectTimelines` over columns, giving the event loop a turn whenever `sliceMs` (default 8) of
 * work has gone by: elements are computed one at a time, so a server computing a panel-hour (about
 * two thirds of a second) never holds a live run's replay, or any other request, for longer than
 * about one element. `turn` waits for the next turn (default: a zero timeout; the server passes
 * setImmediate). Same timelines as `expectTimelines`.
 */
export async function expectTimelinesInTurns(
  panel: Pick<Panel, "id" | "elements">,
  recording: RecordingColumns,
  options: ExpectOptions & TurnOptions = {},
): Promise<ExpectedTimelines> {
  const slices = workSlices(options);
  const steps = playColumns(panel, recording, options);
  for (;;) {
    const step = steps.next();
    if (step.done) return step.value;
    if (slices.due()) await slices.take();
  }
}

function compileRunners(panel: Pick<Panel, "elements">, options: ExpectOptions): Runner[] {
  const build = buildOf(options, new MemoTables());
  return panel.elements.map((el) => {
    if (el.kind !== "switch" || !el.springReturn) return compileElement(el, build);
    // Only a spring-loaded switch has a delay: an actor on a clock of its own.
    const clock = new SimulatedClock();
    return { ...compileElement(el, { ...build, clock }), clock };
  });
}

/**
 * The whole recording is in columns already: each element plays its channels once, start to end,
 * and is finished at once (its track buffers go back for the next element). Yields after each
 * element; elements are independent, so the order changes nothing.
 */
function* playColumns(panel: Pick<Panel, "id" | "elements">, recording: RecordingColumns, options: ExpectOptions): Generator<void, ExpectedTimelines> {
  const runners = compileRunners(panel, options);
  const startMs = 0;
  const last = Math.max(startMs, recording.lastT);
  const endMs = Math.max(options.endMs ?? last, last);
  for (const runner of runners) {
    runner.start(startMs);
    new ElementFeed(runner, recording).play();
    finishRunner(runner, endMs);
    yield;
  }
  return { panelId: panel.id, startMs, endMs, elements: runners.map((r) => r.timeline) };
}

/** Runs an element's clock to the end and closes its tracks. */
function finishRunner(runner: Runner, endMs: number): void {
  if (runner.clock) advanceClockTo(runner.clock, endMs, runner.afterTimers);
  runner.finish(endMs);
  runner.stop();
}

/** Runs every element's clock to the end, closes its tracks: the timelines. */
function finishRunners(panel: Pick<Panel, "id">, runners: Runner[], startMs: number, last: number, options: ExpectOptions): ExpectedTimelines {
  const endMs = Math.max(options.endMs ?? last, last);
  for (const runner of runners) finishRunner(runner, endMs);
  return { panelId: panel.id, startMs, endMs, elements: runners.map((r) => r.timeline) };
}

/**
 * The straightforward engine: every machine an xstate actor on one simulated clock for the panel,
 * each frame dispatched to the listeners of the channels it lists. Slower, kept as the reference
 * the fast path is checked against (tests/unit/expect/fast-path.test.ts).
 */
export function expectTimelinesStepwise(panel: Pick<Panel, "id" | "elements">, frames: Iterable<ExpectFrame>, options: ExpectOptions = {}): ExpectedTimelines {
  const build = buildOf(options, null);
  const clock = build.clock;
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
  const lamp = new DiscreteTrackBuilder<LampShows>(lampKey);
  const mode = new DiscreteTrackBuilder<string>(textKey);
  timeline.tracks.lamp = lamp.changes;
  if (withMode) timeline.tracks.mode = mode.changes;
  const listeners: [string, Listener][] = [];
  let level = 255;
  const period = out.flash?.periodMs ?? 0;
  const drive = out.drive;

  let read: () => { name: string; shows: LampShows };
  let cell: MachineCell;
  if (drive.mode === "condition") {
    const a = cellOf(build, lampMachine, { alwaysPowered: power === undefined, flashes: out.flash !== undefined, alwaysFlashWhenLit: out.flash?.when === undefined });
    cell = a;
    read = () => {
      const name = a.snapshot.value as string;
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
    const a = cellOf(build, latchMachine, { cautionCount: drive.cautions.length, alwaysPowered: power === undefined });
    cell = a;
    read = () => {
      const snapshot = a.snapshot;
      const value = snapshot.value as { supply: string; alert: string };
      const supply = value.supply;
      const alerting = value.alert === "alerting";
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
  function send(event: CellEvent, t: number) {
    cell.send(event);
    record(t);
  }
  return { listeners, record, stop: () => cell.stop() };
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
      const track = new DiscreteTrackBuilder<BreakerShows>(textKey);
      timeline.tracks.breaker = track.changes;
      const actor = cellOf(build, breakerMachine);
      const record = (t: number) => {
        const shows = actor.snapshot.value as BreakerShows;
        track.set(t, shows, shows);
      };
      const listeners: [string, Listener][] = [watch(el.trip, (on, t) => (actor.send({ type: "TRIP", on }), record(t)))];
      if (el.pulled) listeners.push(watch(el.pulled, (on, t) => (actor.send({ type: "PULL", on }), record(t))));
      return { timeline, listeners, start: record, finish: () => {}, stop: () => actor.stop() };
    }
    case "switch":
    case "lever": {
      const timeline = newTimeline(el);
      const position = new DiscreteTrackBuilder<string>(textKey);
      const mode = new DiscreteTrackBuilder<string>(textKey);
      timeline.tracks.position = position.changes;
      timeline.tracks.mode = mode.changes;
      const resolve = positionResolver(el.position, el.positions);
      let lastName: string = UNKNOWN_POSITION;
      const listeners: [string, Listener][] = [];
      let actor: MachineCell;
      if (el.kind === "switch") {
        const input = { initial: UNKNOWN_POSITION, springFrom: el.springReturn?.from, springTo: el.springReturn?.to, holdMs: el.springReturn?.holdMs };
        // A spring-loaded switch has a delay: an actor on the clock (its own one on the fast path).
        actor = el.springReturn ? actorCell(switchMachine, build.clock, input) : cellOf(build, switchMachine, input);
      } else {
        const lever = cellOf(build, leverMachine, { initial: UNKNOWN_POSITION });
        actor = lever;
        if (el.lock) listeners.push(watch(el.lock, (on, t) => (lever.send({ type: "LOCK", on }), record(t))));
      }
      const record = (t: number) => {
        const snapshot = actor.snapshot;
        const at = (snapshot.context as { position: string }).position;
        position.set(t, at, at);
        const name = stateName(snapshot.value);
        mode.set(t, name, name);
      };
      listeners.unshift([
        el.position.channel,
        (value, t) => {
          const name = resolve(value);
          if (name === lastName) return;
          lastName = name;
          actor.send({ type: "POSITION", name });
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
      const pressed = new DiscreteTrackBuilder<boolean>(flagKey);
      timeline.tracks.pressed = pressed.changes;
      const actor = cellOf(build, buttonMachine);
      const record = (t: number) => {
        const down = actor.snapshot.value === "pressed";
        pressed.set(t, down, flagKey(down));
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
      const detents = new DiscreteTrackBuilder<number>(countKey);
      timeline.tracks.detents = detents.changes;
      // Fields, not closure variables: doubles in fields are not boxed on every write.
      const state = { started: false, previous: 0, turned: 0, count: 0 }; // turned: in the channel's (transformed) units
      const wrap = el.wrap;
      const perDetent = el.valuePerDetent;
      const onValue: Listener = (value, t) => {
        if (typeof value !== "number") return;
        const v = applyTransform(el.value.transform, value);
        if (state.started) {
          let delta = v - state.previous;
          if (wrap !== undefined) {
            delta = ((((delta + wrap / 2) % wrap) + wrap) % wrap) - wrap / 2;
          }
          state.turned += delta;
          const count = Math.round(state.turned / perDetent) + 0;
          if (count !== state.count) {
            state.count = count;
            detents.set(t, count, countKey(count));
          }
        }
        state.previous = v;
        state.started = true;
      };
      // onValue over a run of samples with the state in locals (the generic path boxed every
      // sample twice: reading it from the column, and passing it to applyTransform).
      const transform = el.value.transform;
      const run: BulkListener = (column, from, to) => {
        const { times, numbers, isOther } = column;
        let { started, previous, turned, count: shown } = state;
        for (let i = from; i < to; i++) {
          if (isOther[i] !== 0) continue;
          let v = numbers[i];
          if (transform !== undefined) {
            // applyTransform: the same arithmetic in the same order.
            v = v * transform.scale + transform.offset;
            if (transform.min !== undefined && v < transform.min) v = transform.min;
            if (transform.max !== undefined && v > transform.max) v = transform.max;
          }
          if (started) {
            let delta = v - previous;
            if (wrap !== undefined) delta = ((((delta + wrap / 2) % wrap) + wrap) % wrap) - wrap / 2;
            turned += delta;
            const count = Math.round(turned / perDetent) + 0;
            if (count !== shown) {
              shown = count;
              detents.set(times[i], count, countKey(count));
            }
          }
          previous = v;
          started = true;
        }
        state.started = started;
        state.previous = previous;
        state.turned = turned;
        state.count = shown;
      };
      return {
        timeline,
        listeners: [[el.value.channel, onValue]],
        bulk: { listener: onValue, run },
        start: (t) => detents.set(t, 0, countKey(0)),
        finish: () => {},
        stop: () => {},
      };
    }
  }
}

/**
 * Texts kept per readout, by the low bits of their digits key: a thousand covers a gauge's whole
 * range at one decimal, so a value sweeping back and forth formats each text once (with 64 slots
 * an hour at 60 Hz formatted about 366,000 texts, each a string kept by the track, and the garbage
 * collector's work grows with them).
 */
const TEXT_CACHE_SLOTS = 1024;

/**
 * A readout's per-sample state and work, in fields and methods (see PointerState for why). The text
 * depends only on the rounded digits and the sign (without a `map`), so a change of value that
 * keeps them is no change at all, and texts already made are kept in a small cache by those digits:
 * a value wandering around a rounding boundary would otherwise format the same two texts forever.
 */
class ReadoutState {
  formatted = "";
  lastKey = 0;
  hasKey = false;
  inT = 0;
  inValue = 0;
  private readonly cacheKeys = new Float64Array(TEXT_CACHE_SLOTS).fill(Number.NaN);
  private readonly cacheTexts: string[] = new Array<string>(TEXT_CACHE_SLOTS).fill("");
  private readonly factor: number;
  // The transform's parts as numbers (applyTransform, inlined: a double passed to a call the
  // compiler does not inline is boxed, and this ran once per readout per sample).
  private readonly hasTransform: boolean;
  private readonly scale: number;
  private readonly offset: number;
  private readonly hasMin: boolean;
  private readonly min: number;
  private readonly hasMax: boolean;
  private readonly max: number;

  constructor(
    private readonly format: ReadoutFormat,
    transform: Transform | undefined,
    private readonly record: (t: number) => void,
  ) {
    this.factor = 10 ** format.decimals;
    this.hasTransform = transform !== undefined;
    this.scale = transform?.scale ?? 1;
    this.offset = transform?.offset ?? 0;
    this.hasMin = transform?.min !== undefined;
    this.min = transform?.min ?? 0;
    this.hasMax = transform?.max !== undefined;
    this.max = transform?.max ?? 0;
  }

  /** One numeric sample, in inT and inValue. */
  numberIn(): void {
    let value = this.inValue;
    if (this.hasTransform) {
      // applyTransform: the same arithmetic in the same order.
      value = value * this.scale + this.offset;
      if (this.hasMin && value < this.min) value = this.min;
      if (this.hasMax && value > this.max) value = this.max;
    }
    this.inValue = value;
    if (this.format.map) {
      this.formatted = formatReadout(this.format, value);
      this.record(this.inT);
      return;
    }
    const key = (value < 0 ? -1 : 1) * Math.round(Math.abs(value) * this.factor);
    if (key === this.lastKey && this.hasKey) return;
    this.lastKey = key;
    this.hasKey = true;
    this.showKey();
  }

  /** Shows the transformed value in inValue, whose digits key is lastKey. */
  private showKey(): void {
    const key = this.lastKey;
    const slot = key & (TEXT_CACHE_SLOTS - 1);
    if (this.cacheKeys[slot] === key) this.formatted = this.cacheTexts[slot];
    else {
      this.formatted = formatReadout(this.format, this.inValue);
      this.cacheKeys[slot] = key;
      this.cacheTexts[slot] = this.formatted;
    }
    this.record(this.inT);
  }

  /** A text or boolean sample. */
  other(v: BoundValue, t: number): void {
    this.hasKey = false;
    this.formatted = formatReadout(this.format, v);
    this.record(t);
  }

  /**
   * numberIn() and other() over a run of samples, with the per-sample part (transform, digits key,
   * comparison) in local variables: as fields, every sample's double was boxed (42 MB an hour for
   * 12 readouts). Fields are written only when the text may change.
   */
  run(column: ChannelColumn, from: number, to: number): void {
    if (this.format.map) {
      for (let i = from; i < to; i++) this.sampleAt(column, i);
      return;
    }
    const { times, numbers, isOther, others } = column;
    const { hasTransform, scale, offset, hasMin, min, hasMax, max, factor } = this;
    let lastKey = this.lastKey;
    let hasKey = this.hasKey;
    for (let i = from; i < to; i++) {
      if (isOther[i] !== 0) {
        this.other(others[i] as BoundValue, times[i]);
        hasKey = false;
        continue;
      }
      let value = numbers[i];
      if (hasTransform) {
        value = value * scale + offset;
        if (hasMin && value < min) value = min;
        if (hasMax && value > max) value = max;
      }
      const key = (value < 0 ? -1 : 1) * Math.round(Math.abs(value) * factor);
      if (key === lastKey && hasKey) continue;
      lastKey = key;
      hasKey = true;
      this.lastKey = key;
      this.hasKey = true;
      this.inT = times[i];
      this.inValue = value;
      this.showKey();
    }
  }

  private sampleAt(column: ChannelColumn, i: number): void {
    if (column.isOther[i] !== 0) this.other(column.others[i] as BoundValue, column.times[i]);
    else {
      this.inT = column.times[i];
      this.inValue = column.numbers[i];
      this.numberIn();
    }
  }
}

function readoutRunner(el: ReadoutElement, build: Build): Runner {
  const timeline = newTimeline(el);
  const text = new DiscreteTrackBuilder<string>(textKey);
  const mode = new DiscreteTrackBuilder<string>(textKey);
  timeline.tracks.text = text.changes;
  timeline.tracks.mode = mode.changes;
  const actor = cellOf(build, readoutMachine, { alwaysPowered: el.power === undefined });
  const allLit = "8".repeat(el.format.width ?? 0);
  const record = (t: number) => {
    const name = actor.snapshot.value as string;
    const shows = name === "showing" ? state.formatted : name === "testing" ? allLit : "";
    text.set(t, shows, shows);
    mode.set(t, name, name);
  };
  const state = new ReadoutState(el.format, el.value.transform, record);
  const onValue: Listener = (v, t) => {
    if (typeof v === "number") {
      state.inT = t;
      state.inValue = v;
      state.numberIn();
    } else state.other(v, t);
  };
  const listeners: [string, Listener][] = [[el.value.channel, onValue]];
  if (el.power) listeners.push(watch(el.power, (on, t) => (actor.send({ type: "POWER", on }), record(t))));
  if (el.blankWhen) listeners.push(watch(el.blankWhen, (on, t) => (actor.send({ type: "BLANK", on }), record(t))));
  if (el.test) listeners.push(watch(el.test, (on, t) => (actor.send({ type: "TEST", on }), record(t))));
  return {
    timeline,
    listeners,
    bulk: { listener: onValue, run: (column, from, to) => state.run(column, from, to) },
    start: record,
    finish: () => {},
    stop: () => actor.stop(),
  };
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
  /** Input of sampleIn(): one sample of the value channel, in fields (see SlewFollower). */
  inT = 0;
  inValue = 0;

  constructor(
    readonly follower: SlewFollower,
    readonly angles: AngleComputer,
    readonly transform: Transform | undefined,
    readonly rampGap: number,
  ) {}

  /** One numeric sample of the value channel. */
  sampleIn(): void {
    const t = this.inT;
    const angles = this.angles;
    angles.value = this.transform ? applyTransform(this.transform, this.inValue) : this.inValue;
    angles.compute();
    const angle = angles.angle;
    const ramp = this.following && this.hasTarget && t - this.lastSampleT <= this.rampGap;
    this.target = angle;
    this.hasTarget = true;
    this.lastSampleT = t;
    if (this.following) {
      const follower = this.follower;
      follower.inT = t;
      follower.inAngle = angle + this.turnOffset;
      follower.inRamp = ramp;
      follower.feedIn();
    }
  }

  /**
   * sampleIn() over a run of samples (values that are not numbers skipped, as one by one), fused
   * into one loop with its state in local variables: pointer-loop.ts.
   */
  run(column: ChannelColumn, from: number, to: number): void {
    runPointerSamples(this, column, from, to);
  }
}

function pointerRunner(el: PointerElement, build: Build): Runner {
  const timeline = newTimeline(el);
  const flag = new DiscreteTrackBuilder<boolean>(flagKey);
  const mode = new DiscreteTrackBuilder<string>(textKey);
  timeline.tracks.flag = flag.changes;
  timeline.tracks.mode = mode.changes;
  const wrap = el.scale.kind === "full-circle";
  const line = new LinearTrackBuilder(build.options.angleResolutionDeg);
  // Filled in by finish (the track's arrays are made there); set now to keep the key order.
  const angleTrack = (timeline.angle = { t: line.t, angle: line.angle, wrap });
  const follower = new SlewFollower(line, el.maxSlewDegPerSec);
  const actor = cellOf(build, pointerMachine, { alwaysPowered: el.power === undefined });
  const park = parkAngleOf(el);
  // Full-circle pointers travel in unwrapped degrees so motion through 360 stays a straight line.
  const state = new PointerState(follower, new AngleComputer(el.scale), el.value.transform, build.options.rampGapMs);

  const parkTarget = (): number => {
    if (!wrap) return park;
    const p = follower.at.position;
    return p + shortestArc(normalizeAngle(p), park);
  };
  const record = (t: number) => {
    const name = actor.snapshot.value as string;
    mode.set(t, name, name);
    const showsFlag = name === "parked" && el.offFlag;
    flag.set(t, showsFlag, flagKey(showsFlag));
  };

  const onValue: Listener = (value, t) => {
    if (typeof value !== "number") return;
    state.inT = t;
    state.inValue = value;
    state.sampleIn();
  };
  const listeners: [string, Listener][] = [[el.value.channel, onValue]];
  if (el.power) {
    listeners.push(
      watch(el.power, (on, t) => {
        actor.send({ type: "POWER", on });
        state.following = actor.snapshot.value === "following";
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
    bulk: { listener: onValue, run: (column, from, to) => state.run(column, from, to) },
    start: (t) => {
      state.following = actor.snapshot.value === "following";
      follower.start(t, park);
      record(t);
    },
    finish: (t) => {
      follower.finish(t);
      angleTrack.t = line.t;
      angleTrack.angle = line.angle;
    },
    stop: () => actor.stop(),
  };
}
