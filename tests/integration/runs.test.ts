import { afterAll, beforeAll, describe, expect, it } from "vitest";
import WebSocket from "ws";
import { XMLParser } from "fast-xml-parser";
import { eq } from "drizzle-orm";
import { PanelEmulator } from "../../server/bench/device-emulator";
import { hostOnSerial, hostOnWebSocket, type EmulatorHost } from "../../server/bench/device-runner";
import { mismatch as mismatchTable, run as runTable, shareLink } from "../../server/db/schema";
import { exportOf } from "../../server/bench/report";
import { encodeLinkFrame } from "../../shared/link/codec";
import { panel as panelSchema, type Panel } from "../../shared/panel/schema";
import type { Fault } from "../../shared/virtual/faults";
import type { ChannelDefinition } from "../../shared/recording/channels";
import { openPtyPair } from "../support/pty-pair";
import { cookieOf, getText, startBench, type Bench } from "./recordings-support";
import { makePanelAirframe, PANEL_CHANNELS, testDefinition, uploadRecording, RIG_FLIGHT } from "./panels-support";

/**
 * Runs end to end on the real database and real sockets: a recording replayed into panels
 * driven by the device emulator (shared/link's EmulatedDeviceCore behind the link protocol,
 * showing what the panel's own behaviours say), judged live and from the stored seen log.
 */

// The invented rig flight of panels-support.ts: FIRE 2 s to 4 s, gear up at 2 s, code 7700 at 3 s.
const RUN_RECORDING = RIG_FLIGHT;

// Speed 2: a report's wall latency counts twice in recording time, and these tests share two cores.
const SPEED = 2;
let bench: Bench;
let base: string;
let airframeId: string;
let recordingId: string;
let panelId: string;
let definition: Panel;
const channels = PANEL_CHANNELS as ChannelDefinition[];

async function makePanel(slug: string, name: string): Promise<{ id: string; definition: Panel }> {
  const def = testDefinition(slug, name);
  const made = await bench.visitors.owner.post(`${base}/panels`, { airframeId, definition: def });
  expect(made.status, JSON.stringify(made.body)).toBe(201);
  return { id: made.body.id, definition: panelSchema.parse(def) };
}

/**
 * Runs here allow 800 ms of lag: the emulator answers through timers and sockets on a shared
 * two-core machine that may be busy with other test files, and these tests are about what the
 * bench does, not about how fast this machine is. The faults they inject last seconds.
 */
const TEST_TOLERANCE = { lagBudgetMs: 800 };

async function createRun(links: unknown[], extra: Record<string, unknown> = {}) {
  const made = await bench.visitors.builder.post(`${base}/runs`, { recordingId, links, speed: SPEED, tolerance: TEST_TOLERANCE, ...extra });
  expect(made.status, JSON.stringify(made.body)).toBe(201);
  return made.body.id as string;
}

const control = (runId: string, body: unknown) => bench.visitors.builder.post(`${base}/runs/${runId}/control`, body);

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
const linkUrl = (runId: string, pid: string) => `${bench.server.url.replace(/^http/, "ws")}/ws/bench/runs/${runId}/panels/${pid}`;
const browserHeaders = () => ({ origin: bench.server.url, cookie: cookieOf(bench.visitors.builder) });

async function emulate(runId: string, pid: string, def: Panel, faults: Fault[] = []): Promise<EmulatorHost> {
  const emulator = new PanelEmulator({ panel: def, channels, faults, timeScale: SPEED });
  return hostOnWebSocket(emulator, linkUrl(runId, pid), browserHeaders());
}

let busAttempts = 0;

async function playToEnd(runId: string) {
  await waitFor("the link to connect", () => detail(runId), (d) => d.links.every((l: { connected: boolean }) => l.connected));
  expect((await control(runId, { action: "play" })).status).toBe(200);
  return waitFor("the run to finish and be judged", () => detail(runId), (d) => d.state === "finished" && d.elements.length > 0);
}

