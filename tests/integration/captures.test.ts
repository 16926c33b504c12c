import dgram from "node:dgram";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import WebSocket from "ws";
import { randomUUID } from "node:crypto";
import { eq } from "drizzle-orm";
import { capture } from "../../server/db/schema";
import { parseRecording } from "../../shared/recording/recording-file";
import { cookieOf, getText, makeAirframe, startBench, type Bench } from "./recordings-support";

/**
 * Live capture on real sockets: JSON datagrams over UDP (reordered, duplicated, malformed,
 * without the token) and the same messages over WebSocket, then saved as a recording.
 */
let bench: Bench;
let base: string;
let airframeId: string;

beforeAll(async () => {
  bench = await startBench();
  base = `/api/workshops/${bench.workshopId}`;
  airframeId = await makeAirframe(bench, "Capture rig");
});
afterAll(async () => {
  await bench?.close();
});

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function sendAll(port: number, messages: (string | object)[]) {
  const socket = dgram.createSocket("udp4");
  for (const m of messages) {
    const text = typeof m === "string" ? m : JSON.stringify(m);
    await new Promise<void>((resolve, reject) => socket.send(text, port, "127.0.0.1", (e) => (e ? reject(e) : resolve())));
  }
  socket.close();
}

async function until<T>(read: () => Promise<T>, ok: (value: T) => boolean, timeoutMs = 5000): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  let value = await read();
  while (!ok(value) && Date.now() < deadline) {
    await sleep(30);
    value = await read();
  }
  return value;
}

describe("UDP capture", () => {
  it("reorders, drops duplicates and counts malformed datagrams, then saves a recording", async () => {
    const started = await bench.visitors.builder.post(`${base}/captures`, { name: "Circuit over UDP", airframeId, udpPort: 0 });
    expect(started.status).toBe(201);
    const { id, udpPort, token, webSocketPath } = started.body;
    expect(udpPort).toBeGreaterThan(0);
    expect(token).toMatch(/^[A-Za-z0-9_-]{32}$/);
    expect(webSocketPath).toBe(`/ws/captures/${id}`);
    // The token is shown once: reading the capture again never returns it.
    expect((await bench.visitors.viewer.get(`${base}/captures/${id}`)).body.token).toBeUndefined();

    const m = (seq: number, t: number, v: object) => ({ token, seq, t, v });
    await sendAll(udpPort, [
      m(0, 1000, { "elec.master": true, "alt.baro_ft": 320, "gear.handle": "DOWN", "xpdr.code": "1200" }),
      m(2, 1200, { "alt.baro_ft": 340 }), // early: waits for 1
      m(1, 1100, { "alt.baro_ft": 330 }), // late but within the window: placed before 2
      m(1, 1100, { "alt.baro_ft": 330 }), // duplicate
      "this is not JSON",
      { seq: 3, t: 1300, v: { "alt.baro_ft": 350 } }, // no token
      m(4, 1400, { "gear.handle": "SIDEWAYS" }), // not a value of the enum
      m(5, 1500, { "gear.handle": "UP", "flaps.position_deg": 15 }), // a new channel becomes a draft
      m(6, 1600, { "alt.baro_ft": 360 }),
    ]);
    const view = await until(
      async () => (await bench.visitors.viewer.get(`${base}/captures/${id}`)).body,
      (v) => v.received === 9 && v.frames === 4,
    );
    expect(view).toMatchObject({ state: "capturing", received: 9, malformed: 3, outOfOrder: 1, duplicates: 1 });
    expect(view.lastError).toMatch(/seq 4, channel "gear.handle": "SIDEWAYS" is not one of UP, DOWN/);
    expect(view.latest).toMatchObject({ "alt.baro_ft": 360, "gear.handle": "UP", "flaps.position_deg": 15 });

    // Seq 3 never came (no valid token): after the wait window the gap is given up and 5, 6 flow.
    const stopped = await bench.visitors.builder.post(`${base}/captures/${id}/stop`);
    expect(stopped.status).toBe(200);
    expect(stopped.body).toMatchObject({ state: "saved", received: 9 });
    const recordingId = stopped.body.recordingId as string;
    const got = await getText(bench.visitors.viewer, `${base}/recordings/${recordingId}/download?format=ppr`);
    const parsed = parseRecording(got.text);
    expect(parsed.header.source).toBe("capture");
    expect(parsed.frames).toEqual([
      { t: 0, v: { "elec.master": true, "alt.baro_ft": 320, "gear.handle": "DOWN", "xpdr.code": "1200" } },
      { t: 100, v: { "alt.baro_ft": 330 } },
      { t: 200, v: { "alt.baro_ft": 340 } },
      { t: 500, v: { "gear.handle": "UP", "flaps.position_deg": 15 } },
      { t: 600, v: { "alt.baro_ft": 360 } },
    ]);
    const frame = await bench.visitors.viewer.get(`${base}/airframes/${airframeId}`);
    expect(frame.body.channels.find((c: { name: string }) => c.name === "flaps.position_deg")).toMatchObject({ kind: "number", draft: true });

    // Stopped: the port is closed and the capture reads back from its row.
    const again = await bench.visitors.viewer.get(`${base}/captures/${id}`);
    expect(again.body).toMatchObject({ state: "saved", recordingId, malformed: 3, duplicates: 1 });
    expect((await bench.visitors.builder.post(`${base}/captures/${id}/stop`)).body.state).toBe("saved");
  });

  it("a capture that receives nothing stops without a recording; a taken port is a conflict", async () => {
    const first = await bench.visitors.owner.post(`${base}/captures`, { name: "Empty", airframeId });
    const clash = await bench.visitors.owner.post(`${base}/captures`, { name: "Clash", airframeId, udpPort: first.body.udpPort });
    expect(clash.status).toBe(409);
    expect(clash.body.error.message).toMatch(/already in use/);
    const stopped = await bench.visitors.owner.post(`${base}/captures/${first.body.id}/stop`);
    expect(stopped.body).toMatchObject({ state: "stopped", recordingId: null, lastError: "nothing was captured: no valid message arrived" });
  });
});

