import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Visitor } from "../support/test-server";
import { TEST_CHANNELS, getText, makeAirframe, postBytes, startBench, waitForImport, type Bench } from "./recordings-support";

/**
 * The role matrix for every recordings route (issue 3): viewers read, builders and owners
 * change, members of other workshops get 404 and anonymous visitors 401.
 */
type ActorName = "owner" | "builder" | "viewer" | "outsider" | "anonymous";
const ACTORS: ActorName[] = ["owner", "builder", "viewer", "outsider", "anonymous"];
const READ = { owner: 200, builder: 200, viewer: 200, outsider: 404, anonymous: 401 };
const WRITE = (ok: number) => ({ owner: ok, builder: ok, viewer: 403, outsider: 404, anonymous: 401 });

const DOC = `{"format":"panelproof-recording","version":1,"airframe":"Rig","channels":${JSON.stringify(TEST_CHANNELS)}}
{"t":0,"v":{"elec.master":true,"alt.baro_ft":320,"gear.handle":"DOWN","xpdr.code":"1200"}}
{"t":1000,"v":{"alt.baro_ft":445}}
`;
const SCENARIO = {
  format: "panelproof-scenario",
  version: 1,
  name: "Tiny",
  airframe: "Rig",
  sampleRateHz: 10,
  channels: [{ name: "elec.master", kind: "boolean" }],
  initial: { "elec.master": false },
  tracks: [{ channel: "elec.master", steps: [{ at: 500, set: true }] }],
};

let bench: Bench;
let base: string;
let airframeId: string;
let recordingId: string;
let importId: string;
let captureId: string;

beforeAll(async () => {
  bench = await startBench();
  base = `/api/workshops/${bench.workshopId}`;
  airframeId = await makeAirframe(bench, "Matrix rig");
  const owner = bench.visitors.owner;
  const up = await postBytes(owner, `${base}/recordings/uploads?name=m&airframeId=${airframeId}&format=ppr`, DOC);
  importId = up.body.id;
  recordingId = (await waitForImport(owner, bench.workshopId, importId)).job.recordingId;
  captureId = (await owner.post(`${base}/captures`, { name: "Matrix capture", airframeId })).body.id;
});
afterAll(async () => {
  await bench?.close();
});

async function freshRecording(): Promise<string> {
  const made = await bench.visitors.owner.post(`${base}/recordings/from-scenario`, { name: "Spare", airframeId, scenario: SCENARIO });
  return made.body.id;
}
/** A queued upload to cancel: queued imports wait for the worker, so a cancel finds them queued or running. */
async function freshImport(): Promise<string> {
  const up = await postBytes(bench.visitors.owner, `${base}/recordings/uploads?name=c&airframeId=${airframeId}&format=ppr`, DOC);
  return up.body.id;
}
async function freshCapture(): Promise<string> {
  return (await bench.visitors.owner.post(`${base}/captures`, { name: "Spare capture", airframeId })).body.id;
}

interface RouteCase {
  name: string;
  call: (v: Visitor) => Promise<{ status: number }>;
  expect: Record<ActorName, number>;
}

const CASES: RouteCase[] = [
  { name: "GET airframes", call: (v) => v.get(`${base}/airframes`), expect: READ },
  { name: "POST airframe", call: (v) => v.post(`${base}/airframes`, { name: `Rig ${Math.random()}` }), expect: WRITE(201) },
  { name: "GET airframe", call: (v) => v.get(`${base}/airframes/${airframeId}`), expect: READ },
  { name: "GET airframe channels.json", call: (v) => getText(v, `${base}/airframes/${airframeId}/channels.json`), expect: READ },
  { name: "PUT airframe channels", call: (v) => v.request("PUT", `${base}/airframes/${airframeId}/channels`, { channels: TEST_CHANNELS }), expect: WRITE(200) },
  { name: "GET recordings", call: (v) => v.get(`${base}/recordings`), expect: READ },
  { name: "GET recording", call: (v) => v.get(`${base}/recordings/${recordingId}`), expect: READ },
  { name: "GET recording series", call: (v) => v.get(`${base}/recordings/${recordingId}/series?channels=alt.baro_ft`), expect: READ },
  { name: "GET recording state", call: (v) => v.get(`${base}/recordings/${recordingId}/state?t=10`), expect: READ },
  { name: "GET recording download", call: (v) => getText(v, `${base}/recordings/${recordingId}/download?format=csv`), expect: READ },
  { name: "GET recording original", call: (v) => getText(v, `${base}/recordings/${recordingId}/original`), expect: READ },
  { name: "PATCH recording", call: (v) => v.patch(`${base}/recordings/${recordingId}`, { name: "Matrix flight" }), expect: WRITE(200) },
  { name: "DELETE recording", call: async (v) => v.delete(`${base}/recordings/${await freshRecording()}`), expect: WRITE(204) },
  { name: "POST upload", call: (v) => postBytes(v, `${base}/recordings/uploads?name=u&airframeId=${airframeId}&format=ppr`, DOC), expect: WRITE(202) },
  { name: "POST from-scenario", call: (v) => v.post(`${base}/recordings/from-scenario`, { name: "S", airframeId, scenario: SCENARIO }), expect: WRITE(201) },
  { name: "GET imports", call: (v) => v.get(`${base}/imports`), expect: READ },
  { name: "GET import", call: (v) => v.get(`${base}/imports/${importId}`), expect: READ },
  {
    name: "POST import cancel",
    // Allowed roles get 200 (cancelled in time) or 409 (the tiny import already ended): both mean the route let them in.
    call: async (v) => {
      const reply = await v.post(`${base}/imports/${await freshImport()}/cancel`);
      return { status: reply.status === 409 ? 200 : reply.status };
    },
    expect: WRITE(200),
  },
  { name: "POST capture", call: (v) => v.post(`${base}/captures`, { name: "C", airframeId }), expect: WRITE(201) },
  { name: "GET captures", call: (v) => v.get(`${base}/captures`), expect: READ },
  { name: "GET capture", call: (v) => v.get(`${base}/captures/${captureId}`), expect: READ },
  { name: "POST capture stop", call: async (v) => v.post(`${base}/captures/${await freshCapture()}/stop`), expect: WRITE(200) },
];

describe("recordings role matrix", () => {
  for (const c of CASES) {
    for (const actor of ACTORS) {
      const want = c.expect[actor];
      it(`${c.name} as ${actor} → ${want}`, async () => {
        const reply = await c.call(bench.visitors[actor]);
        expect(reply.status).toBe(want);
      });
    }
  }

  it("ids from another workshop are not found, even by its own members' routes", async () => {
    const other = bench.visitors.outsider;
    const me = await other.get("/api/me");
    const otherWorkshop = me.body.workshops[0].id as string;
    {
      expect((await other.get(`/api/workshops/${otherWorkshop}/recordings/${recordingId}`)).status).toBe(404);
      expect((await other.get(`/api/workshops/${otherWorkshop}/airframes/${airframeId}`)).status).toBe(404);
      expect((await other.get(`/api/workshops/${otherWorkshop}/imports/${importId}`)).status).toBe(404);
      expect((await other.get(`/api/workshops/${otherWorkshop}/captures/${captureId}`)).status).toBe(404);
    }
  });
});
