import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Visitor } from "../support/test-server";
import { getText, startBench, type Bench } from "./recordings-support";
import { makePanelAirframe, testDefinition, uploadRecording } from "./panels-support";

/**
 * The role matrix for every runs route (issues 5 and 6): viewers list, read and export; builders
 * and owners create, control, rejudge and share; members of other workshops get 404 and
 * anonymous visitors 401. Runs here are never played: control uses "stop", which judges the
 * (empty) seen log without opening any link.
 */
type ActorName = "owner" | "builder" | "viewer" | "outsider" | "anonymous";
const ACTORS: ActorName[] = ["owner", "builder", "viewer", "outsider", "anonymous"];
const READ = { owner: 200, builder: 200, viewer: 200, outsider: 404, anonymous: 401 };
const WRITE = (ok: number) => ({ owner: ok, builder: ok, viewer: 403, outsider: 404, anonymous: 401 });

let bench: Bench;
let base: string;
let panelId: string;
let recordingId: string;
let runId: string;

beforeAll(async () => {
  bench = await startBench();
  base = `/api/workshops/${bench.workshopId}`;
  const airframeId = await makePanelAirframe(bench, "Matrix run rig");
  panelId = (await bench.visitors.owner.post(`${base}/panels`, { airframeId, definition: testDefinition("matrix-run-panel") })).body.id;
  recordingId = await uploadRecording(bench, airframeId);
  runId = await freshRun();
}, 60_000);
afterAll(async () => {
  await bench?.close();
});

async function freshRun(): Promise<string> {
  const made = await bench.visitors.owner.post(`${base}/runs`, { recordingId, links: [{ kind: "virtual", panelId }] });
  expect(made.status).toBe(201);
  return made.body.id;
}
async function freshShare(): Promise<string> {
  return (await bench.visitors.owner.post(`${base}/runs/${runId}/shares`, {})).body.id;
}

interface RouteCase {
  name: string;
  call: (v: Visitor) => Promise<{ status: number }>;
  expect: Record<ActorName, number>;
}

const CASES: RouteCase[] = [
  { name: "GET runs", call: (v) => v.get(`${base}/runs`), expect: READ },
  { name: "POST run", call: (v) => v.post(`${base}/runs`, { recordingId, links: [{ kind: "virtual", panelId }] }), expect: WRITE(201) },
  { name: "GET run", call: (v) => v.get(`${base}/runs/${runId}`), expect: READ },
  { name: "POST control (stop)", call: async (v) => v.post(`${base}/runs/${await freshRun()}/control`, { action: "stop" }), expect: WRITE(200) },
  { name: "POST rejudge", call: (v) => v.post(`${base}/runs/${runId}/rejudge`, { degrees: 5 }), expect: WRITE(200) },
  { name: "GET mismatches", call: (v) => v.get(`${base}/runs/${runId}/mismatches`), expect: READ },
  { name: "GET export.json", call: (v) => getText(v, `${base}/runs/${runId}/export.json`), expect: READ },
  { name: "GET junit.xml", call: (v) => getText(v, `${base}/runs/${runId}/junit.xml`), expect: READ },
  { name: "POST share", call: (v) => v.post(`${base}/runs/${runId}/shares`, { expiresInDays: 3 }), expect: WRITE(201) },
  { name: "GET shares", call: (v) => v.get(`${base}/runs/${runId}/shares`), expect: READ },
  { name: "DELETE share", call: async (v) => v.delete(`${base}/runs/${runId}/shares/${await freshShare()}`), expect: WRITE(200) },
  // The report side (server/routes/run-reports.ts): reading like the report, e-mailing like sharing.
  { name: "GET compare", call: async (v) => v.get(`${base}/runs/${runId}/compare/${await freshRun()}`), expect: READ },
  { name: "GET panel run history", call: (v) => v.get(`${base}/panels/${panelId}/run-history`), expect: READ },
  { name: "GET expected", call: (v) => v.get(`${base}/runs/${runId}/expected`), expect: READ },
  { name: "GET traces", call: (v) => v.get(`${base}/runs/${runId}/traces?panelId=${panelId}&elementId=airspeed`), expect: READ },
  { name: "POST email", call: (v) => v.post(`${base}/runs/${runId}/email`, { addresses: ["matrix-reader@panelproof.example"] }), expect: WRITE(200) },
];

describe("runs role matrix", () => {
  for (const c of CASES) {
    for (const actor of ACTORS) {
      const want = c.expect[actor];
      it(`${c.name} as ${actor} → ${want}`, async () => {
        const reply = await c.call(bench.visitors[actor]);
        expect(reply.status).toBe(want);
      });
    }
  }

  it("refuses bad set-ups with the field named", async () => {
    const o = bench.visitors.owner;
    const twice = await o.post(`${base}/runs`, { recordingId, links: [{ kind: "virtual", panelId }, { kind: "virtual", panelId }] });
    expect(twice.status).toBe(422);
    expect(twice.body.error.issues[0].path).toBe("body.links.1.panelId");
    const none = await o.post(`${base}/runs`, { recordingId, links: [] });
    expect(none.status).toBe(422);
    const unknownRec = await o.post(`${base}/runs`, { recordingId: "nope", links: [{ kind: "virtual", panelId }] });
    expect(unknownRec.body.error.issues[0].path).toBe("body.recordingId");
    const finished = await o.post(`${base}/runs/${runId}/control`, { action: "stop" });
    expect([200, 409]).toContain(finished.status);
    expect((await o.post(`${base}/runs/${runId}/control`, { action: "play" })).status).toBe(409);
  });

  it("watcher and link sockets refuse anonymous, foreign-origin and outsider connections with close codes", async () => {
    const { default: WebSocket } = await import("ws");
    const { cookieOf } = await import("./recordings-support");
    const url = bench.server.url.replace(/^http/, "ws");
    const closeOf = (path: string, headers: Record<string, string>) =>
      new Promise<number>((resolve) => {
        const ws = new WebSocket(url + path, { headers });
        ws.on("close", (code) => resolve(code));
        ws.on("error", () => undefined);
      });
    const fresh = await freshRun();
    expect(await closeOf(`/ws/runs/${fresh}`, { origin: bench.server.url })).toBe(4401);
    expect(await closeOf(`/ws/runs/${fresh}`, { origin: "http://elsewhere.example", cookie: cookieOf(bench.visitors.viewer) })).toBe(4403);
    expect(await closeOf(`/ws/runs/${fresh}`, { origin: bench.server.url, cookie: cookieOf(bench.visitors.outsider) })).toBe(4404);
    expect(await closeOf(`/ws/bench/runs/${fresh}/panels/${panelId}`, { origin: bench.server.url, cookie: cookieOf(bench.visitors.viewer) })).toBe(4403);
    expect(await closeOf(`/ws/bench/runs/nope/panels/${panelId}`, { origin: bench.server.url, cookie: cookieOf(bench.visitors.builder) })).toBe(4404);
  });
});
