import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { PanelEmulator } from "../../server/bench/device-emulator";
import { hostOnWebSocket, type EmulatorHost } from "../../server/bench/device-runner";
import { run as runTable, seenLog } from "../../server/db/schema";
import { panel as panelSchema, type Panel } from "../../shared/panel/schema";
import type { ChannelDefinition } from "../../shared/recording/channels";
import type { Fault } from "../../shared/virtual/faults";
import { cookieOf, startBench, type Bench } from "./recordings-support";
import { makePanelAirframe, PANEL_CHANNELS, testDefinition, uploadRecording, RIG_FLIGHT } from "./panels-support";

/**
 * The run console's live features through the HTTP API (issue 6): transport (step, seek, loop,
 * speed) and the cuts a backward seek makes, the set-up check blocking play, the input walk
 * answered by the device emulator's input events, observation checkpoints pausing the player,
 * and a virtual link's faults changed during the run.
 */

// The invented rig flight of panels-support.ts: FIRE 2 s to 4 s, gear up at 2 s, code 7700 at 3 s.
const RECORDING = RIG_FLIGHT;

// Speed 2 and an 800 ms lag budget, as in runs.test.ts: these tests are about the bench, not this machine's speed.
const SPEED = 2;
const TOLERANCE = { lagBudgetMs: 800 };
const channels = PANEL_CHANNELS as ChannelDefinition[];

let bench: Bench;
let base: string;
let recordingId: string;
let panelId: string;
let definition: Panel;

async function createRun(extra: Record<string, unknown> = {}, links: unknown[] = [{ kind: "virtual", panelId }]) {
  const made = await bench.visitors.builder.post(`${base}/runs`, { recordingId, links, speed: SPEED, tolerance: TOLERANCE, ...extra });
  expect(made.status, JSON.stringify(made.body)).toBe(201);
  return made.body.id as string;
}

const control = (runId: string, body: unknown) => bench.visitors.builder.post(`${base}/runs/${runId}/control`, body);
const checks = (runId: string, body: unknown) => bench.visitors.builder.post(`${base}/runs/${runId}/checks`, body);
const detail = async (runId: string) => (await bench.visitors.viewer.get(`${base}/runs/${runId}`)).body;

