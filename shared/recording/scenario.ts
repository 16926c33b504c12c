import seedrandom from "seedrandom";
import { z } from "zod";
import { channelList, checkChannelValue, type ChannelDefinition, type ChannelValue } from "./channels";
import { formatPath } from "./errors";
import { FrameSequencer, type Frame } from "./frames";
import { RECORDING_FORMAT, RECORDING_VERSION, type RecordingHeader } from "./recording-file";

/**
 * Scenario: a short JSON script that composes a recording without flying. Each channel has a
 * track of steps run one after another (set, hold, ramp, pulse, oscillate, noise, repeat); a step
 * may jump ahead to an absolute time with `at`. Generation is a pure function of the script, so
 * the same scenario gives identical frames on the server, in the browser and in tests. See
 * docs/scenario-format.md.
 */

export const SCENARIO_FORMAT = "panelproof-scenario";
export const SCENARIO_VERSION = 1;
export const STEP_ACTIONS = ["set", "hold", "ramp", "pulse", "oscillate", "noise", "repeat"] as const;
export type StepAction = (typeof STEP_ACTIONS)[number];
/** Generation must stay small enough to run as the builder types. */
export const SCENARIO_MAX_DURATION_MS = 24 * 60 * 60 * 1000;
export const SCENARIO_MAX_SAMPLES = 2_000_000;
export const SCENARIO_MAX_REPEAT = 10_000;
export const SCENARIO_DEFAULT_DECIMALS = 3;

export interface ScenarioIssue {
  /** Where, as a JSON path into the scenario: `tracks[2].steps[3].ramp.to`. */
  path: string;
  message: string;
}

export class ScenarioError extends Error {
  readonly issues: ScenarioIssue[];
  constructor(issues: ScenarioIssue[]) {
    super(issues.map((i) => (i.path ? `${i.path}: ${i.message}` : i.message)).join("\n"));
    this.name = "ScenarioError";
    this.issues = issues;
  }
}

const required = (what: string) => (issue: { input?: unknown }) => (issue.input === undefined ? "is required" : what);
const number = () => z.number({ error: required("must be a number") });
const wholeMs = () =>
  z
    .number({ error: required("must be a whole number of milliseconds") })
    .int("must be a whole number of milliseconds")
    .positive("must be more than 0 ms")
    .max(SCENARIO_MAX_DURATION_MS, `must be at most ${SCENARIO_MAX_DURATION_MS} ms`);

const rampSchema = z.strictObject({ from: number().optional(), to: number(), durationMs: wholeMs() });
const pulseSchema = z.strictObject({ value: z.unknown(), durationMs: wholeMs() });
const oscillateSchema = z.strictObject({
  wave: z.enum(["sine", "square"], { error: required("must be sine or square") }),
  periodMs: wholeMs().min(2, "must be at least 2 ms"),
  amplitude: number().nonnegative("must not be negative"),
  center: number().optional(),
  durationMs: wholeMs(),
});
const noiseSchema = z.strictObject({
  amplitude: number().nonnegative("must not be negative"),
  seed: z.union([z.string().min(1), z.number().int()], { error: required("must be a string or a whole number") }),
  center: number().optional(),
  durationMs: wholeMs(),
});
const repeatSchema = z.strictObject({
  times: z
    .number({ error: required("must be a whole number") })
    .int("must be a whole number")
    .min(1, "must be at least 1")
    .max(SCENARIO_MAX_REPEAT, `must be at most ${SCENARIO_MAX_REPEAT}`),
  steps: z.array(z.unknown(), { error: required("must be a list of steps") }).min(1, "must hold at least one step"),
});

