import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Visitor } from "../support/test-server";
import { getText, startBench, type Bench } from "./recordings-support";
import { getBytes, makePanelAirframe, putBytes, testDefinition, testImage, uploadRecording } from "./panels-support";

/**
 * The role matrix for every panels route (issue 4): viewers read, preview and export; builders
 * and owners change; members of other workshops get 404 and anonymous visitors 401.
 */
type ActorName = "owner" | "builder" | "viewer" | "outsider" | "anonymous";
const ACTORS: ActorName[] = ["owner", "builder", "viewer", "outsider", "anonymous"];
const READ = { owner: 200, builder: 200, viewer: 200, outsider: 404, anonymous: 401 };
const WRITE = (ok: number) => ({ owner: ok, builder: ok, viewer: 403, outsider: 404, anonymous: 401 });

let bench: Bench;
let base: string;
let airframeId: string;
let panelId: string;
let recordingId: string;
let tokenId: string;
/** A panel whose airspeed pointer has a motor, for the motion route (the PUT case rewrites panelId). */
let motorPanelId: string;
let photo: Buffer;
let counter = 0;

beforeAll(async () => {
  bench = await startBench();
  base = `/api/workshops/${bench.workshopId}`;
  airframeId = await makePanelAirframe(bench, "Matrix panel rig");
  const owner = bench.visitors.owner;
  panelId = (await owner.post(`${base}/panels`, { airframeId, definition: testDefinition("matrix-panel") })).body.id;
  photo = await testImage(60, 40);
  expect((await putBytes(owner, `${base}/panels/${panelId}/photo`, photo, "image/jpeg")).status).toBe(200);
  recordingId = await uploadRecording(bench, airframeId);
  tokenId = (await owner.post(`${base}/panels/${panelId}/tokens`, { label: "matrix board" })).body.id;
  const withMotor = testDefinition("matrix-motor");
  withMotor.elements = withMotor.elements.map((e) =>
    e.id === "airspeed" ? { ...e, motor: { degreesPerFullStep: 1, microstepping: 1, sweep: { kind: "limited", minDegrees: 0, maxDegrees: 315 }, maxStepsPerSecond: 500, accelerationStepsPerSecond2: 5000 } } : e,
  ) as typeof withMotor.elements;
  motorPanelId = (await owner.post(`${base}/panels`, { airframeId, definition: withMotor })).body.id;
  expect(motorPanelId).toBeTruthy();
});
afterAll(async () => {
  await bench?.close();
});

const fresh = () => `matrix-${++counter}-${Math.random().toString(36).slice(2, 6)}`;
async function freshPanel(): Promise<string> {
  return (await bench.visitors.owner.post(`${base}/panels`, { airframeId, definition: testDefinition(fresh()) })).body.id;
}
async function freshToken(): Promise<string> {
  return (await bench.visitors.owner.post(`${base}/panels/${panelId}/tokens`, { label: "spare" })).body.id;
}

interface RouteCase {
  name: string;
  call: (v: Visitor) => Promise<{ status: number }>;
  expect: Record<ActorName, number>;
}

const CASES: RouteCase[] = [
  { name: "GET panels", call: (v) => v.get(`${base}/panels`), expect: READ },
  { name: "POST panel", call: (v) => v.post(`${base}/panels`, { airframeId, definition: testDefinition(fresh()) }), expect: WRITE(201) },
  { name: "GET panel", call: (v) => v.get(`${base}/panels/${panelId}`), expect: READ },
  { name: "PUT panel", call: (v) => v.request("PUT", `${base}/panels/${panelId}`, { definition: testDefinition("matrix-panel", "Matrix") }), expect: WRITE(200) },
  { name: "PATCH panel", call: (v) => v.patch(`${base}/panels/${panelId}`, { name: "Matrix panel" }), expect: WRITE(200) },
  { name: "DELETE panel", call: async (v) => v.delete(`${base}/panels/${await freshPanel()}`), expect: WRITE(204) },
  { name: "POST duplicate", call: (v) => v.post(`${base}/panels/${panelId}/duplicate`), expect: WRITE(201) },
  { name: "POST mirror", call: (v) => v.post(`${base}/panels/${panelId}/mirror`, { slug: fresh() }), expect: WRITE(201) },
  { name: "GET export.json", call: (v) => getText(v, `${base}/panels/${panelId}/export.json`), expect: READ },
  { name: "GET device-header.h", call: (v) => getText(v, `${base}/panels/${panelId}/device-header.h`), expect: READ },
  { name: "PUT photo", call: (v) => putBytes(v, `${base}/panels/${panelId}/photo`, photo, "image/jpeg"), expect: WRITE(200) },
  { name: "GET photo", call: (v) => getBytes(v, `${base}/panels/${panelId}/photo`), expect: READ },
  { name: "DELETE photo", call: async (v) => v.delete(`${base}/panels/${await freshPanel()}/photo`), expect: WRITE(200) },
  { name: "PUT markers", call: (v) => v.request("PUT", `${base}/panels/${panelId}/markers`, { markers: { fire: { x: 0.5, y: 0.5 } } }), expect: WRITE(200) },
  { name: "GET expected", call: (v) => v.get(`${base}/panels/${panelId}/expected?recordingId=${recordingId}`), expect: READ },
  { name: "GET element motion", call: (v) => v.get(`${base}/panels/${motorPanelId}/elements/airspeed/motion?recordingId=${recordingId}`), expect: READ },
  { name: "GET tokens", call: (v) => v.get(`${base}/panels/${panelId}/tokens`), expect: READ },
  { name: "POST token", call: (v) => v.post(`${base}/panels/${panelId}/tokens`, { label: "board" }), expect: WRITE(201) },
  { name: "POST token revoke", call: async (v) => v.post(`${base}/panels/${panelId}/tokens/${await freshToken()}/revoke`), expect: WRITE(200) },
];