async function waitFor<T>(what: string, get: () => Promise<T>, ok: (v: T) => boolean, timeoutMs = 20_000): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const v = await get();
    if (ok(v)) return v;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}: ${JSON.stringify(v).slice(0, 1200)}`);
    await new Promise((r) => setTimeout(r, 40));
  }
}

async function emulate(runId: string, faults: Fault[] = []): Promise<{ emulator: PanelEmulator; host: EmulatorHost }> {
  const emulator = new PanelEmulator({ panel: definition, channels, faults, timeScale: SPEED });
  const url = `${bench.server.url.replace(/^http/, "ws")}/ws/bench/runs/${runId}/panels/${panelId}`;
  const host = await hostOnWebSocket(emulator, url, { origin: bench.server.url, cookie: cookieOf(bench.visitors.builder) });
  // Connected, and the panel has said where its gear lever is (from the keyframe it was sent).
  await waitFor("the panel to report", () => detail(runId), (d) => d.links[0].connected && d.checks?.setup?.unreported.length === 0);
  return { emulator, host };
}

beforeAll(async () => {
  bench = await startBench();
  base = `/api/workshops/${bench.workshopId}`;
  const airframeId = await makePanelAirframe(bench, "Transport rig");
  recordingId = await uploadRecording(bench, airframeId, RECORDING, "Transport flight");
  const def = testDefinition("transport-panel", "Transport panel");
  const made = await bench.visitors.owner.post(`${base}/panels`, { airframeId, definition: def });
  expect(made.status).toBe(201);
  panelId = made.body.id;
  definition = panelSchema.parse(def);
}, 60_000);

afterAll(async () => {
  await bench?.close();
});

describe("transport", () => {
  it("steps frame by frame, seeks both ways, and refuses bad speeds and loops", async () => {
    const runId = await createRun();
    const { host } = await emulate(runId);
    // Each step sends the next frame and stops there.
    const positions: number[] = [];
    for (let i = 0; i < 3; i++) {
      const stepped = await control(runId, { action: "step" });
      expect(stepped.status).toBe(200);
      expect(stepped.body.state).toBe("paused");
      positions.push(stepped.body.positionMs);
    }
    expect(positions).toEqual([0, 1000, 2000]);
    const ahead = await control(runId, { action: "seek", toMs: 6000 });
    expect(ahead.body).toMatchObject({ state: "paused", positionMs: 6000 });
    // A forward seek skipped 2 s to 6 s: nothing was played there, so nothing was seen.
    expect(ahead.body.links[0].gaps).toContainEqual({ fromMs: 2000, toMs: 6000 });
    const back = await control(runId, { action: "seek", toMs: 1500 });
    expect(back.body).toMatchObject({ state: "paused", positionMs: 1500 });
    // The backward seek drops the gaps after it and starts a new pass there.
    expect(back.body.links[0].gaps).toEqual([]);
    const [row] = await bench.server.services.db.select({ cuts: runTable.cuts }).from(runTable).where(eq(runTable.id, runId));
    expect(row.cuts).toEqual([{ epoch: 1, atMs: 1500 }]);
    // Beyond the end: clamped to it; speed and loop outside their ranges: 422 naming the field.
    expect((await control(runId, { action: "seek", toMs: 60_000 })).body.positionMs).toBe(8000);
    const slow = await control(runId, { action: "speed", speed: 0.05 });
    expect(slow.status).toBe(422);
    expect(slow.body.error.issues[0].path).toBe("body.speed");
    const fast = await control(runId, { action: "speed", speed: 16 });
    expect(fast.body.speed).toBe(16);
    const badLoop = await control(runId, { action: "loop", loop: { fromMs: 3000, toMs: 9000 } });
    expect(badLoop.status).toBe(422);
    expect(badLoop.body.error.message).toMatch(/loop must lie within/);
    expect((await control(runId, { action: "stop" })).status).toBe(200);
    await host.close();
  }, 40_000);

  it("judges the reports after a backward seek as a new pass: a fault fixed before replaying no longer counts", async () => {
    // First pass: the FIRE lamp stuck dark through its 2 s to 4 s warning.
    const runId = await createRun({ name: "Cut" }, [{ kind: "virtual", panelId, faults: [{ kind: "lamp_stuck", element: "fire", lit: false }] }]);
    const { emulator } = await emulate(runId, [{ kind: "lamp_stuck", element: "fire", lit: false }]);
    expect((await control(runId, { action: "play" })).status).toBe(200);
    await waitFor("the warning to pass", () => detail(runId), (d) => d.positionMs > 4600);
    expect((await control(runId, { action: "pause" })).status).toBe(200);
    // The builder fixes the lamp and replays from 1 s: the second pass is healthy.
    emulator.setFaults([]);
    expect((await control(runId, { action: "seek", toMs: 1000 })).body.positionMs).toBe(1000);
    expect((await control(runId, { action: "play" })).status).toBe(200);
    const done = await waitFor("the run to finish", () => detail(runId), (d) => d.state === "finished" && d.elements.length > 0);
    const [row] = await bench.server.services.db.select({ cuts: runTable.cuts }).from(runTable).where(eq(runTable.id, runId));
    expect(row.cuts).toEqual([{ epoch: 1, atMs: 1000 }]);
    const epochs = await bench.server.services.db.select({ epoch: seenLog.epoch }).from(seenLog).where(eq(seenLog.runId, runId));
    expect(new Set(epochs.map((e) => e.epoch))).toEqual(new Set([0, 1]));
    // The first pass's dark lamp (2 s to 4 s) was cut; before 1 s it was right anyway.
    expect(done.elements.find((e: { elementId: string }) => e.elementId === "fire").status).toBe("pass");
    expect(done.counts).toMatchObject({ pass: 5, fail: 0 });
  }, 40_000);

  it("loops a segment: each restart is a cut at its start, and clearing the loop plays on to the end", async () => {
    const runId = await createRun({ name: "Loop" });
    await emulate(runId);
    const looped = await control(runId, { action: "loop", loop: { fromMs: 1000, toMs: 2500 } });
    expect(looped.status).toBe(200);
    expect((await control(runId, { action: "play" })).status).toBe(200);
    const cutsOf = async () => (await bench.server.services.db.select({ cuts: runTable.cuts }).from(runTable).where(eq(runTable.id, runId)))[0].cuts;
    const cuts = await waitFor("two loop restarts", cutsOf, (c) => c.length >= 2);
    expect(cuts.every((c) => c.atMs === 1000)).toBe(true);
    const during = await detail(runId);
    expect(during.positionMs).toBeGreaterThanOrEqual(1000);
    // The clock may run a few ms past the loop's end before the tick that starts it over.
    expect(during.positionMs).toBeLessThanOrEqual(2600);
    expect((await control(runId, { action: "loop", loop: null })).status).toBe(200);
    const done = await waitFor("the run to finish", () => detail(runId), (d) => d.state === "finished" && d.elements.length > 0);
    expect(done.positionMs).toBe(8000);
    expect(done.counts.fail).toBe(0);
  }, 40_000);
});

describe("set-up check", () => {
  it("blocks play while a reported position differs from the recording's first instant, until it agrees", async () => {
    const runId = await createRun({ name: "Set-up agrees" });
    const { emulator } = await emulate(runId);
    emulator.moveInput("gear", { kind: "position", position: "up" });
    const blocked = await waitFor("the difference", () => detail(runId), (d) => d.checks.setup.differences.length === 1);
    expect(blocked.checks.setup.differences[0]).toMatchObject({ elementId: "gear", kind: "lever", expected: "down", reported: "up", sentence: "GEAR lever is up, the recording starts down" });
    const refused = await control(runId, { action: "play" });
    expect(refused.status).toBe(409);
    expect(refused.body.error.code).toBe("setup_mismatch");
    expect(refused.body.error.issues).toEqual([{ path: `panels.${panelId}.elements.gear`, message: "GEAR lever is up, the recording starts down" }]);
    expect((await detail(runId)).state).not.toBe("playing");
    // Put back as the recording starts: play goes.
    emulator.moveInput("gear", { kind: "position", position: "down" });
    emulator.releaseInput("gear");
    await waitFor("agreement", () => detail(runId), (d) => d.checks.setup.differences.length === 0);
    const played = await control(runId, { action: "play" });
    expect(played.status).toBe(200);
    expect(played.body.state).toBe("playing");
    expect(played.body.checks.setupOverrides).toEqual([]);
    expect(played.body.checks.setup.applies).toBe(false);
    expect((await control(runId, { action: "stop" })).status).toBe(200);
  }, 40_000);

  it("plays anyway with override, and keeps what differed in run.checks", async () => {
    const runId = await createRun({ name: "Set-up override" });
    const { emulator } = await emulate(runId);
    emulator.moveInput("gear", { kind: "position", position: "up" });
    await waitFor("the difference", () => detail(runId), (d) => d.checks.setup.differences.length === 1);
    const played = await control(runId, { action: "play", override: true });
    expect(played.status).toBe(200);
    expect(played.body.checks.setupOverrides).toHaveLength(1);
    expect(played.body.checks.setupOverrides[0]).toMatchObject({ by: expect.any(String), atMs: 0, differences: [{ elementId: "gear", reported: "up" }] });
    expect((await control(runId, { action: "stop" })).status).toBe(200);
    const [row] = await bench.server.services.db.select({ checks: runTable.checks }).from(runTable).where(eq(runTable.id, runId));
    expect(row.checks.setupOverrides?.[0].differences[0].elementId).toBe("gear");
  }, 40_000);
});

describe("input walk", () => {
  it("asks each input position, passes on the emulator's input event, times out without one, and blocks play meanwhile", async () => {
    const runId = await createRun({ name: "Walk" });
    const { emulator } = await emulate(runId);
    const started = await checks(runId, { action: "walk_start", timeoutSec: 1.5 });
    expect(started.status, JSON.stringify(started.body)).toBe(200);
    const walk = started.body.checks.walk;
    expect(walk.state).toBe("running");
    // The gear lever rests down (as reported), so the walk asks up first and ends back down.
    expect(walk.steps.map((s: { prompt: string }) => s.prompt)).toEqual(["Move the GEAR lever to up", "Move the GEAR lever to down"]);
    const refused = await control(runId, { action: "play" });
    expect(refused.status).toBe(409);
    expect(refused.body.error.code).toBe("walk_running");
    emulator.moveInput("gear", { kind: "position", position: "up" });
    const after = await waitFor("the first step", () => detail(runId), (d) => d.checks.walk.current === 1);
    expect(after.checks.walk.steps[0]).toMatchObject({ result: "pass", seen: null });
    // Nobody moves it back: the second step times out.
    const done = await waitFor("the walk to end", () => detail(runId), (d) => d.checks.walk.state === "done", 10_000);
    expect(done.checks.walk.steps.map((s: { result: string }) => s.result)).toEqual(["pass", "timeout"]);
    expect(done.checks.walk.finishedAt).not.toBeNull();
    // The lever is still up: the set-up check now blocks play.
    expect(done.checks.setup.differences.map((d: { elementId: string }) => d.elementId)).toEqual(["gear"]);
    expect((await control(runId, { action: "stop" })).status).toBe(200);
    const stored = await detail(runId);
    expect(stored.checks.walk.steps.map((s: { result: string }) => s.result)).toEqual(["pass", "timeout"]);
    expect(stored.checks.setup).toBeNull();
  }, 40_000);

  it("skip and cancel answer the walk; bad input and viewers are refused", async () => {
    const runId = await createRun({ name: "Walk wrong" });
    await emulate(runId);
    const url = `${base}/runs/${runId}/checks`;
    expect((await bench.visitors.builder.post(url, { action: "walk_start", timeoutSec: 30 })).status).toBe(200);
    expect((await bench.visitors.builder.post(url, { action: "walk_skip" })).body.checks.walk.steps[0].result).toBe("skipped");
    const cancelled = await bench.visitors.builder.post(url, { action: "walk_cancel" });
    expect(cancelled.body.checks.walk.state).toBe("cancelled");
    expect((await bench.visitors.builder.post(url, { action: "walk_cancel" })).status).toBe(409);
    const bad = await bench.visitors.builder.post(url, { action: "walk_start", timeoutSec: 0 });
    expect(bad.status).toBe(422);
    expect(bad.body.error.issues[0].path).toBe("body.timeoutSec");
    expect((await bench.visitors.viewer.post(url, { action: "walk_start" })).status).toBe(403);
    expect((await control(runId, { action: "stop" })).status).toBe(200);
  }, 40_000);
});

describe("observation mode", () => {
  it("pauses at each change of an observed element, and a no fails it with an observed mismatch", async () => {
    const runId = await createRun({ name: "Observed", observed: [{ panelId, elementId: "fire" }] });
    const created = await detail(runId);
    expect(created.checks.observed).toEqual([{ panelId, elementId: "fire" }]);
    await emulate(runId);
    const planned = (await detail(runId)).checks.checkpoints;
    // FIRE changes at 2 s and 4 s; asked 150 ms (its lag budget) plus 100 ms later.
    expect(planned.map((c: { atMs: number; question: string }) => [c.atMs, c.question])).toEqual([
      [2250, "Is the FIRE lamp lit now?"],
      [4250, "Is the FIRE lamp dark now?"],
    ]);
    expect((await control(runId, { action: "play" })).status).toBe(200);
    const first = await waitFor("the first question", () => detail(runId), (d) => d.checks.asking === planned[0].id);
    expect(first.state).toBe("paused");
    expect(first.positionMs).toBeGreaterThanOrEqual(2250);
    // Paused on a timer for that instant: a busy machine may wake it a little late, never early.
    expect(first.positionMs).toBeLessThan(2800);
    const answered = await checks(runId, { action: "answer", checkpointId: planned[0].id, answer: "yes" });
    expect(answered.body.state).toBe("playing");
    expect(answered.body.checks.asking).toBeNull();
    await waitFor("the second question", () => detail(runId), (d) => d.checks.asking === planned[1].id);
    expect((await checks(runId, { action: "answer", checkpointId: planned[1].id, answer: "no" })).status).toBe(200);
    const done = await waitFor("the run to finish", () => detail(runId), (d) => d.state === "finished" && d.elements.length > 0);
    expect(done.elements.find((e: { elementId: string }) => e.elementId === "fire").status).toBe("fail");
    const mismatches = (await bench.visitors.viewer.get(`${base}/runs/${runId}/mismatches?elementId=fire`)).body;
    expect(mismatches).toEqual([expect.objectContaining({ kind: "observed", startMs: 4250, endMs: 4250, expected: "off", seen: "not so, by the builder's eye" })]);
    expect(done.checks.checkpoints.map((c: { answer: string }) => c.answer)).toEqual(["yes", "no"]);
    const unknown = await checks(runId, { action: "answer", checkpointId: "nope", answer: "yes" });
    expect(unknown.status).toBe(409); // the run has finished
  }, 40_000);

  it("refuses observing what a panel does not have, naming the field", async () => {
    const refused = await bench.visitors.builder.post(`${base}/runs`, { recordingId, links: [{ kind: "virtual", panelId }], observed: [{ panelId, elementId: "nope" }] });
    expect(refused.status).toBe(422);
    expect(refused.body.error.issues[0].path).toBe("body.observed.0.elementId");
    const runId = await createRun({ name: "Observe later" });
    const bad = await checks(runId, { action: "observe", elements: [{ panelId, elementId: "ghost" }] });
    expect(bad.status).toBe(422);
    expect(bad.body.error.issues[0]).toEqual({ path: "body.elements.0.elementId", message: 'the panel has no element "ghost"' });
    const ok = await checks(runId, { action: "observe", elements: [{ panelId, elementId: "xpdr" }] });
    expect(ok.body.checks.checkpoints.map((c: { question: string }) => c.question)).toEqual(['Does the XPDR readout show "7700" now?']);
    expect((await control(runId, { action: "stop" })).status).toBe(200);
  }, 20_000);
});

describe("faults during the run", () => {
  it("a virtual link's faults change through the API and the run detail answers them", async () => {
    const runId = await createRun({ name: "Faults" });
    const url = `${base}/runs/${runId}/links/${panelId}/faults`;
    const set = await bench.visitors.builder.request("PUT", url, { faults: [{ kind: "lamp_inverted", element: "fire" }] });
    expect(set.status, JSON.stringify(set.body)).toBe(200);
    expect(set.body.settings).toEqual([{ kind: "virtual", panelId, faults: [{ kind: "lamp_inverted", element: "fire" }] }]);
    expect((await detail(runId)).settings[0].faults).toEqual([{ kind: "lamp_inverted", element: "fire" }]);
    const wrong = await bench.visitors.builder.request("PUT", url, { faults: [{ kind: "lamp_inverted", element: "ghost" }] });
    expect(wrong.status).toBe(422);
    expect(wrong.body.error.issues[0].path).toBe("body.faults.0.element");
    // A fault must act on something the element shows: a lamp fault on a pointer is refused, saying why.
    const misfit = await bench.visitors.builder.request("PUT", url, { faults: [{ kind: "lamp_stuck", element: "fire", lit: true }, { kind: "lamp_inverted", element: "airspeed" }] });
    expect(misfit.status).toBe(422);
    expect(misfit.body.error.issues[0].path).toBe("body.faults.1.element");
    expect(misfit.body.error.issues[0].message).toMatch(/is a pointer; this fault acts on a lamp or button/);
    const atCreation = await bench.visitors.builder.post(`${base}/runs`, { recordingId, links: [{ kind: "virtual", panelId, faults: [{ kind: "digit_dropped", element: "fire", position: 0 }] }] });
    expect(atCreation.status).toBe(422);
    expect(atCreation.body.error.issues[0].path).toBe("body.links.0.faults.0.element");
    const malformed = await bench.visitors.builder.request("PUT", url, { faults: [{ kind: "lamp_inverted" }] });
    expect(malformed.status).toBe(422);
    expect((await bench.visitors.viewer.request("PUT", url, { faults: [] })).status).toBe(403);
    const network = await createRun({ name: "Network faults" }, [{ kind: "network", panelId }]);
    const refused = await bench.visitors.builder.request("PUT", `${base}/runs/${network}/links/${panelId}/faults`, { faults: [] });
    expect(refused.status).toBe(422);
    expect(refused.body.error.issues[0].path).toBe("params.panelId");
  }, 20_000);
});