describe("WebSocket capture", () => {
  function open(url: string, headers: Record<string, string> = {}): Promise<WebSocket> {
    return new Promise((resolve, reject) => {
      const ws = new WebSocket(url, { headers });
      ws.once("open", () => resolve(ws));
      ws.once("unexpected-response", (_req, res) => reject(new Error(`HTTP ${res.statusCode}`)));
      ws.once("error", reject);
    });
  }

  it("accepts the capture token or a builder's session from a trusted origin, and nothing else", async () => {
    const started = await bench.visitors.owner.post(`${base}/captures`, { name: "Over WebSocket", airframeId });
    const { id, token, webSocketPath } = started.body;
    const wsBase = bench.server.url.replace(/^http/, "ws") + webSocketPath;

    await expect(open(`${wsBase}?token=wrong`)).rejects.toThrow("HTTP 401");
    await expect(open(wsBase)).rejects.toThrow("HTTP 403"); // no Origin, no token
    await expect(open(wsBase, { origin: "http://evil.example", cookie: cookieOf(bench.visitors.builder) })).rejects.toThrow("HTTP 403");
    await expect(open(wsBase, { origin: bench.server.url, cookie: cookieOf(bench.visitors.viewer) })).rejects.toThrow("HTTP 403");
    await expect(open(wsBase, { origin: bench.server.url, cookie: cookieOf(bench.visitors.outsider) })).rejects.toThrow("HTTP 404");
    await expect(open(`${bench.server.url.replace(/^http/, "ws")}/ws/captures/nope?token=${token}`)).rejects.toThrow("HTTP 404");

    const exporter = await open(`${wsBase}?token=${token}`);
    exporter.send(JSON.stringify({ seq: 10, t: 50_000, v: { "elec.master": true, "alt.baro_ft": 1000 } }));
    exporter.send(JSON.stringify({ seq: 11, t: 50_250, v: { "alt.baro_ft": 1010 } }));
    exporter.send("{broken");
    const browser = await open(wsBase, { origin: bench.server.url, cookie: cookieOf(bench.visitors.builder) });
    browser.send(JSON.stringify({ seq: 12, t: 50_500, v: { "gear.handle": "UP" } }));

    const view = await until(
      async () => (await bench.visitors.viewer.get(`${base}/captures/${id}`)).body,
      (v) => v.received === 4,
    );
    expect(view).toMatchObject({ received: 4, malformed: 1, outOfOrder: 0, duplicates: 0 });
    const closed = new Promise((resolve) => exporter.once("close", (code) => resolve(code)));
    const stopped = await bench.visitors.owner.post(`${base}/captures/${id}/stop`);
    expect(stopped.body.state).toBe("saved");
    expect(await closed).toBe(1000);
    const detail = await bench.visitors.viewer.get(`${base}/recordings/${stopped.body.recordingId}`);
    expect(detail.body).toMatchObject({ source: "capture", frameCount: 3, durationMs: 500 });
    browser.close();
  });
});

