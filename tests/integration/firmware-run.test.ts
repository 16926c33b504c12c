import { readFileSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { buildFirmware, EmulatedBoard, FIRMWARE_DIR, type FirmwareVariant } from "../../firmware/sim/emulated-board";
import { valueToAngle } from "../../shared/elements/scale";
import { stepsToAngle } from "../../shared/elements/scale/motor";
import { checkPanelChannels } from "../../shared/panel/channel-check";
import { demoChannels } from "../../shared/panel/demo/airframe";
import { panelChannels, parsePanel, type Panel } from "../../shared/panel/schema";
import { generateScenario } from "../../shared/recording/scenario";
import { makeAirframe, startBench, type Bench } from "./recordings-support";

/**
 * The real firmware as a panel in a real bench run: the bench-panel example built for an
 * ATmega2560, running on simavr behind a pseudo-terminal (firmware/sim/panel-sim.c), linked to
 * the bench as a serial panel (the bench opens the pty, identifies the board and replays), with
 * the demo recording recordings/demo-bench-panel-check.scenario.json. The run's results come from
 * the bench's own judging of what the board reported; nothing here judges.
 *
 * The switches and the breaker's pull are the builder's hand: the test moves the emulated
 * contacts at the instants the recording moves them, as a builder follows the script on a real
 * bench. Speed 1: the board keeps real time (its needle, flashing and debouncing are real).
 */

const SKETCH = path.join(FIRMWARE_DIR, "examples/bench-panel/bench-panel.ino");
const DEFINITION = path.join(FIRMWARE_DIR, "examples/bench-panel/bench-panel.panel.json");
const SCENARIO = path.resolve(FIRMWARE_DIR, "../recordings/demo-bench-panel-check.scenario.json");

const definitionJson: unknown = JSON.parse(readFileSync(DEFINITION, "utf8"));
const scenarioJson = JSON.parse(readFileSync(SCENARIO, "utf8")) as { name: string; channels: unknown[]; durationMs: number };

let bench: Bench;
let base: string;
let recordingId: string;
let panelId: string;
let definition: Panel;

/** One number from the sketch's source (`const uint32_t kAccel = 6000;`). */
function sketchConstant(source: string, name: string): number {
  const m = new RegExp(`\\b${name}\\s*=\\s*(\\d+)`).exec(source);
  if (!m) throw new Error(`no ${name} in the sketch`);
  return Number(m[1]);
}

/**
 * The builder's hand: where each input contact must be for the recording's switch and breaker
 * positions, from the generated frames. A contact to ground reads 0 when closed (the sketch's
 * wiring): BATTERY on closes PC0; LANDING LIGHTS taxi closes PC1, land closes PC2; the breaker's
 * contact PC3 opens while it is pulled.
 */
function handMoves(): { atMs: number; pin: string; level: 0 | 1 }[] {
  const frames = generateScenario(JSON.parse(readFileSync(SCENARIO, "utf8"))).frames;
  const moves: { atMs: number; pin: string; level: 0 | 1 }[] = [];
  for (const frame of frames) {
    if (frame.t === 0) continue; // the first instant is how the board sits at power-up
    const v = frame.v;
    if ("elec.master" in v) moves.push({ atMs: frame.t, pin: "C0", level: v["elec.master"] ? 0 : 1 });
    if ("lights.landing" in v) {
      moves.push({ atMs: frame.t, pin: "C1", level: v["lights.landing"] === "TAXI" ? 0 : 1 });
      moves.push({ atMs: frame.t, pin: "C2", level: v["lights.landing"] === "LAND" ? 0 : 1 });
    }
    if ("cb.pulled.pitot_heat" in v) moves.push({ atMs: frame.t, pin: "C3", level: v["cb.pulled.pitot_heat"] ? 1 : 0 });
  }
  return moves;
}

async function waitFor<T>(what: string, get: () => Promise<T>, ok: (v: T) => boolean, timeoutMs = 20_000): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const v = await get();
    if (ok(v)) return v;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}: ${JSON.stringify(v).slice(0, 800)}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

const detail = async (runId: string) => (await bench.visitors.viewer.get(`${base}/runs/${runId}`)).body;
const control = (runId: string, body: unknown) => bench.visitors.builder.post(`${base}/runs/${runId}/control`, body);

/**
 * Starts the emulated board with the given build, links it to a new serial run, replays the demo
 * recording at speed 1 with the hand moves, and answers the finished run's detail.
 */