const scenarioTop = z.strictObject({
  format: z.literal(SCENARIO_FORMAT, { error: `must be "${SCENARIO_FORMAT}"` }),
  version: z.literal(SCENARIO_VERSION, { error: `must be ${SCENARIO_VERSION} (the version this build reads)` }),
  name: z.string({ error: required("must be a string") }).min(1, "must not be empty").max(120, "must be at most 120 characters"),
  description: z.string({ error: "must be a string" }).max(4000, "must be at most 4000 characters").optional(),
  airframe: z.string({ error: required("must be a string") }).min(1, "must not be empty").max(120, "must be at most 120 characters"),
  sampleRateHz: number().positive("must be more than 0").max(1000, "must be at most 1000 (one sample per ms)"),
  decimals: z.number({ error: "must be a whole number" }).int("must be a whole number").min(0).max(9).optional(),
  durationMs: wholeMs().optional(),
  channels: channelList.refine((cs) => cs.length > 0, "must list at least one channel"),
  initial: z.record(z.string(), z.unknown(), { error: required("must be an object of channel values") }),
  tracks: z.array(
    z.strictObject({
      channel: z.string({ error: required("must be a channel name") }),
      steps: z.array(z.unknown(), { error: required("must be a list of steps") }),
    }),
    { error: required("must be a list of tracks") },
  ),
});

type RampArgs = z.infer<typeof rampSchema>;
type OscillateArgs = z.infer<typeof oscillateSchema>;
type NoiseArgs = z.infer<typeof noiseSchema>;

export type ScenarioStep = { path: string; at?: number } & (
  | { action: "set"; value: ChannelValue }
  | { action: "hold"; durationMs: number }
  | { action: "ramp"; args: RampArgs }
  | { action: "pulse"; value: ChannelValue; durationMs: number }
  | { action: "oscillate"; args: OscillateArgs }
  | { action: "noise"; args: NoiseArgs }
  | { action: "repeat"; times: number; steps: ScenarioStep[] }
);

export interface Scenario {
  name: string;
  description?: string;
  airframe: string;
  sampleRateHz: number;
  decimals: number;
  durationMs?: number;
  channels: ChannelDefinition[];
  initial: Record<string, ChannelValue>;
  tracks: { channel: ChannelDefinition; path: string; steps: ScenarioStep[] }[];
}

function pathOf(base: string, key: PropertyKey[]): string {
  const rest = formatPath(key);
  if (!base) return rest;
  if (!rest) return base;
  return rest.startsWith("[") ? base + rest : `${base}.${rest}`;
}

function zodIssues(error: z.ZodError, base: string): ScenarioIssue[] {
  return error.issues.flatMap((issue) => {
    if (issue.code === "unrecognized_keys") {
      return issue.keys.map((key) => ({ path: pathOf(base, [...issue.path, key]), message: "unknown field" }));
    }
    return [{ path: pathOf(base, issue.path), message: issue.message }];
  });
}

const NUMBER_ONLY: ReadonlySet<StepAction> = new Set(["ramp", "oscillate", "noise"]);

function parseSteps(
  raw: unknown[],
  base: string,
  channel: ChannelDefinition,
  insideRepeat: boolean,
  issues: ScenarioIssue[],
): ScenarioStep[] {
  const steps: ScenarioStep[] = [];
  raw.forEach((rawStep, index) => {
    const path = `${base}[${index}]`;
    const step = parseStep(rawStep, path, channel, insideRepeat, issues);
    if (step) steps.push(step);
  });
  return steps;
}

