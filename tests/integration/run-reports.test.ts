import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq, sql } from "drizzle-orm";
import { encodeSeenChunk, type SeenRecord } from "../../server/bench/seen-log";
import { outboxMessage, run as runTable, seenLog } from "../../server/db/schema";
import type { SeenShows } from "../../shared/compare/types";
import { expectTimelines } from "../../shared/expect/engine";
import { normalizeAngle } from "../../shared/elements/scale/scale";
import { panel as panelSchema, type Panel } from "../../shared/panel/schema";
import { parseRecording } from "../../shared/recording/recording-file";
import { startBench, type Bench } from "./recordings-support";
import { makePanelAirframe, PANEL_CHANNELS, testDefinition, uploadRecording, RIG_FLIGHT } from "./panels-support";

/**
 * The report side of runs (issue 6): history with pass rates, comparing two runs, e-mailing a
 * report through the fake SMTP server, expected states, a pointer's traces, and the same views
 * through a share link. Runs here are not replayed: each gets a seen log written the way the
 * bench writes it (server/bench/seen-log.ts), then POST .../rejudge judges it with the real
 * comparator from storage, exactly as a finished run is judged.
 */

// The invented rig flight of panels-support.ts: FIRE 2 s to 4 s, gear up at 2 s, code 7700 at 3 s.
const RECORDING = RIG_FLIGHT;
const END_MS = 8000;

let bench: Bench;
let base: string;
let airframeId: string;
let recordingId: string;
let panelId: string;
let definition: Panel;

/** What a healthy panel reports: every expected change 40 ms later, pointers at every point. */
function healthySeen(def: Panel): SeenRecord[] {
  const timelines = expectTimelines(def, parseRecording(RECORDING).frames, { endMs: END_MS });
  const out: SeenRecord[] = [];
  const push = (elementId: string, t: number, shows: SeenShows) => out.push({ elementId, sample: { t: Math.min(END_MS, t + 40), shows } });
  for (const tl of timelines.elements) {
    for (const c of tl.tracks.lamp ?? []) push(tl.id, c.t, { track: "lamp", lamp: c.shows });
    for (const c of tl.tracks.text ?? []) push(tl.id, c.t, { track: "text", text: c.shows });
    for (const c of tl.tracks.position ?? []) push(tl.id, c.t, { track: "position", position: c.shows });
    if (tl.angle) tl.angle.t.forEach((t, i) => push(tl.id, t, { track: "angle", angle: tl.angle!.wrap ? normalizeAngle(tl.angle!.angle[i]) : tl.angle!.angle[i] }));
  }
  return out.sort((a, b) => a.sample.t - b.sample.t);
}

type Fault = (r: SeenRecord) => SeenRecord;
const fireStuckOff: Fault = (r) => (r.elementId === "fire" ? { ...r, sample: { ...r.sample, shows: { track: "lamp", lamp: { state: "off" } } } } : r);
const airspeedOffset: Fault = (r) => (r.elementId === "airspeed" && r.sample.shows.track === "angle" ? { ...r, sample: { ...r.sample, shows: { track: "angle", angle: r.sample.shows.angle + 20 } } } : r);
const xpdrWrong: Fault = (r) => (r.elementId === "xpdr" && r.sample.shows.track === "text" ? { ...r, sample: { ...r.sample, shows: { track: "text", text: "0000" } } } : r);

/** A run whose panel "reported" `seen`: stored as the bench stores it, then judged from storage. */
async function judgedRun(name: string, faults: Fault[], opts: { panel?: string; recording?: string; def?: Panel } = {}): Promise<string> {
  const pid = opts.panel ?? panelId;
  const made = await bench.visitors.builder.post(`${base}/runs`, { name, recordingId: opts.recording ?? recordingId, links: [{ kind: "virtual", panelId: pid }], tolerance: { lagBudgetMs: 300 } });
  expect(made.status, JSON.stringify(made.body)).toBe(201);
  const runId = made.body.id as string;
  const seen = healthySeen(opts.def ?? definition).map((r) => faults.reduce((acc, f) => f(acc), r));
  const db = bench.server.services.db;
  await db.insert(seenLog).values({ runId, panelId: pid, chunk: 0, epoch: 0, fromMs: 0, toMs: END_MS, count: seen.length, payload: encodeSeenChunk(seen) });
  await db.update(runTable).set({ state: "finished", positionMs: END_MS, finishedAt: new Date() }).where(eq(runTable.id, runId));
  const judged = await bench.visitors.builder.post(`${base}/runs/${runId}/rejudge`, { lagBudgetMs: 300 });
  expect(judged.status, JSON.stringify(judged.body)).toBe(200);
  return runId;
}