describe("panels role matrix", () => {
  for (const c of CASES) {
    for (const actor of ACTORS) {
      const want = c.expect[actor];
      it(`${c.name} as ${actor} → ${want}`, async () => {
        const reply = await c.call(bench.visitors[actor]);
        expect(reply.status).toBe(want);
      });
    }
  }

  it("ids from another workshop are not found through the outsider's own workshop", async () => {
    const other = bench.visitors.outsider;
    const me = await other.get("/api/me");
    const theirs = `/api/workshops/${me.body.workshops[0].id as string}`;
    const their = await other.post(`${theirs}/airframes`, { name: "Their rig" });
    expect(their.status).toBe(201);
    const paths = [
      `${theirs}/panels/${panelId}`,
      `${theirs}/panels/${panelId}/export.json`,
      `${theirs}/panels/${panelId}/device-header.h`,
      `${theirs}/panels/${panelId}/photo`,
      `${theirs}/panels/${panelId}/tokens`,
      `${theirs}/panels/${panelId}/expected?recordingId=${recordingId}`,
      `${theirs}/panels/${motorPanelId}/elements/airspeed/motion?recordingId=${recordingId}`,
    ];
    for (const p of paths) expect((await getText(other, p)).status, p).toBe(404);
    expect((await other.request("PUT", `${theirs}/panels/${panelId}`, { definition: testDefinition("matrix-panel") })).status).toBe(404);
    expect((await other.patch(`${theirs}/panels/${panelId}`, { name: "Taken" })).status).toBe(404);
    expect((await other.delete(`${theirs}/panels/${panelId}`)).status).toBe(404);
    expect((await other.post(`${theirs}/panels/${panelId}/duplicate`)).status).toBe(404);
    expect((await other.post(`${theirs}/panels/${panelId}/mirror`)).status).toBe(404);
    expect((await putBytes(other, `${theirs}/panels/${panelId}/photo`, photo, "image/jpeg")).status).toBe(404);
    expect((await other.request("PUT", `${theirs}/panels/${panelId}/markers`, { markers: {} })).status).toBe(404);
    expect((await other.post(`${theirs}/panels/${panelId}/tokens/${tokenId}/revoke`)).status).toBe(404);
    // Creating a panel on our airframe from their workshop: the airframe is not theirs.
    expect((await other.post(`${theirs}/panels`, { airframeId, definition: testDefinition("stolen") })).status).toBe(404);
    // Their own panel cannot preview our recording.
    const ownPanel = await other.post(`${theirs}/panels`, { airframeId: their.body.id, definition: { id: "own", name: "Own", airframe: "x", elements: [] } });
    expect(ownPanel.status).toBe(201);
    expect((await other.get(`${theirs}/panels/${ownPanel.body.id}/expected?recordingId=${recordingId}`)).status).toBe(404);
    // Our panel and token are untouched.
    const ours = await bench.visitors.owner.get(`${base}/panels/${panelId}`);
    expect(ours.status).toBe(200);
    expect((await bench.visitors.owner.get(`${base}/panels/${panelId}/tokens`)).body.find((t: { id: string }) => t.id === tokenId).revokedAt).toBeNull();
  });
});