async function runOnBoard(variant: FirmwareVariant, name: string) {
  const board = await EmulatedBoard.start(variant, { ownLink: false });
  const timers: NodeJS.Timeout[] = [];
  try {
    // The needle homes against its stop for about 0.85 s after power-up; until then the board
    // cannot tell where it is, and the bench would count those reports as "cannot_tell".
    await waitFor("the board to power up and home its needle", () => board.state(), (s) => s.ms >= 1000, 10_000);
    const made = await bench.visitors.builder.post(`${base}/runs`, { recordingId, name, speed: 1, links: [{ kind: "serial", panelId, path: board.ptyPath, baud: 115_200 }] });
    expect(made.status, JSON.stringify(made.body)).toBe(201);
    const runId = made.body.id as string;
    expect((await control(runId, { action: "pause" })).status).toBe(200); // opens the port; the bench identifies the board
    await waitFor("the serial link to come up", () => detail(runId), (d) => d.links.every((l: { connected: boolean }) => l.connected));
    const played = await control(runId, { action: "play" });
    expect(played.status, JSON.stringify(played.body)).toBe(200);
    // Play has started by the time its answer is here: moves are timed from now, so the hand is
    // never early (a few milliseconds late at most, well inside the switches' 200 ms budget).
    const playedAt = performance.now();
    for (const move of handMoves()) {
      timers.push(setTimeout(() => board.setPin(move.pin, move.level), Math.max(0, playedAt + move.atMs - performance.now())));
    }
    const done = await waitFor("the run to finish and be judged", () => detail(runId), (d) => d.state === "finished" && d.elements.length > 0, scenarioJson.durationMs + 15_000);
    const pins = await board.state();
    return { runId, done, behindMs: pins.worstBehindMs };
  } finally {
    timers.forEach(clearTimeout);
    await board.stop();
  }
}

beforeAll(async () => {
  // Builds the example's variants and the harness; fails (never skips) with what to install.
  buildFirmware();
  bench = await startBench();
  base = `/api/workshops/${bench.workshopId}`;
  // The demo airframe's catalogue, as `npm start` seeds it.
  const airframeId = await makeAirframe(bench, "Marlin TX-2 (bench)", demoChannels);
  const generated = await bench.visitors.owner.post(`${base}/recordings/from-scenario`, { name: scenarioJson.name, airframeId, scenario: scenarioJson });
  expect(generated.status, JSON.stringify(generated.body)).toBe(201);
  recordingId = generated.body.id as string;
  const made = await bench.visitors.owner.post(`${base}/panels`, { airframeId, definition: definitionJson });
  expect(made.status, JSON.stringify(made.body)).toBe(201);
  panelId = made.body.id as string;
  const parsed = parsePanel(definitionJson);
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.problems));
  definition = parsed.panel;
}, 600_000);

afterAll(async () => {
  await bench?.close();
});

describe("the bench-panel definition matches the sketch", () => {
  const sketch = readFileSync(SKETCH, "utf8");

  it("is a valid panel of the demo airframe, with the sketch's channel table in link order", () => {
    const parsed = parsePanel(definitionJson);
    expect(parsed.ok ? [] : parsed.problems).toEqual([]);
    if (!parsed.ok) return;
    expect(checkPanelChannels(parsed.panel, demoChannels)).toEqual([]);
    // The sketch's header lists its channel table ("//   3 annun.master_caution_lamp  enum ...").
    const table = [...sketch.matchAll(/^\/\/\s+(\d+) ([a-z0-9_]+\.[a-z0-9_.]+)\s/gm)].map((m) => ({ index: Number(m[1]), name: m[2] }));
    expect(table.map((c) => c.index)).toEqual(table.map((_, i) => i));
    expect(panelChannels(parsed.panel)).toEqual(table.map((c) => c.name));
    // The hello says who it is; the bench counts a hello from another panel as a fault.
    expect(/"bench-panel",\s*\n/.test(sketch)).toBe(true);
    expect(parsed.panel.id).toBe("bench-panel");
    expect(parsed.panel.elements.map((e) => e.kind)).toEqual(["lamp", "lamp", "lamp", "pointer", "readout", "switch", "switch", "breaker", "lamp"]);
  });

  it("says the needle's scale and motor as the sketch drives them", () => {
    const pointer = definition.elements[3];
    if (pointer.kind !== "pointer" || !pointer.motor) throw new Error("element 3 must be the stepper pointer");
    const stepsPerDegree = sketchConstant(sketch, "kStepsPerDegree");
    const sweepSteps = 270 * stepsPerDegree; // the sketch's kSweepSteps: 0..3000 psi over 270 degrees
    // Full scale: 3000 psi is 270 degrees on the dial and the sketch's last step on the motor.
    expect(valueToAngle(pointer.scale, 3000).angle).toBe(270);
    expect(stepsToAngle(pointer.motor, sweepSteps)).toBeCloseTo(270, 9);
    expect(stepsToAngle(pointer.motor, 1)).toBeCloseTo(1 / stepsPerDegree, 9);
    expect(pointer.motor.maxStepsPerSecond).toBe(sketchConstant(sketch, "kMaxSpeed"));
    expect(pointer.motor.accelerationStepsPerSecond2).toBe(sketchConstant(sketch, "kAccel"));
    // The expected needle's top speed is the motor's: 1,200 steps/s at 3 steps per degree.
    expect(pointer.maxSlewDegPerSec).toBe(sketchConstant(sketch, "kMaxSpeed") / stepsPerDegree);
    expect(definition.link).toEqual({ kind: "serial", options: { baud: 115200 } });
  });

  it("the demo recording moves every element the replay judges", () => {
    const frames = generateScenario(JSON.parse(readFileSync(SCENARIO, "utf8"))).frames;
    const moved = new Set(frames.filter((f) => f.t > 0).flatMap((f) => Object.keys(f.v)));
    expect([...panelChannels(definition)].filter((c) => !moved.has(c))).toEqual([]);
    // Its channels are the demo airframe's, kind for kind, so the seed can store it there.
    for (const c of scenarioJson.channels as { name: string; kind: string }[]) {
      expect(demoChannels.find((d) => d.name === c.name)?.kind, c.name).toBe(c.kind);
    }
  });
});