const statusOf = async (runId: string) =>
  Object.fromEntries(((await bench.visitors.viewer.get(`${base}/runs/${runId}`)).body.elements as { elementId: string; status: string }[]).map((e) => [e.elementId, e.status]));

let earlierRun: string;
let laterRun: string;

beforeAll(async () => {
  bench = await startBench();
  base = `/api/workshops/${bench.workshopId}`;
  airframeId = await makePanelAirframe(bench, "Report rig");
  recordingId = await uploadRecording(bench, airframeId, RECORDING, "Report flight");
  const def = testDefinition("report-panel", "Report panel");
  const made = await bench.visitors.owner.post(`${base}/panels`, { airframeId, definition: def });
  expect(made.status).toBe(201);
  panelId = made.body.id;
  definition = panelSchema.parse(def);
  earlierRun = await judgedRun("Before the fixes", [fireStuckOff, airspeedOffset]);
  laterRun = await judgedRun("After the fixes", [airspeedOffset, xpdrWrong]);
}, 90_000);

afterAll(async () => {
  await bench?.close();
});

describe("the fixtures judge as intended", () => {
  it("fails exactly the faulty elements in each run", async () => {
    expect(await statusOf(earlierRun)).toEqual({ fire: "fail", "alt-100": "pass", airspeed: "fail", xpdr: "pass", gear: "pass" });
    expect(await statusOf(laterRun)).toEqual({ fire: "pass", "alt-100": "pass", airspeed: "fail", xpdr: "fail", gear: "pass" });
  });
});

describe("comparing two runs of the same panel and recording", () => {
  it("says what the later run fixed, what still fails and what is new, whichever order the URL names them", async () => {
    for (const [a, b] of [
      [laterRun, earlierRun],
      [earlierRun, laterRun],
    ]) {
      const reply = await bench.visitors.viewer.get(`${base}/runs/${a}/compare/${b}`);
      expect(reply.status, JSON.stringify(reply.body)).toBe(200);
      expect(reply.body.earlier.id).toBe(earlierRun);
      expect(reply.body.later.id).toBe(laterRun);
      expect(reply.body.headline).toBe("fixed 1, still failing 1, new 1");
      expect(reply.body.fixed.map((c: { elementId: string }) => c.elementId)).toEqual(["fire"]);
      expect(reply.body.stillFailing.map((c: { elementId: string }) => c.elementId)).toEqual(["airspeed"]);
      expect(reply.body.newlyFailing).toEqual([expect.objectContaining({ elementId: "xpdr", label: "XPDR", before: "pass", after: "fail" })]);
      expect(reply.body.unchanged.map((c: { elementId: string }) => c.elementId)).toEqual(["alt-100", "gear"]);
    }
  });

  it("refuses runs of another recording or other panels with where and why, and a run against itself", async () => {
    const otherRecording = await uploadRecording(bench, airframeId, RECORDING, "Another flight");
    const onOther = await judgedRun("Other flight", [], { recording: otherRecording });
    const r1 = await bench.visitors.viewer.get(`${base}/runs/${laterRun}/compare/${onOther}`);
    expect(r1.status).toBe(422);
    expect(r1.body.error.issues[0].path).toBe("params.otherRunId");
    expect(r1.body.error.issues[0].message).toContain('"Another flight"');

    const otherDef = testDefinition("report-panel-two", "Second panel");
    const second = (await bench.visitors.owner.post(`${base}/panels`, { airframeId, definition: otherDef })).body.id as string;
    const onSecond = await judgedRun("Second panel run", [], { panel: second, def: panelSchema.parse(otherDef) });
    const r2 = await bench.visitors.viewer.get(`${base}/runs/${laterRun}/compare/${onSecond}`);
    expect(r2.status).toBe(422);
    expect(r2.body.error.issues[0]).toEqual({ path: "params.otherRunId", message: expect.stringContaining("Second panel") });

    const self = await bench.visitors.viewer.get(`${base}/runs/${laterRun}/compare/${laterRun}`);
    expect(self.status).toBe(422);
  });

  it("answers 404 across workshops and for runs that do not exist", async () => {
    const theirs = (await bench.visitors.outsider.get("/api/me")).body.workshops[0].id as string;
    expect((await bench.visitors.outsider.get(`/api/workshops/${theirs}/runs/${laterRun}/compare/${earlierRun}`)).status).toBe(404);
    expect((await bench.visitors.outsider.get(`${base}/runs/${laterRun}/compare/${earlierRun}`)).status).toBe(404);
    expect((await bench.visitors.viewer.get(`${base}/runs/${laterRun}/compare/no-such-run`)).status).toBe(404);
  });
});

