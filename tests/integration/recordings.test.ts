import { readFileSync, readdirSync } from "node:fs";
import path from "node:path";
import { gzipSync } from "node:zlib";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { importCsv } from "../../shared/recording/csv-import";
import { stateAtFrames, type Frame } from "../../shared/recording/frames";
import { parseRecording, writeRecording, type RecordingHeader } from "../../shared/recording/recording-file";
import { generateScenario } from "../../shared/recording/scenario";
import { recordingColumnsOf, stateAtInstant } from "../../server/recordings/read";
import { Visitor } from "../support/test-server";
import {
  TEST_CHANNELS,
  getText,
  makeAirframe,
  postBytes,
  startBench,
  startRecordingsServer,
  waitForImport,
  type Bench,
} from "./recordings-support";

/**
 * Recordings on the real database and real HTTP: uploads in three forms, background imports
 * with progress, all-or-nothing refusals that say where and why, reading back (detail, series,
 * one-segment seeks, downloads), scenarios, rename and delete.
 */

// The complete example of docs/recording-format.md (an invented airframe).
const DOC_EXAMPLE = `{"format":"panelproof-recording","version":1,"airframe":"Marlin TX-2 (invented twin)","channels":[{"name":"elec.master","kind":"boolean","description":"Battery master switch"},{"name":"alt.baro_ft","kind":"number","unit":"ft","min":-1000,"max":30000},{"name":"gear.handle","kind":"enum","values":["UP","DOWN"]},{"name":"xpdr.code","kind":"text","maxLength":4}],"notes":"Invented example.","source":"file","sampleRateHz":1,"durationMs":4000,"createdAt":"2026-12-01T10:00:00Z"}
{"t":0,"v":{"elec.master":true,"alt.baro_ft":320,"gear.handle":"DOWN","xpdr.code":"1200"}}
{"t":1000,"v":{"alt.baro_ft":445}}
{"t":2000,"v":{"alt.baro_ft":570,"gear.handle":"UP"}}
{"t":3500,"v":{"xpdr.code":"4521"}}
`;

const HEADER: RecordingHeader = {
  format: "panelproof-recording",
  version: 1,
  airframe: "Test rig (invented)",
  channels: TEST_CHANNELS as RecordingHeader["channels"],
};

/** A longer invented flight: `n` frames 50 ms apart, altitude every frame, gear now and then. */
function longFlight(n: number): Frame[] {
  const frames: Frame[] = [{ t: 0, v: { "elec.master": true, "alt.baro_ft": 0, "gear.handle": "DOWN", "xpdr.code": "1200" } }];
  for (let i = 1; i < n; i++) {
    // Even and odd values alternate, so every frame really changes the altitude.
    const v: Frame["v"] = { "alt.baro_ft": 2 * Math.round(2500 + 2000 * Math.sin(i / 300)) + (i % 2) };
    if (i % 997 === 0) v["gear.handle"] = (i / 997) % 2 ? "UP" : "DOWN";
    if (i % 1500 === 0) v["xpdr.code"] = String(1000 + (i % 7000)).slice(0, 4);
    frames.push({ t: i * 50, v });
  }
  return frames;
}

let bench: Bench;
let airframeId: string;
let base: string;
let owner: Visitor;

async function upload(query: string, bytes: Uint8Array | string, who: Visitor = owner) {
  return postBytes(who, `${base}/recordings/uploads?${query}`, bytes);
}

async function importFile(name: string, bytes: Uint8Array | string, extra = "format=ppr") {
  const reply = await upload(`name=${encodeURIComponent(name)}&airframeId=${airframeId}&${extra}`, bytes);
  expect(reply.status, JSON.stringify(reply.body)).toBe(202);
  expect(reply.body.state).toBe("queued");
  return waitForImport(owner, bench.workshopId, reply.body.id);
}

async function framesOfDownload(recordingId: string): Promise<Frame[]> {
  const got = await getText(owner, `${base}/recordings/${recordingId}/download?format=ppr`);
  expect(got.status).toBe(200);
  return parseRecording(got.text).frames;
}

beforeAll(async () => {
  bench = await startBench();
  owner = bench.visitors.owner;
  base = `/api/workshops/${bench.workshopId}`;
  airframeId = await makeAirframe(bench, "Marlin TX-2 (invented twin)");
});
afterAll(async () => {
  await bench?.close();
});