function parseStep(
  raw: unknown,
  path: string,
  channel: ChannelDefinition,
  insideRepeat: boolean,
  issues: ScenarioIssue[],
): ScenarioStep | null {
  const before = issues.length;
  if (typeof raw !== "object" || raw === null || Array.isArray(raw)) {
    issues.push({ path, message: `must be a step object with one of ${STEP_ACTIONS.join(", ")}` });
    return null;
  }
  const record = raw as Record<string, unknown>;
  const actions = Object.keys(record).filter((k): k is StepAction => (STEP_ACTIONS as readonly string[]).includes(k));
  for (const key of Object.keys(record)) {
    if (key !== "at" && !actions.includes(key as StepAction)) {
      issues.push({ path: `${path}.${key}`, message: `unknown step field; a step is one of ${STEP_ACTIONS.join(", ")}` });
    }
  }
  if (actions.length !== 1) {
    issues.push({
      path,
      message:
        actions.length === 0
          ? `a step needs one of ${STEP_ACTIONS.join(", ")}`
          : `a step has one action, found ${actions.join(" and ")}`,
    });
    return null;
  }
  const action = actions[0];
  let at: number | undefined;
  if ("at" in record) {
    if (insideRepeat) issues.push({ path: `${path}.at`, message: "at is not allowed inside repeat (each pass would jump back)" });
    else if (typeof record.at !== "number" || !Number.isInteger(record.at) || record.at < 0) {
      issues.push({ path: `${path}.at`, message: "must be a whole, non-negative number of milliseconds" });
    } else at = record.at;
  }
  if (NUMBER_ONLY.has(action) && channel.kind !== "number") {
    issues.push({ path: `${path}.${action}`, message: `${action} needs a number channel; ${channel.name} is ${channel.kind}` });
    return null;
  }
  const arg = record[action];
  const here = `${path}.${action}`;
  const checkValue = (value: unknown, where: string): value is ChannelValue => {
    const problem = checkChannelValue(channel, value);
    if (problem) issues.push({ path: where, message: problem.why });
    return !problem;
  };
  const parse = <T>(schema: z.ZodType<T>): T | null => {
    const result = schema.safeParse(arg);
    if (result.success) return result.data;
    issues.push(...zodIssues(result.error, here));
    return null;
  };
  let step: ScenarioStep | null = null;
  switch (action) {
    case "set":
      if (checkValue(arg, here)) step = { path, at, action, value: arg };
      break;
    case "hold": {
      const durationMs = parse(wholeMs());
      if (durationMs !== null) step = { path, at, action, durationMs };
      break;
    }
    case "ramp": {
      const args = parse(rampSchema);
      if (args) {
        if (args.from !== undefined) checkValue(args.from, `${here}.from`);
        checkValue(args.to, `${here}.to`);
        step = { path, at, action, args };
      }
      break;
    }
    case "pulse": {
      const args = parse(pulseSchema);
      if (args && checkValue(args.value, `${here}.value`)) {
        step = { path, at, action, value: args.value as ChannelValue, durationMs: args.durationMs };
      }
      break;
    }
    case "oscillate": {
      const args = parse(oscillateSchema);
      if (args) step = { path, at, action, args };
      break;
    }
    case "noise": {
      const args = parse(noiseSchema);
      if (args) step = { path, at, action, args };
      break;
    }
    case "repeat": {
      const args = parse(repeatSchema);
      // Inner steps are checked even when `times` is wrong, so the editor shows every issue at once.
      const rawInner = (arg as { steps?: unknown } | null)?.steps;
      const inner = Array.isArray(rawInner) ? parseSteps(rawInner, `${here}.steps`, channel, true, issues) : [];
      if (args) step = { path, at, action, times: args.times, steps: inner };
      break;
    }
  }
  return issues.length === before ? step : null;
}

/** Validates a scenario (object or JSON text), collecting every issue with its path. */
export function parseScenario(input: unknown): Scenario {
  let raw = input;
  if (typeof input === "string") {
    try {
      raw = JSON.parse(input);
    } catch (error) {
      throw new ScenarioError([{ path: "", message: `malformed JSON: ${(error as Error).message}` }]);
    }
  }
  const top = scenarioTop.safeParse(raw);
  if (!top.success) throw new ScenarioError(zodIssues(top.error, ""));
  const data = top.data;
  const issues: ScenarioIssue[] = [];
  const byName = new Map(data.channels.map((c) => [c.name, c]));

  const initial: Record<string, ChannelValue> = {};
  for (const channel of data.channels) {
    const path = pathOf("initial", [channel.name]);
    if (!(channel.name in data.initial)) {
      issues.push({ path, message: "every channel needs an initial value" });
      continue;
    }
    const problem = checkChannelValue(channel, data.initial[channel.name]);
    if (problem) issues.push({ path, message: problem.why });
    else initial[channel.name] = data.initial[channel.name] as ChannelValue;
  }
  for (const name of Object.keys(data.initial)) {
    if (!byName.has(name)) issues.push({ path: pathOf("initial", [name]), message: "not a channel of this scenario" });
  }

  const trackOf = new Map<string, number>();
  const tracks: Scenario["tracks"] = [];
  data.tracks.forEach((track, index) => {
    const path = `tracks[${index}]`;
    const channel = byName.get(track.channel);
    if (!channel) {
      issues.push({ path: `${path}.channel`, message: `${JSON.stringify(track.channel)} is not a channel of this scenario` });
      return;
    }
    const earlier = trackOf.get(track.channel);
    if (earlier !== undefined) {
      issues.push({ path: `${path}.channel`, message: `${track.channel} already has a track (tracks[${earlier}])` });
      return;
    }
    trackOf.set(track.channel, index);
    tracks.push({ channel, path, steps: parseSteps(track.steps, `${path}.steps`, channel, false, issues) });
  });
  if (issues.length) throw new ScenarioError(issues);
  return {
    name: data.name,
    description: data.description,
    airframe: data.airframe,
    sampleRateHz: data.sampleRateHz,
    decimals: data.decimals ?? SCENARIO_DEFAULT_DECIMALS,
    durationMs: data.durationMs,
    channels: data.channels,
    initial,
    tracks,
  };
}