describe("a panel's run history", () => {
  it("lists the panel's runs newest first with its own counts and pass rate", async () => {
    const reply = await bench.visitors.viewer.get(`${base}/panels/${panelId}/run-history`);
    expect(reply.status).toBe(200);
    const mine = reply.body.filter((r: { id: string }) => r.id === earlierRun || r.id === laterRun);
    expect(mine.map((r: { id: string }) => r.id)).toEqual([laterRun, earlierRun]);
    for (const row of mine) {
      expect(row.panelCounts).toEqual({ pass: 3, fail: 2, untested: 0, no_data: 0, placeholder: 0 });
      expect(row.passRate).toBeCloseTo(3 / 5);
    }
    // Runs of other panels are not in this panel's history.
    expect(reply.body.every((r: { panelIds: string[] }) => r.panelIds.includes(panelId))).toBe(true);
    expect((await bench.visitors.outsider.get(`${base}/panels/${panelId}/run-history`)).status).toBe(404);
  });
});

describe("e-mailing a report", () => {
  it("sends the summary, failing elements and links to chosen members and an address, through the fake SMTP server", async () => {
    const members = (await bench.visitors.owner.get(`${base}/members`)).body as { userId: string; email: string; role: string }[];
    const viewer = members.find((m) => m.role === "viewer")!;
    const address = `kit-shop-${Date.now().toString(36)}@panelproof.example`;
    const reply = await bench.visitors.builder.post(`${base}/runs/${laterRun}/email`, {
      memberUserIds: [viewer.userId],
      addresses: [address, viewer.email.toUpperCase()],
      note: "Transponder readout after the rewire.",
      shareLink: { expiresInDays: 3 },
    });
    expect(reply.status, JSON.stringify(reply.body)).toBe(200);
    // The viewer's address typed again is sent once.
    expect(reply.body.sentTo).toEqual([viewer.email.toLowerCase(), address]);
    expect(reply.body.shareUrl).toMatch(/\/shared\/[A-Za-z0-9_-]{32}$/);

    const db = bench.server.services.db;
    const messages = await db.select().from(outboxMessage).where(sql`${outboxMessage.toAddresses} @> ${JSON.stringify([address])}::jsonb`);
    expect(messages).toHaveLength(1);
    const m = messages[0];
    expect(m.subject).toBe("Run report: After the fixes (not passed)");
    expect(m.text).toContain("Transponder readout after the rewire.");
    expect(m.text).toContain("Elements: pass 3, FAIL 2, no data 0, untested 0, placeholder 0");
    expect(m.text).toMatch(/- XPDR \(xpdr\) on Report panel: FAIL, 1 mismatch\n/);
    expect(m.text).toMatch(/- airspeed pointer \(airspeed\) on Report panel: FAIL, \d+ mismatch/);
    expect(m.text).toContain('0.040 s to 8.000 s: wrong value, expected "1200", seen "0000"');
    expect(m.text).not.toContain("FIRE (fire)");
    expect(m.text).toContain(`${bench.server.url}/w/${bench.workshopId}/runs/${laterRun}/report`);
    expect(m.text).toContain(reply.body.shareUrl);
    expect(m.html).toContain("<strong>XPDR</strong>");
    const toViewer = await db.select().from(outboxMessage).where(sql`${outboxMessage.toAddresses} @> ${JSON.stringify([viewer.email.toLowerCase()])}::jsonb AND ${outboxMessage.subject} = ${m.subject}`);
    expect(toViewer).toHaveLength(1);

    // The share link made for the message works without signing in.
    const token = reply.body.shareUrl.split("/shared/")[1];
    expect((await bench.visitors.anonymous.get(`/api/shared/${token}`)).status).toBe(200);
  });

  it("refuses bad recipients with where and why, and viewers", async () => {
    const b = bench.visitors.builder;
    const none = await b.post(`${base}/runs/${laterRun}/email`, {});
    expect(none.status).toBe(422);
    expect(none.body.error.issues[0]).toEqual({ path: "body.addresses", message: "choose at least one member or type an address" });
    const bad = await b.post(`${base}/runs/${laterRun}/email`, { addresses: ["not-an-address"] });
    expect(bad.status).toBe(422);
    expect(bad.body.error.issues[0].path).toBe("body.addresses.0");
    const stranger = await b.post(`${base}/runs/${laterRun}/email`, { memberUserIds: ["no-such-user"] });
    expect(stranger.status).toBe(422);
    expect(stranger.body.error.issues[0]).toEqual({ path: "body.memberUserIds.0", message: "not a member of this workshop" });
    const extra = await b.post(`${base}/runs/${laterRun}/email`, { addresses: ["a@panelproof.example"], bcc: "x" });
    expect(extra.status).toBe(422);
    expect((await bench.visitors.viewer.post(`${base}/runs/${laterRun}/email`, { addresses: ["a@panelproof.example"] })).status).toBe(403);
  });
});