describe("airframes and catalogues", () => {
  it("lists, shows and exports a catalogue; refuses a bad one saying where", async () => {
    const list = await owner.get(`${base}/airframes`);
    expect(list.status).toBe(200);
    expect(list.body.find((a: { id: string }) => a.id === airframeId)).toMatchObject({ channelCount: 4, draftChannelCount: 0 });
    const detail = await owner.get(`${base}/airframes/${airframeId}`);
    expect(detail.body.channels.map((c: { name: string }) => c.name)).toEqual(TEST_CHANNELS.map((c) => c.name));
    const file = await getText(owner, `${base}/airframes/${airframeId}/channels.json`);
    expect(file.headers.get("content-disposition")).toMatch(/attachment; filename=".*channels\.json"/);
    expect(JSON.parse(file.text).channels).toEqual(detail.body.channels);

    const bad = await owner.request("PUT", `${base}/airframes/${airframeId}/channels`, {
      channels: [...TEST_CHANNELS, { name: "gear.handle", kind: "boolean" }],
    });
    expect(bad.status).toBe(422);
    expect(bad.body.error.issues[0]).toEqual({ path: "body.channels.4.name", message: 'duplicate channel "gear.handle" (first at channels[2])' });
    const dup = await owner.post(`${base}/airframes`, { name: "Marlin TX-2 (invented twin)" });
    expect(dup.status).toBe(409);
  });
});