describe("captures whose process is gone", () => {
  /** A capture row as another server process would have left it. */
  async function heldElsewhere(name: string, aliveAgoMs: number | null) {
    const id = randomUUID();
    await bench.server.services.db.insert(capture).values({
      id,
      workshopId: bench.workshopId,
      airframeId,
      name,
      state: "capturing",
      udpPort: 40_000,
      tokenHash: "0".repeat(64),
      received: 42,
      malformed: 3,
      outOfOrder: 2,
      duplicates: 1,
      startedAt: new Date(Date.now() - 120_000),
      heldBy: aliveAgoMs === null ? null : "another-process",
      aliveAt: aliveAgoMs === null ? null : new Date(Date.now() - aliveAgoMs),
    });
    return id;
  }

  it("are marked interrupted when listed or shown, keeping their last counters; fresh ones elsewhere stay", async () => {
    const dead = await heldElsewhere("Held by a dead process", 60_000);
    const neverStamped = await heldElsewhere("Never stamped", null);
    const elsewhere = await heldElsewhere("Held by a live process elsewhere", 500);

    const list = await bench.visitors.viewer.get(`${base}/captures`);
    expect(list.status).toBe(200);
    const byId = new Map(list.body.map((c: { id: string }) => [c.id, c]));
    expect(byId.get(dead)).toMatchObject({ state: "interrupted", received: 42, malformed: 3, outOfOrder: 2, duplicates: 1, recordingId: null });
    expect((byId.get(dead) as { lastError: string }).lastError).toMatch(/stopped without saving/);
    expect((byId.get(dead) as { stoppedAt: string | null }).stoppedAt).not.toBeNull();
    expect(byId.get(neverStamped)).toMatchObject({ state: "interrupted" });
    expect(byId.get(elsewhere)).toMatchObject({ state: "capturing" });
    // Held elsewhere and alive: this process cannot stop it.
    expect((await bench.visitors.builder.post(`${base}/captures/${elsewhere}/stop`)).status).toBe(409);

    // Once its holder stops stamping, showing it is enough to mark it.
    await bench.server.services.db.update(capture).set({ aliveAt: new Date(Date.now() - 30_000) }).where(eq(capture.id, elsewhere));
    const shown = await bench.visitors.viewer.get(`${base}/captures/${elsewhere}`);
    expect(shown.body.state).toBe("interrupted");
    // An interrupted capture is over: stopping it changes nothing.
    const stop = await bench.visitors.builder.post(`${base}/captures/${elsewhere}/stop`);
    expect(stop.status).toBe(200);
    expect(stop.body.state).toBe("interrupted");
  });

  it("a capture held here is stamped with this process and its counters, and never marked interrupted", async () => {
    const started = await bench.visitors.builder.post(`${base}/captures`, { name: "Held here", airframeId });
    const { id, udpPort, token } = started.body;
    await sendAll(udpPort, [{ token, seq: 0, t: 0, v: { "alt.baro_ft": 100 } }, "{nope"]);
    const stamped = await until(
      async () => (await bench.server.services.db.select().from(capture).where(eq(capture.id, id)))[0],
      (row) => row.received === 2,
    );
    expect(stamped.heldBy).toBe(bench.server.services.captures.processId);
    expect(stamped.malformed).toBe(1);
    expect(Date.now() - stamped.aliveAt!.getTime()).toBeLessThan(5_000);
    // Even with an old stamp, this process's own live capture is left alone.
    await bench.server.services.db.update(capture).set({ aliveAt: new Date(Date.now() - 60_000) }).where(eq(capture.id, id));
    expect(await bench.server.services.captures.markInterrupted()).toBe(0);
    const list = await bench.visitors.viewer.get(`${base}/captures`);
    expect(list.body.find((c: { id: string }) => c.id === id)).toMatchObject({ state: "capturing", received: 2, malformed: 1 });
    const stopped = await bench.visitors.builder.post(`${base}/captures/${id}/stop`);
    expect(stopped.body.state).toBe("saved");
    const [row] = await bench.server.services.db.select().from(capture).where(eq(capture.id, id));
    expect(row.heldBy).toBeNull();
    expect(row.state).toBe("saved");
  });
});