beforeAll(async () => {
  bench = await startBench();
  base = `/api/workshops/${bench.workshopId}`;
  airframeId = await makePanelAirframe(bench, "Run rig");
  recordingId = await uploadRecording(bench, airframeId, RUN_RECORDING, "Run flight");
  ({ id: panelId, definition } = await makePanel("run-panel", "Run panel"));
  // Warm the behaviours' code paths once, so the first run's reports are not late from JIT alone.
  const warm = new PanelEmulator({ panel: definition, channels });
  for (let i = 0; i < 20; i++) {
    warm.receiveBytes(encodeLinkFrame({ address: 0, sequence: i, message: { type: "value_update", keyframeBegin: i === 0, keyframeEnd: i === 0, values: [{ channel: 2, kind: "int", value: 300 + i * 10 }] } }));
  }
}, 60_000);

afterAll(async () => {
  await bench?.close();
});

describe("a run into a virtual panel driven by the device emulator over the WebSocket", () => {
  let healthyRun: string;

  it("passes every element, reports lag, and exports JSON and JUnit XML", async () => {
    healthyRun = await createRun([{ kind: "virtual", panelId }], { name: "Healthy" });
    const host = await emulate(healthyRun, panelId, definition);
    const done = await playToEnd(healthyRun);
    if (done.counts.pass !== 5) console.log(JSON.stringify(done, null, 1));
    expect(done.counts).toEqual({ pass: 5, fail: 0, untested: 0, no_data: 0, placeholder: 0 });
    expect(done.mismatchCount).toBe(0);
    expect(done.positionMs).toBe(8000);
    expect(done.elements.map((e: { elementId: string }) => e.elementId)).toEqual(["fire", "alt-100", "airspeed", "xpdr", "gear"]);
    expect(done.lag.count).toBeGreaterThan(0);
    expect(done.links[0].gaps).toEqual([]);
    // The bench ended the link when the run finished.
    expect((await host.done).code).toBe(1000);

    const exported = await bench.visitors.viewer.get(`${base}/runs/${healthyRun}/export.json`);
    expect(exported.status).toBe(200);
    expect(exported.body.format).toBe("panelproof.run-report");
    expect(exported.body.summary.passed).toBe(true);
    expect(exported.body.panels[0].elements).toHaveLength(5);

    const junit = await bench.visitors.viewer.get(`${base}/runs/${healthyRun}/junit.xml`);
    expect(junit.status).toBe(200);
    expect(junit.headers.get("content-type")).toMatch(/application\/xml/);
    // JUnit XML as read by common CI servers: checked with a general-purpose XML parser.
    const doc = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: "" }).parse(junit.body as string);
    expect(doc.testsuites.tests).toBe("5");
    expect(doc.testsuites.failures).toBe("0");
    expect(doc.testsuites.skipped).toBe("0");
    expect(Number(doc.testsuites.time)).toBeCloseTo(8, 3);
    const cases = [doc.testsuites.testsuite.testcase].flat();
    expect(cases).toHaveLength(5);
    expect(cases.reduce((s: number, c: { time: string }) => s + Number(c.time), 0)).toBeCloseTo(8, 2);
  }, 40_000);

  it("export.json, written with PostgreSQL's help, reads back as the export's objects, odd characters too", async () => {
    const db = bench.server.services.db;
    const odd = ['quote " and backslash \\', "tab\tnew line\ncontrol \u0001mismatches:not-a-mark:0", "accents éü, a dial ° and an emoji 🛩", "\u2028 and \u2029"];
    await db.insert(mismatchTable).values(
      odd.map((text, i) => ({ runId: healthyRun, panelId, elementId: i % 2 ? "airspeed" : "fire", track: i % 2 ? "angle" : "lamp", kind: "wrong_value", startMs: 100 * i + 0.5, endMs: 100 * i + 50.25, worstError: i === 3 ? 1e-7 : 12.3456789, expected: text, seen: `${text}!`, atMs: 100 * i + 7 })),
    );
    // Mismatches change only with a judgement, which stamps judgedAt (the server keeps each
    // judgement's mismatch lists): stamp one, as storing a judgement does.
    await db.update(runTable).set({ judgedAt: new Date() }).where(eq(runTable.id, healthyRun));
    const [row] = await db.select().from(runTable).where(eq(runTable.id, healthyRun));
    const text = await getText(bench.visitors.viewer, `${base}/runs/${healthyRun}/export.json`);
    expect(text.status).toBe(200);
    expect(text.headers.get("content-type")).toMatch(/application\/json/);
    // The same JSON value; PostgreSQL may write a number differently (1e-07 for 1e-7).
    expect(JSON.parse(text.text)).toEqual(JSON.parse(JSON.stringify(await exportOf(db, row, bench.server.services.runs))));
    expect(JSON.parse(text.text).panels[0].elements.find((e: { elementId: string }) => e.elementId === "fire").mismatches.map((m: { expected: string }) => m.expected)).toEqual([odd[0], odd[2]]);
    await db.delete(mismatchTable).where(eq(mismatchTable.runId, healthyRun));
    await db.update(runTable).set({ judgedAt: new Date(Date.now() + 1) }).where(eq(runTable.id, healthyRun));
  });

  it("with two injected faults fails exactly those two elements, with the right intervals; rejudging changes results without replaying", async () => {
    const faults: Fault[] = [
      { kind: "lamp_stuck", element: "fire", lit: false },
      { kind: "digit_dropped", element: "xpdr", position: 0 },
    ];
    const runId = await createRun([{ kind: "virtual", panelId, faults }], { name: "Two faults" });
    await emulate(runId, panelId, definition, faults);
    const done = await playToEnd(runId);
    const failing = done.elements.filter((e: { status: string }) => e.status === "fail").map((e: { elementId: string }) => e.elementId);
    expect(failing.sort()).toEqual(["fire", "xpdr"]);
    expect(done.counts).toMatchObject({ pass: 3, fail: 2 });

    const fire = (await bench.visitors.viewer.get(`${base}/runs/${runId}/mismatches?elementId=fire`)).body;
    expect(fire).toHaveLength(1);
    // FIRE should have lit from 2 s to 4 s; a lamp stuck off misses exactly that.
    expect(fire[0].startMs).toBeCloseTo(2000, -2);
    expect(fire[0].endMs).toBeCloseTo(4000, -2);
    expect(fire[0].expected).toBe("on");
    expect(fire[0].seen).toBe("off");
    const xpdr = (await bench.visitors.viewer.get(`${base}/runs/${runId}/mismatches?elementId=xpdr`)).body;
    expect(xpdr).toHaveLength(1);
    // The first digit never lights, all flight long.
    expect(xpdr[0].startMs).toBeLessThan(100);
    expect(xpdr[0].endMs).toBe(8000);
    expect(xpdr[0].seen).toMatch(/" 200"|" 700"/);

    const junit = await bench.visitors.viewer.get(`${base}/runs/${runId}/junit.xml`);
    const doc = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: "" }).parse(junit.body as string);
    expect(doc.testsuites.failures).toBe("2");
    const failed = [doc.testsuites.testsuite.testcase].flat().filter((c: { failure?: unknown }) => c.failure);
    expect(failed.map((c: { name: string }) => c.name).sort()).toEqual(["FIRE (fire)", "XPDR (xpdr)"]);
    const fireCase = failed.find((c: { name: string }) => c.name === "FIRE (fire)");
    expect(fireCase.failure["#text"]).toMatch(/^2\.\d{3} s to 4\.\d{3} s: wrong_value/);

    // Judged again with a lag budget longer than any difference: nothing fails, nothing replayed.
    const rejudged = await bench.visitors.builder.post(`${base}/runs/${runId}/rejudge`, { lagBudgetMs: 60_000 });
    expect(rejudged.status).toBe(200);
    expect(rejudged.body.counts.fail).toBe(0);
    expect(rejudged.body.mismatchCount).toBe(0);
    expect(rejudged.body.positionMs).toBe(8000);
    // The export follows the new judgement (the server keeps mismatch lists per judgement).
    const mismatchesIn = async () => (await bench.visitors.viewer.get(`${base}/runs/${runId}/export.json`)).body.panels[0].elements.reduce((n: number, e: { mismatches: unknown[] }) => n + e.mismatches.length, 0);
    expect(await mismatchesIn()).toBe(0);
    // And back: the same stored log gives the same two failures.
    const again = await bench.visitors.builder.post(`${base}/runs/${runId}/rejudge`, TEST_TOLERANCE);
    expect(again.body.counts).toMatchObject({ pass: 3, fail: 2 });
    expect(await mismatchesIn()).toBe(again.body.mismatchCount);
    expect(again.body.mismatchCount).toBeGreaterThan(0);
  }, 40_000);

  it("a link that drops mid-run gives no data for the gap, shows it to watchers, and resumes", async () => {
    const runId = await createRun([{ kind: "virtual", panelId }], { name: "Drop" });
    const watcher = new WebSocket(`${bench.server.url.replace(/^http/, "ws")}/ws/runs/${runId}`, { headers: { origin: bench.server.url, cookie: cookieOf(bench.visitors.viewer) } });
    const messages: any[] = [];
    watcher.on("message", (d) => messages.push(JSON.parse(d.toString())));
    await new Promise((r) => watcher.once("open", r));
    await emulate(runId, panelId, definition, [{ kind: "disconnect", fromMs: 2500, toMs: 5000 }]);
    const done = await playToEnd(runId);
    watcher.close();
    const gaps = done.links[0].gaps;
    expect(gaps).toHaveLength(1);
    expect(gaps[0].fromMs).toBeGreaterThan(2200);
    expect(gaps[0].fromMs).toBeLessThan(2900);
    expect(gaps[0].toMs).toBeGreaterThan(4800);
    expect(gaps[0].toMs).toBeLessThan(5800);
    // No data for 2.5 s is never a pass; nothing is a mismatch inside the gap either.
    expect(done.counts.no_data, JSON.stringify(done.elements.map((e: { elementId: string; status: string; noDataMs: number; mismatchCount: number }) => [e.elementId, e.status, e.noDataMs, e.mismatchCount]))).toBe(5);
    const inGap = (await bench.visitors.viewer.get(`${base}/runs/${runId}/mismatches`)).body.filter((m: { startMs: number }) => m.startMs > gaps[0].fromMs && m.startMs < gaps[0].toMs);
    expect(inGap).toEqual([]);
    // Reports resumed after the reconnect: the last airspeed change (8 s) was seen.
    const exported = (await bench.visitors.viewer.get(`${base}/runs/${runId}/export.json`)).body;
    const airspeed = exported.panels[0].elements.find((e: { elementId: string }) => e.elementId === "airspeed");
    expect(airspeed.mismatches).toEqual([]);
    const linkStates = messages.filter((m) => m.type === "link").map((m) => m.link.connected);
    expect(linkStates).toContain(false);
    expect(linkStates.lastIndexOf(true)).toBeGreaterThan(linkStates.indexOf(false));
    expect(messages.some((m) => m.type === "player" && m.state === "playing")).toBe(true);
  }, 40_000);

  it("counts garbage, bad CRCs and reports for unknown elements on the link, and carries on", async () => {
    const runId = await createRun([{ kind: "virtual", panelId }], { name: "Garbage" });
    const ws = new WebSocket(linkUrl(runId, panelId), { headers: browserHeaders() });
    await new Promise((r) => ws.once("open", r));
    const good = encodeLinkFrame({ address: 0, sequence: 1, message: { type: "seen_report", appliedSequence: null, seen: [{ element: 99, kind: "lamp_state", state: "on" }, { element: 0, kind: "pointer_angle", centidegrees: 5 }] } });
    const badCrc = good.slice();
    badCrc[3] ^= 0x55;
    ws.send(Buffer.from([0x13, 0x37, 0xff, 0xfe, 0x00]));
    ws.send(Buffer.from(badCrc));
    ws.send(Buffer.from(good));
    ws.send("not binary");
    const d = await waitFor("faults to be counted", () => detail(runId), (x) => (x.links[0].faults.unknown_element ?? 0) >= 1 && (x.links[0].faults.wrong_kind ?? 0) >= 1);
    expect(Object.values(d.links[0].faults).reduce((a: number, b) => a + (b as number), 0)).toBeGreaterThanOrEqual(4);
    expect(d.links[0].faults.not_binary).toBe(1);
    expect(d.links[0].connected).toBe(true);
    ws.close();
    expect((await control(runId, { action: "stop" })).status).toBe(200);
  }, 20_000);

  it("a network board connects with its panel's device token; wrong tokens are refused with clear close codes", async () => {
    const other = await makePanel("other-panel", "Other panel");
    const token = (await bench.visitors.owner.post(`${base}/panels/${panelId}/tokens`, { label: "bench board" })).body.token as string;
    const otherToken = (await bench.visitors.owner.post(`${base}/panels/${other.id}/tokens`, { label: "other board" })).body.token as string;
    const runId = await createRun([{ kind: "network", panelId }], { name: "Network" });
    const closeOf = (url: string, headers: Record<string, string> = {}) =>
      new Promise<{ code: number; reason: string }>((resolve) => {
        const ws = new WebSocket(url, { headers });
        ws.on("close", (code, reason) => resolve({ code, reason: reason.toString() }));
        ws.on("error", () => undefined);
      });
    expect(await closeOf(`${linkUrl(runId, panelId)}?token=not-a-token`)).toEqual({ code: 4401, reason: "device token unknown or revoked" });
    expect(await closeOf(`${linkUrl(runId, panelId)}?token=${otherToken}`)).toEqual({ code: 4403, reason: "this device token belongs to another panel" });
    expect((await closeOf(linkUrl(runId, panelId), browserHeaders())).code).toBe(4400);
    expect((await closeOf(linkUrl(runId, panelId), { origin: "http://evil.example", cookie: cookieOf(bench.visitors.builder) })).code).toBe(4403);
    const emulator = new PanelEmulator({ panel: definition, channels, timeScale: SPEED });
    await hostOnWebSocket(emulator, linkUrl(runId, panelId), { authorization: `Bearer ${token}` });
    const done = await playToEnd(runId);
    expect(done.counts.pass).toBe(5);
  }, 40_000);

  it("share links: anonymous read of that one report; revoked and expired answer 410", async () => {
    const made = await bench.visitors.builder.post(`${base}/runs/${healthyRun}/shares`, { expiresInDays: 7 });
    expect(made.status).toBe(201);
    const token = made.body.url.split("/").pop();
    const anon = bench.visitors.anonymous;
    const shared = await anon.get(`/api/shared/${token}`);
    expect(shared.status).toBe(200);
    expect(shared.body.run.id).toBe(healthyRun);
    expect(shared.body.run.createdBy).toBeNull();
    expect(shared.body.summary.counts.pass).toBe(5);
    // Nothing else is reachable with it.
    expect((await anon.get(`${base}/runs/${healthyRun}`)).status).toBe(401);
    expect((await anon.get(`/api/shared/${token}x`)).status).toBe(404);
    const list = await bench.visitors.viewer.get(`${base}/runs/${healthyRun}/shares`);
    expect(list.body.map((s: { id: string }) => s.id)).toContain(made.body.id);
    expect(JSON.stringify(list.body)).not.toContain(token);

    const expiring = await bench.visitors.builder.post(`${base}/runs/${healthyRun}/shares`, {});
    await bench.server.services.db.update(shareLink).set({ expiresAt: new Date(Date.now() - 1000) }).where(eq(shareLink.id, expiring.body.id));
    const expired = await anon.get(`/api/shared/${expiring.body.url.split("/").pop()}`);
    expect(expired.status).toBe(410);
    expect(expired.body.error.code).toBe("expired");

    expect((await bench.visitors.builder.delete(`${base}/runs/${healthyRun}/shares/${made.body.id}`)).status).toBe(200);
    const revoked = await anon.get(`/api/shared/${token}`);
    expect(revoked.status).toBe(410);
    expect(revoked.body.error.code).toBe("revoked");
  }, 20_000);

  it("a run interrupted by its server going away resumes from where it stopped", async () => {
    const runId = await createRun([{ kind: "virtual", panelId }], { name: "Interrupted" });
    await emulate(runId, panelId, definition);
    await waitFor("the link", () => detail(runId), (d) => d.links[0].connected);
    await control(runId, { action: "play" });
    await waitFor("some progress", () => detail(runId), (d) => d.positionMs > 2500);
    await bench.server.services.runs.session(runId)!.interrupt();
    const stopped = await detail(runId);
    expect(stopped.state).toBe("interrupted");
    expect(stopped.positionMs).toBeGreaterThan(2500);
    // Play again: a new session continues from the stored position once the panel is back.
    await control(runId, { action: "pause" });
    await emulate(runId, panelId, definition);
    await waitFor("the link again", () => detail(runId), (d) => d.links[0].connected);
    expect((await detail(runId)).positionMs).toBeGreaterThanOrEqual(stopped.positionMs - 1);
    await control(runId, { action: "play" });
    const done = await waitFor("the end", () => detail(runId), (d) => d.state === "finished" && d.elements.length > 0);
    expect(done.positionMs).toBe(8000);
    expect(done.counts.fail).toBe(0);

    // A run another process held and stopped stamping is marked interrupted at start.
    const db = bench.server.services.db;
    await db.update(runTable).set({ state: "playing", heldBy: "gone-process", aliveAt: new Date(Date.now() - 60_000) }).where(eq(runTable.id, runId));
    expect((await detail(runId)).state).toBe("interrupted");
    expect(await bench.server.services.runs.markInterrupted()).toBeGreaterThanOrEqual(1);
    const [row] = await db.select().from(runTable).where(eq(runTable.id, runId));
    expect(row.state).toBe("interrupted");
  }, 40_000);
});