describe("uploads and background imports", () => {
  let exampleId: string;

  it("imports a Panelproof file: progress reaches done, stats, state, series and download match the file", async () => {
    const { job } = await importFile("Doc example", DOC_EXAMPLE);
    expect(job).toMatchObject({ state: "done", frames: 4, bytesRead: Buffer.byteLength(DOC_EXAMPLE), bytesTotal: Buffer.byteLength(DOC_EXAMPLE), error: null });
    exampleId = job.recordingId;

    const detail = await owner.get(`${base}/recordings/${exampleId}`);
    expect(detail.body).toMatchObject({ name: "Doc example", source: "file", status: "ready", durationMs: 4000, frameCount: 4, channelCount: 4, sizeBytes: Buffer.byteLength(DOC_EXAMPLE), notes: "Invented example.", createdBy: "Rec Owner" });
    expect(detail.body.frameRate).toBe(1);
    const stats = Object.fromEntries(detail.body.channels.map((c: { name: string }) => [c.name, c]));
    expect(stats["alt.baro_ft"]).toMatchObject({ kind: "number", unit: "ft", changes: 3, min: 320, max: 570, distinct: null });
    expect(stats["gear.handle"]).toMatchObject({ changes: 2, min: null, distinct: ["DOWN", "UP"] });
    expect(stats["elec.master"]).toMatchObject({ changes: 1, distinct: [true] });

    // The state docs/recording-format.md gives for 2,500 ms.
    const state = await owner.get(`${base}/recordings/${exampleId}/state?t=2500`);
    expect(state.body).toEqual({ t: 2500, values: { "elec.master": true, "alt.baro_ft": 570, "gear.handle": "UP", "xpdr.code": "1200" } });

    const series = await owner.get(`${base}/recordings/${exampleId}/series?channels=alt.baro_ft,gear.handle,xpdr.code&fromMs=500`);
    expect(series.status).toBe(200);
    expect(series.body.series["alt.baro_ft"]).toEqual({ t: [500, 1000, 2000], v: [320, 445, 570] });
    // Enums plot as their index (UP is 0, DOWN 1), text as null.
    expect(series.body.series["gear.handle"]).toEqual({ t: [500, 2000], v: [1, 0] });
    expect(series.body.series["xpdr.code"].v).toEqual([null, null]);
    const badSeries = await owner.get(`${base}/recordings/${exampleId}/series?channels=alt.baro_ft,flaps.deg`);
    expect(badSeries.status).toBe(422);
    expect(badSeries.body.error.issues[0].path).toBe("query.channels.1");

    const original = parseRecording(DOC_EXAMPLE);
    expect(await framesOfDownload(exampleId)).toEqual(original.frames);
    const csv = await getText(owner, `${base}/recordings/${exampleId}/download?format=csv`);
    expect(csv.headers.get("content-type")).toMatch(/text\/csv/);
    expect(csv.text.split("\n")[0]).toBe("time [ms],elec.master,alt.baro_ft [ft],gear.handle,xpdr.code");
    // The CSV reads back through our own importer to the same frames.
    const back = importCsv(csv.text, { delimiter: ",", decimalMark: ".", channels: original.header.channels });
    expect(back.frames).toEqual(original.frames);
  });

  it("imports a gzip file of many segments, with progress counted in file bytes and frames", async () => {
    const frames = longFlight(30_000); // 25 minutes at 20 Hz: 300 segments, several insert batches
    const text = writeRecording(HEADER, frames);
    const gz = gzipSync(Buffer.from(text));
    const { job } = await importFile("Long gzip flight", gz);
    expect(job).toMatchObject({ state: "done", frames: 30_000, bytesRead: gz.length, bytesTotal: gz.length });
    const detail = await owner.get(`${base}/recordings/${job.recordingId}`);
    expect(detail.body).toMatchObject({ frameCount: 30_000, durationMs: 29_999 * 50, sizeBytes: gz.length });
    expect(await framesOfDownload(job.recordingId)).toEqual(frames);

    // A seek reads exactly one segment and agrees with folding every frame.
    for (const t of [0, 49, 50, 777_777, 1_000_000, 1_499_950, 5_000_000]) {
      const { state, segmentsRead } = await stateAtInstant(bench.server.services.db, job.recordingId, t);
      expect(segmentsRead).toBe(1);
      expect({ ...state }).toEqual({ ...stateAtFrames(frames, t) });
    }
    // Read straight into columns (what expected timelines are computed from), over many batches of
    // rows: the same samples as the frames, in order, only the channels asked for.
    const columns = await recordingColumnsOf(bench.server.services.db, job.recordingId, ["alt.baro_ft", "gear.handle"], 7);
    expect(columns.frames).toBe(frames.length);
    expect(columns.lastT).toBe(frames.at(-1)!.t);
    expect([...columns.byChannel.keys()].sort()).toEqual(["alt.baro_ft", "gear.handle"]);
    for (const name of ["alt.baro_ft", "gear.handle"]) {
      const column = columns.column(name);
      const fromFrames = frames.flatMap((f) => (name in f.v ? [[f.t, f.v[name]]] : []));
      expect(Array.from({ length: column.length }, (_, i) => [column.times[i], column.valueAt(i)])).toEqual(fromFrames);
    }
    const series = await owner.get(`${base}/recordings/${job.recordingId}/series?channels=alt.baro_ft&maxPoints=400`);
    expect(series.body.series["alt.baro_ft"].t.length).toBeLessThanOrEqual(400);
    // Min/max decimation keeps the extremes.
    const values = frames.map((f) => f.v["alt.baro_ft"]).filter((v) => v !== undefined) as number[];
    expect(Math.max(...series.body.series["alt.baro_ft"].v)).toBe(Math.max(...values));
    expect(Math.min(...series.body.series["alt.baro_ft"].v)).toBe(Math.min(...values));
  });

  it("imports a CSV with the delimiter and decimal mark chosen, and gzip CSV too", async () => {
    // The CSV example of docs/recording-format.md.
    const csv = 'time [s];alt.baro_ft [ft];gear.handle;elec.master;xpdr.code\n0;320;DOWN;true;1200\n1;445;;;\n2;570,5;UP;;\n3,5;;;;"4521"\n';
    for (const [name, body] of [["CSV example", csv], ["CSV example gz", gzipSync(Buffer.from(csv))]] as const) {
      const { job } = await importFile(name, body, "format=csv&delimiter=semicolon&decimalMark=comma");
      expect(job.state, JSON.stringify(job.error)).toBe("done");
      const detail = await owner.get(`${base}/recordings/${job.recordingId}`);
      expect(detail.body.source).toBe("csv");
      expect(await framesOfDownload(job.recordingId)).toEqual([
        { t: 0, v: { "alt.baro_ft": 320, "gear.handle": "DOWN", "elec.master": true, "xpdr.code": "1200" } },
        { t: 1000, v: { "alt.baro_ft": 445 } },
        { t: 2000, v: { "alt.baro_ft": 570.5, "gear.handle": "UP" } },
        { t: 3500, v: { "xpdr.code": "4521" } },
      ]);
    }
    const noOptions = await upload(`name=x&airframeId=${airframeId}&format=csv`, csv);
    expect(noOptions.status).toBe(422);
    expect(noOptions.body.error.issues[0]).toMatchObject({ path: "query.delimiter" });
  });

  it("adds channels first seen in an import as drafts only when asked", async () => {
    const header = { ...HEADER, channels: [...HEADER.channels, { name: "flaps.position_deg", kind: "number", unit: "deg" }] } as RecordingHeader;
    const text = writeRecording(header, [{ t: 0, v: { "flaps.position_deg": 10, "elec.master": true } }]);
    const refused = await importFile("With flaps (refused)", text);
    expect(refused.job.state).toBe("failed");
    expect(refused.job.error).toMatchObject({ where: 'line 1, field channels[4], channel "flaps.position_deg"', code: "unknown_channel" });
    expect(refused.job.error.message).toMatch(/not in the airframe's catalogue/);

    const drafted = await importFile("With flaps", text, "format=ppr&addDraftChannels=true");
    expect(drafted.job.state).toBe("done");
    const frame = await owner.get(`${base}/airframes/${airframeId}`);
    expect(frame.body.draftChannelCount).toBe(1);
    expect(frame.body.channels.at(-1)).toMatchObject({ name: "flaps.position_deg", kind: "number", draft: true });
    // Put the catalogue back for the other tests.
    await owner.request("PUT", `${base}/airframes/${airframeId}/channels`, { channels: TEST_CHANNELS });
  });

  describe("bad input is refused with where and why, and leaves nothing behind", () => {
    const header = JSON.stringify(HEADER);
    const ok = '{"t":0,"v":{"elec.master":true,"alt.baro_ft":320,"gear.handle":"DOWN","xpdr.code":"1200"}}';
    const bigFlight = writeRecording(HEADER, longFlight(20_000));
    const truncated = gzipSync(Buffer.from(writeRecording(HEADER, longFlight(2_000))));
    const cases: { name: string; body: string | Uint8Array; query?: string; code: string; where: string | RegExp | null; why: RegExp }[] = [
      { name: "malformed JSON", body: `${header}\n${ok}\n{"t":10,"v":{"alt.baro_ft":}}\n`, code: "malformed_json", where: "line 3", why: /malformed JSON/ },
      { name: "unknown version", body: header.replace('"version":1', '"version":2') + `\n${ok}\n`, code: "unknown_version", where: "line 1, field version", why: /unknown format version 2/ },
      { name: "time going backwards", body: `${header}\n${ok}\n{"t":20,"v":{"alt.baro_ft":330}}\n{"t":10,"v":{"alt.baro_ft":340}}\n`, code: "time_backwards", where: "line 4, field t", why: /before the previous frame's 20 ms/ },
      { name: "conflicting duplicate time", body: `${header}\n${ok}\n{"t":20,"v":{"gear.handle":"UP"}}\n{"t":20,"v":{"gear.handle":"DOWN"}}\n`, code: "conflicting_duplicate", where: 'line 4, channel "gear.handle"', why: /appears again/ },
      { name: "NaN", body: `${header}\n{"t":0,"v":{"alt.baro_ft":NaN}}\n`, code: "not_finite", where: "line 2, column 27", why: /NaN/ },
      { name: "value outside its kind", body: `${header}\n{"t":0,"v":{"elec.master":"on"}}\n`, code: "wrong_kind", where: 'line 2, field v, channel "elec.master"', why: /not true or false/ },
      { name: "unknown enum value", body: `${header}\n{"t":0,"v":{"gear.handle":"DOWNN"}}\n`, code: "unknown_enum_value", where: 'line 2, field v, channel "gear.handle"', why: /not one of UP, DOWN/ },
      { name: "channel missing from the header", body: `${header}\n{"t":0,"v":{"flaps.deg":5}}\n`, code: "unknown_channel", where: 'line 2, field v, channel "flaps.deg"', why: /not in the header/ },
      { name: "header only", body: `${header}\n`, code: "no_frames", where: "line 1", why: /no frames/ },
      { name: "truncated gzip", body: truncated.subarray(0, truncated.length - 100), code: "truncated_gzip", where: /^byte \d+$/, why: /truncated/ },
      { name: "wrong CSV delimiter", body: "time;alt.baro_ft\n0;320\n", query: "format=csv&delimiter=comma&decimalMark=point", code: "csv_delimiter", where: "row 1", why: /choose ';' as the delimiter/ },
      { name: "a bad line after many segments were written", body: `${bigFlight}{"t":1,"v":{}}\n`, code: "time_backwards", where: "line 20002, field t", why: /before the previous frame's/ },
    ];

    let before: { list: unknown; detail: unknown; state: unknown; segments: number };
    async function snapshot(recordingId: string) {
      const { rows } = await bench.server.services.db.$client.query("select count(*)::int as n from recording_segment");
      return {
        list: (await owner.get(`${base}/recordings`)).body,
        detail: (await owner.get(`${base}/recordings/${recordingId}`)).body,
        state: (await owner.get(`${base}/recordings/${recordingId}/state?t=3000`)).body,
        segments: rows[0].n as number,
      };
    }
    let existingId: string;
    beforeAll(async () => {
      existingId = (await importFile("Existing", DOC_EXAMPLE)).job.recordingId;
      before = await snapshot(existingId);
    });

    for (const c of cases) {
      it(c.name, async () => {
        const { job } = await importFile(`bad: ${c.name}`, c.body, c.query ?? "format=ppr");
        expect(job.state).toBe("failed");
        expect(job.recordingId).toBeNull();
        expect(job.error.code).toBe(c.code);
        if (c.where instanceof RegExp) expect(job.error.where).toMatch(c.where);
        else expect(job.error.where).toBe(c.where);
        expect(job.error.message).toMatch(c.why);
      });
    }

    it("and no recording was added or changed by any of them", async () => {
      const after = await snapshot(existingId);
      // Other files' tests may add segments to the shared database; count this workshop's instead.
      expect(after.list).toEqual(before.list);
      expect(after.detail).toEqual(before.detail);
      expect(after.state).toEqual(before.state);
      const { rows } = await bench.server.services.db.$client.query(
        "select count(*)::int as n from recording_segment s join recording r on r.id = s.recording_id where r.workshop_id = $1",
        [bench.workshopId],
      );
      const listed = (after.list as { id: string }[]).length;
      expect(listed).toBe((before.list as unknown[]).length);
      expect(rows[0].n).toBeGreaterThan(0);
    });

    it("an empty body is refused at once", async () => {
      const reply = await upload(`name=empty&airframeId=${airframeId}&format=ppr`, "");
      expect(reply.status).toBe(422);
      expect(reply.body.error.issues).toEqual([{ path: "body", message: "the file is empty" }]);
    });

    it("the imports list shows every import with its error, newest first", async () => {
      const list = await owner.get(`${base}/imports`);
      expect(list.status).toBe(200);
      const failed = list.body.filter((j: { state: string }) => j.state === "failed");
      expect(failed.length).toBeGreaterThanOrEqual(cases.length);
      const times = list.body.map((j: { createdAt: string }) => Date.parse(j.createdAt));
      expect([...times].sort((a, b) => b - a)).toEqual(times);
    });
  });

  it("keeps the uploaded original through the storage driver, and deletes it with the recording", async () => {
    const { job } = await importFile("To delete", DOC_EXAMPLE);
    const files = () => readdirSync(path.join(bench.storageDir, "workshops", bench.workshopId, "uploads"));
    expect(files()).toContain(`${job.id}.ppr`);
    expect(readFileSync(path.join(bench.storageDir, "workshops", bench.workshopId, "uploads", `${job.id}.ppr`), "utf8")).toBe(DOC_EXAMPLE);

    const renamed = await bench.visitors.builder.patch(`${base}/recordings/${job.recordingId}`, { name: "  Renamed flight " });
    expect(renamed.status).toBe(200);
    expect(renamed.body.name).toBe("Renamed flight");
    expect((await bench.visitors.builder.delete(`${base}/recordings/${job.recordingId}`)).status).toBe(204);
    expect((await owner.get(`${base}/recordings/${job.recordingId}`)).status).toBe(404);
    expect(files()).not.toContain(`${job.id}.ppr`);
    const { rows } = await bench.server.services.db.$client.query("select count(*)::int as n from recording_segment where recording_id = $1", [job.recordingId]);
    expect(rows[0].n).toBe(0);
    // The import keeps its history; its recording is gone.
    expect((await owner.get(`${base}/imports/${job.id}`)).body).toMatchObject({ state: "done", recordingId: null });
  });

  it("filters the list by airframe and source", async () => {
    const other = await makeAirframe(bench, "Other airframe");
    const all = (await owner.get(`${base}/recordings`)).body as { airframeId: string; source: string }[];
    expect(all.length).toBeGreaterThan(0);
    expect((await owner.get(`${base}/recordings?airframeId=${other}`)).body).toEqual([]);
    const csvOnly = (await owner.get(`${base}/recordings?source=csv`)).body as { source: string }[];
    expect(csvOnly.length).toBeGreaterThan(0);
    expect(csvOnly.every((r) => r.source === "csv")).toBe(true);
    expect((await owner.get(`${base}/recordings?source=tape`)).status).toBe(422);
  });
});

describe("scenarios", () => {
  const scenario = JSON.parse(readFileSync(path.resolve(__dirname, "../../recordings/demo-engine-fire-drill.scenario.json"), "utf8"));

  it("generates a recording deterministically and stores it with source scenario", async () => {
    const reply = await owner.post(`${base}/recordings/from-scenario`, { name: "Fire drill", airframeId, scenario });
    expect(reply.status, JSON.stringify(reply.body)).toBe(201);
    const expected = generateScenario(scenario);
    expect(reply.body).toMatchObject({ source: "scenario", frameCount: expected.frames.length, durationMs: expected.header.durationMs });
    expect(await framesOfDownload(reply.body.id)).toEqual(expected.frames);
    // Its channels not in this small catalogue arrived as drafts.
    const frame = await owner.get(`${base}/airframes/${airframeId}`);
    expect(frame.body.draftChannelCount).toBe(scenario.channels.length - TEST_CHANNELS.length);
    await owner.request("PUT", `${base}/airframes/${airframeId}/channels`, { channels: TEST_CHANNELS });
  });

  it("refuses a bad scenario pointing at the step", async () => {
    const bad = structuredClone(scenario);
    bad.tracks[2].steps[0].ramp.durationMs = -5;
    const reply = await owner.post(`${base}/recordings/from-scenario`, { name: "Broken", airframeId, scenario: bad });
    expect(reply.status).toBe(422);
    expect(reply.body.error.issues[0]).toEqual({ path: "body.scenario.tracks[2].steps[0].ramp.durationMs", message: "must be more than 0 ms" });
  });
});

describe("the size limit", () => {
  it("refuses an upload over MAX_UPLOAD_BYTES with 413 and keeps nothing", async () => {
    const small = await startRecordingsServer({ MAX_UPLOAD_BYTES: "2000" });
    try {
      const v = new Visitor(small.server.url);
      await v.signUp("Limit Tester", `limit-${Date.now()}@panelproof.example`);
      const w = (await v.post("/api/workshops", { name: "Limit Bench" })).body.id;
      const a = (await v.post(`/api/workshops/${w}/airframes`, { name: "Rig" })).body.id;
      await v.request("PUT", `/api/workshops/${w}/airframes/${a}/channels`, { channels: TEST_CHANNELS });
      const big = writeRecording(HEADER, longFlight(500));
      const reply = await postBytes(v, `/api/workshops/${w}/recordings/uploads?name=big&airframeId=${a}&format=ppr`, big);
      expect(reply.status).toBe(413);
      expect(reply.body.error).toMatchObject({ code: "too_large", message: "The file is over the size limit of 2000 bytes." });
      expect(readdirSync(small.storageDir, { recursive: true }).filter((f) => String(f).endsWith(".ppr") || String(f).endsWith(".part"))).toEqual([]);
      expect((await v.get(`/api/workshops/${w}/imports`)).body).toEqual([]);
      // A gzip file that unpacks past the limit is refused by the import, saying so.
      const toggles: Frame[] = Array.from({ length: 400 }, (_, i) => ({ t: i * 10, v: { "elec.master": i % 2 === 0 } }));
      const bomb = gzipSync(Buffer.from(writeRecording(HEADER, toggles)));
      expect(bomb.length).toBeLessThan(2000);
      const queued = await postBytes(v, `/api/workshops/${w}/recordings/uploads?name=bomb&airframeId=${a}&format=ppr`, bomb);
      expect(queued.status).toBe(202);
      const { job } = await waitForImport(v, w, queued.body.id);
      expect(job.error).toMatchObject({ code: "too_large", where: "byte 2000" });
    } finally {
      await small.server.close();
    }
  });
});