interface TrackRun {
  channel: ChannelDefinition;
  cursor: number;
  current: ChannelValue;
  events: [number, ChannelValue][];
}

class Generator {
  samples = 0;
  readonly issues: ScenarioIssue[] = [];
  private readonly scale: number;

  constructor(private readonly scenario: Scenario) {
    this.scale = 10 ** scenario.decimals;
  }

  round(value: number): number {
    // `+ 0` turns -0 into 0 so files and comparisons never see a negative zero.
    return Math.round(value * this.scale) / this.scale + 0;
  }

  /** Instants of the global sample grid inside [from, to), or (from, to) when `open`. */
  grid(from: number, to: number, open: boolean, path: string): number[] {
    const rate = this.scenario.sampleRateHz;
    const out: number[] = [];
    for (let i = Math.floor((from * rate) / 1000); ; i++) {
      const t = Math.round((i * 1000) / rate);
      if (t >= to) break;
      if (t < from || (open && t === from)) continue;
      out.push(t);
    }
    this.samples += out.length;
    if (this.samples > SCENARIO_MAX_SAMPLES) {
      this.issues.push({
        path,
        message: `the scenario makes more than ${SCENARIO_MAX_SAMPLES} samples; lower sampleRateHz or shorten it`,
      });
      throw new StopGeneration();
    }
    return out;
  }

  checkBand(run: TrackRun, center: number, amplitude: number, path: string): void {
    const channel = run.channel;
    if (channel.kind !== "number") return;
    const low = center - amplitude;
    const high = center + amplitude;
    if ((channel.min !== undefined && low < channel.min) || (channel.max !== undefined && high > channel.max)) {
      this.issues.push({
        path,
        message: `center ${center} ± amplitude ${amplitude} leaves the channel's range ${channel.min ?? "-∞"} to ${channel.max ?? "∞"}`,
      });
      throw new StopGeneration();
    }
  }

  run(steps: ScenarioStep[], run: TrackRun): void {
    for (const step of steps) {
      if (step.at !== undefined) {
        if (step.at < run.cursor) {
          this.issues.push({
            path: `${step.path}.at`,
            message: `${step.at} ms is before the end of the previous step (${run.cursor} ms)`,
          });
          throw new StopGeneration();
        }
        run.cursor = step.at;
      }
      this.step(step, run);
      if (run.cursor > SCENARIO_MAX_DURATION_MS) {
        this.issues.push({ path: step.path, message: `the track runs past ${SCENARIO_MAX_DURATION_MS} ms` });
        throw new StopGeneration();
      }
    }
  }