describe("serial and RS-485 links over a socat pty pair", () => {
  it("a serial run with the emulator on the far end passes", async () => {
    const pty = await openPtyPair();
    const host = await hostOnSerial([new PanelEmulator({ panel: definition, channels, timeScale: SPEED })], pty.b);
    try {
      const runId = await createRun([{ kind: "serial", panelId, path: pty.a }], { name: "Serial" });
      await control(runId, { action: "pause" }); // opens the port; the bench identifies the board
      const done = await playToEnd(runId);
      expect(done.counts).toMatchObject({ pass: 5, fail: 0 });
    } finally {
      await host.close();
      await pty.close();
    }
  }, 40_000);

  it("RS-485: three emulated devices at different addresses on one port", async () => {
    const pty = await openPtyPair();
    // Fresh panel ids on every attempt, so a retry of this timing-sensitive test can run at all.
    const attempt = ++busAttempts;
    const panels = [{ id: panelId, definition }, await makePanel(`bus-b-${attempt}`, "Bus B"), await makePanel(`bus-c-${attempt}`, "Bus C")];
    const emulators = panels.map((p, i) => new PanelEmulator({ panel: p.definition, channels, address: i + 1, timeScale: SPEED }));
    const host = await hostOnSerial(emulators, pty.b);
    try {
      const runId = await createRun(
        panels.map((p, i) => ({ kind: "rs485", panelId: p.id, path: pty.a, address: i + 1 })),
        { name: "Bus" },
      );
      await control(runId, { action: "pause" });
      const done = await playToEnd(runId);
      expect(done.elements).toHaveLength(15);
      expect(done.counts, JSON.stringify({ counts: done.counts, links: done.links })).toMatchObject({ pass: 15, fail: 0 });
      expect(new Set(done.elements.map((e: { panelId: string }) => e.panelId)).size).toBe(3);
    } finally {
      await host.close();
      await pty.close();
    }
  }, 60_000);
});