describe("what the report page draws", () => {
  it("answers the run's panels with expected timelines and coverage gaps with suggestions", async () => {
    const reply = await bench.visitors.viewer.get(`${base}/runs/${laterRun}/expected`);
    expect(reply.status).toBe(200);
    expect(reply.body.judgedFromMs).toBe(0);
    expect(reply.body.judgedToMs).toBe(END_MS);
    const [p] = reply.body.panels;
    expect(p.panelId).toBe(panelId);
    expect(p.definition.id).toBe("report-panel");
    const fire = p.timelines.elements.find((e: { id: string }) => e.id === "fire");
    expect(fire.tracks.lamp.map((c: { t: number; shows: { state: string } }) => [c.t, c.shows.state])).toEqual([
      [0, "off"],
      [2000, "on"],
      [4000, "off"],
    ]);
    // Airspeed reached 100 of 200 kt: half its scale.
    expect(p.coverageGaps).toContainEqual({ panelId, elementId: "airspeed", label: "airspeed pointer", gap: "airspeed pointer never above 50% of its scale", suggestion: "add a ramp of ias_kt to 200" });
  });

  it("plots a pointer's expected and seen traces from the stored seen log", async () => {
    const reply = await bench.visitors.viewer.get(`${base}/runs/${laterRun}/traces?panelId=${panelId}&elementId=airspeed`);
    expect(reply.status, JSON.stringify(reply.body)).toBe(200);
    // 0..200 kt on 0..300 degrees: 60 kt is 90 degrees; the injected offset adds 20.
    const expected = reply.body.expected as { t: number[]; angle: number[] };
    // A step is two points at one instant; the later one holds.
    expect(expected.angle[expected.t.lastIndexOf(1000)]).toBeCloseTo(90);
    const seen = reply.body.seen as { t: number[]; angle: number[] };
    expect(seen.t.length).toBeGreaterThan(3);
    expect(seen.angle[seen.t.lastIndexOf(1040)]).toBeCloseTo(110);
    expect(reply.body.wrap).toBe(false);

    const lamp = await bench.visitors.viewer.get(`${base}/runs/${laterRun}/traces?panelId=${panelId}&elementId=fire`);
    expect(lamp.status).toBe(422);
    expect(lamp.body.error.issues[0].path).toBe("query.elementId");
    const missing = await bench.visitors.viewer.get(`${base}/runs/${laterRun}/traces?panelId=${panelId}`);
    expect(missing.status).toBe(422);
    expect(missing.body.error.issues[0].path).toBe("query.elementId");
  });

  it("serves the same views through a share link without signing in, until it is revoked", async () => {
    const made = await bench.visitors.builder.post(`${base}/runs/${laterRun}/shares`, { expiresInDays: 1 });
    const token = made.body.url.split("/shared/")[1];
    const anon = bench.visitors.anonymous;
    const expected = await anon.get(`/api/shared/${token}/expected`);
    expect(expected.status).toBe(200);
    expect(expected.body.panels[0].timelines.elements).toHaveLength(5);
    const traces = await anon.get(`/api/shared/${token}/traces?panelId=${panelId}&elementId=alt-100`);
    expect(traces.status).toBe(200);
    expect(traces.body.wrap).toBe(true);
    expect(traces.body.expected.angle.every((a: number) => a >= 0 && a < 360)).toBe(true);
    expect((await anon.get(`/api/shared/not-a-real-token-at-all/expected`)).status).toBe(404);
    expect((await bench.visitors.builder.delete(`${base}/runs/${laterRun}/shares/${made.body.id}`)).status).toBe(200);
    const revoked = await anon.get(`/api/shared/${token}/traces?panelId=${panelId}&elementId=alt-100`);
    expect(revoked.status).toBe(410);
    expect(revoked.body.error.code).toBe("revoked");
  });
});