describe("the emulated board as a serial panel in a bench run", () => {
  it("replays the demo recording: every element passes, none without data, lag within each element's budget", async () => {
    const { runId, done, behindMs } = await runOnBoard("panel", "Firmware on the emulated board");
    const statuses = done.elements.map((e: { elementId: string; status: string; mismatchCount: number; noDataMs: number; lag: unknown }) => [e.elementId, e.status, e.mismatchCount, e.noDataMs, e.lag]);
    if (done.counts.pass !== 9) {
      const mismatches = (await bench.visitors.viewer.get(`${base}/runs/${runId}/mismatches`)).body;
      console.log(JSON.stringify({ statuses, mismatches: mismatches.slice(0, 20), links: done.links, behindMs }, null, 1));
    }
    // behindMs: how far the emulator fell behind the wall clock (a machine too busy to run a
    // 16 MHz board in real time makes every report late; it says so here when that happens).
    expect(done.counts, `${JSON.stringify(statuses)}; emulator behind ${behindMs} ms`).toEqual({ pass: 9, fail: 0, untested: 0, no_data: 0, placeholder: 0 });
    expect(done.mismatchCount).toBe(0);
    expect(done.positionMs).toBe(scenarioJson.durationMs);
    expect(done.elements.map((e: { elementId: string }) => e.elementId)).toEqual(definition.elements.map((e) => e.id));
    // The link stayed up all run, and nothing the board sent was refused.
    expect(done.links[0].kind).toBe("serial");
    expect(done.links[0].gaps).toEqual([]);
    expect(done.links[0].faults).toEqual({});
    // Lag (expected change to the board's first matching report) within each element's budget,
    // and measured on every discrete element the recording changes.
    const budgets = new Map(definition.elements.map((e) => [e.id, e.lagBudgetMs]));
    for (const e of done.elements as { elementId: string; kind: string; lag: { count: number; max: number | null }; noDataMs: number; reports: number }[]) {
      expect(e.reports, e.elementId).toBeGreaterThan(0);
      expect(e.noDataMs, e.elementId).toBe(0);
      if (e.kind === "pointer") continue; // pointers are judged by their window, not a lag figure (docs/judging.md)
      expect(e.lag.count, e.elementId).toBeGreaterThan(0);
      expect(e.lag.max!, e.elementId).toBeLessThanOrEqual(budgets.get(e.elementId)!);
    }
    expect(done.lag.count).toBeGreaterThan(20);
    expect(done.lag.p95).toBeLessThan(150);
    console.log(`[firmware-run] healthy board: lag p50 ${done.lag.p50} ms, p95 ${done.lag.p95} ms, max ${done.lag.max} ms over ${done.lag.count} changes; emulator behind ${behindMs} ms`);
  }, 60_000);

  it("the fault build (FUEL LOW driven inverted) fails on exactly that element, all flight long", async () => {
    const { runId, done, behindMs } = await runOnBoard("fault", "Firmware with FUEL LOW inverted");
    const mismatches = (await bench.visitors.viewer.get(`${base}/runs/${runId}/mismatches`)).body as { elementId: string; startMs: number; endMs: number; expected: string; seen: string }[];
    const failing = done.elements.filter((e: { status: string }) => e.status !== "pass").map((e: { elementId: string; status: string }) => `${e.elementId}:${e.status}`);
    const others = mismatches.filter((m) => m.elementId !== "fuel-low");
    expect(failing, `${JSON.stringify(others)}; emulator behind ${behindMs} ms`).toEqual(["fuel-low:fail"]);
    expect(done.counts).toEqual({ pass: 8, fail: 1, untested: 0, no_data: 0, placeholder: 0 });
    expect(new Set(mismatches.map((m) => m.elementId))).toEqual(new Set(["fuel-low"]));
    // The lamp is the opposite of what it should be everywhere: the mismatches cover the flight
    // (less at most a lag budget at each change of the expected state, where seen flips with it),
    // and each says so in words.
    const covered = mismatches.reduce((sum, m) => sum + (m.endMs - m.startMs), 0);
    expect(covered).toBeGreaterThan(scenarioJson.durationMs - 4 * 150 - 200);
    for (const m of mismatches) expect([m.expected, m.seen].sort()).toEqual(["off", "on"]);
    // Before the low fuel caution (7 s) the lamp should be dark, outside the lamp test; it is lit.
    const early = mismatches.find((m) => m.startMs < 500);
    expect(early).toMatchObject({ expected: "off", seen: "on" });
    const late = mismatches.find((m) => m.startMs >= 6900 && m.startMs <= 7200);
    expect(late).toMatchObject({ expected: "on", seen: "off" });
  }, 60_000);
});