  private step(step: ScenarioStep, run: TrackRun): void {
    const start = run.cursor;
    const emit = (t: number, value: ChannelValue) => run.events.push([t, value]);
    switch (step.action) {
      case "set":
        emit(start, step.value);
        run.current = step.value;
        return;
      case "hold":
        run.cursor += step.durationMs;
        return;
      case "pulse": {
        emit(start, step.value);
        emit(start + step.durationMs, run.current);
        run.cursor += step.durationMs;
        return;
      }
      case "ramp": {
        const { to, durationMs } = step.args;
        const from = step.args.from ?? (run.current as number);
        if (step.args.from === undefined) this.checkBand(run, from, 0, `${step.path}.ramp`);
        emit(start, this.round(from));
        for (const t of this.grid(start, start + durationMs, true, step.path)) {
          emit(t, this.round(from + ((to - from) * (t - start)) / durationMs));
        }
        emit(start + durationMs, this.round(to));
        run.current = to;
        run.cursor += durationMs;
        return;
      }
      case "oscillate": {
        const { wave, periodMs, amplitude, durationMs } = step.args;
        const center = step.args.center ?? (run.current as number);
        this.checkBand(run, center, amplitude, `${step.path}.oscillate.amplitude`);
        const end = start + durationMs;
        if (wave === "sine") {
          for (const t of this.grid(start, end, false, step.path)) {
            emit(t, this.round(center + amplitude * Math.sin((2 * Math.PI * (t - start)) / periodMs)));
          }
        } else {
          // A square wave changes only at its edges: emit those, not every sample.
          for (let k = 0; ; k++) {
            const t = Math.round(start + (k * periodMs) / 2);
            if (t >= end) break;
            emit(t, this.round(k % 2 === 0 ? center + amplitude : center - amplitude));
          }
        }
        emit(end, this.round(center));
        run.current = this.round(center);
        run.cursor = end;
        return;
      }
      case "noise": {
        const { amplitude, seed, durationMs } = step.args;
        const center = step.args.center ?? (run.current as number);
        this.checkBand(run, center, amplitude, `${step.path}.noise.amplitude`);
        const random = seedrandom(String(seed));
        const end = start + durationMs;
        for (const t of this.grid(start, end, false, step.path)) {
          emit(t, this.round(center + amplitude * (2 * random() - 1)));
        }
        emit(end, this.round(center));
        run.current = this.round(center);
        run.cursor = end;
        return;
      }
      case "repeat":
        for (let pass = 0; pass < step.times; pass++) this.run(step.steps, run);
        return;
    }
  }
}

class StopGeneration extends Error {}

export interface GeneratedRecording {
  scenario: Scenario;
  header: RecordingHeader;
  frames: Frame[];
}

/** Deterministic: the same scenario always yields the same header and frames. */
export function generateScenario(input: unknown): GeneratedRecording {
  const scenario = parseScenario(input);
  const generator = new Generator(scenario);
  const runs: TrackRun[] = [];
  try {
    for (const track of scenario.tracks) {
      const run: TrackRun = { channel: track.channel, cursor: 0, current: scenario.initial[track.channel.name], events: [] };
      generator.run(track.steps, run);
      runs.push(run);
    }
  } catch (error) {
    if (!(error instanceof StopGeneration)) throw error;
  }
  const trackEnd = Math.max(0, ...runs.map((r) => r.cursor));
  if (scenario.durationMs !== undefined && scenario.durationMs < trackEnd) {
    generator.issues.push({ path: "durationMs", message: `the tracks run to ${trackEnd} ms, longer than durationMs` });
  }
  if (generator.issues.length) throw new ScenarioError(generator.issues);

  // Merge every track by time; at one instant a later event of a track replaces an earlier one.
  const byTime = new Map<number, Map<string, ChannelValue>>();
  byTime.set(0, new Map(Object.entries(scenario.initial)));
  runs.forEach((run, index) => {
    for (const [t, value] of run.events) {
      // Rounding to `decimals` can nudge a value past a bound that is finer than the rounding.
      const problem = checkChannelValue(run.channel, value);
      if (problem) throw new ScenarioError([{ path: `tracks[${index}]`, message: `generates ${problem.why}` }]);
      let slot = byTime.get(t);
      if (!slot) byTime.set(t, (slot = new Map()));
      slot.set(run.channel.name, value);
    }
  });
  const sequencer = new FrameSequencer();
  const frames: Frame[] = [];
  for (const t of [...byTime.keys()].sort((a, b) => a - b)) {
    const frame = sequencer.accept(t, Object.fromEntries(byTime.get(t)!), {});
    if (frame) frames.push(frame);
  }
  const last = sequencer.finish();
  if (last) frames.push(last);

  const notes = [`Generated from scenario "${scenario.name}".`, scenario.description].filter(Boolean).join(" ");
  const header: RecordingHeader = {
    format: RECORDING_FORMAT,
    version: RECORDING_VERSION,
    airframe: scenario.airframe,
    channels: scenario.channels,
    notes,
    source: "scenario",
    sampleRateHz: scenario.sampleRateHz,
    durationMs: Math.max(trackEnd, scenario.durationMs ?? 0),
  };
  return { scenario, header, frames };
}
