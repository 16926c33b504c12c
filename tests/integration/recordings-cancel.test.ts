import { readdirSync } from "node:fs";
import http from "node:http";
import path from "node:path";
import { Readable } from "node:stream";
import { gzipSync } from "node:zlib";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { writeRecording, type RecordingHeader } from "../../shared/recording/recording-file";
import type { Frame } from "../../shared/recording/frames";
import { TEST_CHANNELS, cookieOf, getText, makeAirframe, postBytes, startBench, waitForImport, type Bench } from "./recordings-support";

/**
 * Issue 3's remaining paths on the real server: an upload abandoned mid-body leaves nothing,
 * a running import can be cancelled (no recording, stored file deleted), the original upload
 * downloads byte for byte, failed imports show their reason in the recordings list, and enum
 * channels count how often each named value is set.
 */

let bench: Bench;
let base: string;
let airframeId: string;

const HEADER: RecordingHeader = {
  format: "panelproof-recording",
  version: 1,
  airframe: "Cancel rig (invented)",
  channels: TEST_CHANNELS as RecordingHeader["channels"],
};

/** `n` frames 20 ms apart; the gear handle goes UP at every 100th frame and back DOWN at every 100th + 50. */
function flight(n: number): Frame[] {
  const frames: Frame[] = [{ t: 0, v: { "elec.master": true, "alt.baro_ft": 0, "gear.handle": "DOWN", "xpdr.code": "1200" } }];
  for (let i = 1; i < n; i++) {
    const v: Frame["v"] = { "alt.baro_ft": 2 * (i % 5000) + (i % 2) };
    if (i % 100 === 0) v["gear.handle"] = "UP";
    if (i % 100 === 50) v["gear.handle"] = "DOWN";
    frames.push({ t: i * 20, v });
  }
  return frames;
}

/** Every file under the test server's storage folder (temporary `.part` files included). */
function storedFiles(): string[] {
  const out: string[] = [];
  const walk = (dir: string) => {
    for (const entry of readdirSync(dir, { withFileTypes: true })) {
      const full = path.join(dir, entry.name);
      if (entry.isDirectory()) walk(full);
      else out.push(path.relative(bench.storageDir, full));
    }
  };
  walk(bench.storageDir);
  return out;
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function until(ok: () => boolean | Promise<boolean>, timeoutMs = 10_000): Promise<boolean> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (await ok()) return true;
    await sleep(30);
  }
  return ok();
}

beforeAll(async () => {
  bench = await startBench();
  base = `/api/workshops/${bench.workshopId}`;
  airframeId = await makeAirframe(bench, "Cancel rig");
});
afterAll(async () => {
  await bench?.close();
});

describe("cancelling", () => {
  it("an upload abandoned mid-body keeps no file and makes no import", async () => {
    const builder = bench.visitors.builder;
    const url = new URL(`${base}/recordings/uploads?name=Abandoned&airframeId=${airframeId}&format=ppr`, builder.baseUrl);
    const request = http.request(url, {
      method: "POST",
      headers: {
        origin: builder.baseUrl,
        cookie: cookieOf(builder),
        "content-type": "application/octet-stream",
        "content-length": String(4 * 1024 * 1024),
      },
    });
    request.on("error", () => {}); // the socket is torn down on purpose
    request.write(Buffer.alloc(256 * 1024, 0x20));
    // The server is writing the upload to storage (a temporary file) before the client gives up.
    expect(await until(() => storedFiles().length > 0)).toBe(true);
    request.destroy();
    expect(await until(() => storedFiles().length === 0)).toBe(true);
    const imports = await builder.get(`${base}/imports`);
    expect(imports.body.filter((j: { name: string }) => j.name === "Abandoned")).toEqual([]);
  });

  it("a running import is cancelled: no recording, the stored file deleted, a second cancel refused", async () => {
    const storage = bench.server.services.storage;
    const realGet = storage.get.bind(storage);
    // Read the stored file slowly (64 KB every 100 ms) so the import is still running when cancelled.
    storage.get = async (key: string) => {
      const source = await realGet(key);
      async function* slowly() {
        for await (const chunk of source as AsyncIterable<Buffer>) {
          for (let i = 0; i < chunk.length; i += 64 * 1024) {
            await sleep(100);
            yield chunk.subarray(i, i + 64 * 1024);
          }
        }
      }
      return Readable.from(slowly());
    };
    try {
      const text = writeRecording(HEADER, flight(60_000));
      expect(text.length).toBeGreaterThan(1_500_000);
      const up = await postBytes(bench.visitors.builder, `${base}/recordings/uploads?name=To+cancel&airframeId=${airframeId}&format=ppr`, text);
      expect(up.status).toBe(202);
      const id = up.body.id as string;
      const kept = storedFiles().filter((f) => f.includes(id));
      expect(kept).toHaveLength(1);
      // Wait until the worker has read some of it.
      expect(
        await until(async () => {
          const job = (await bench.visitors.viewer.get(`${base}/imports/${id}`)).body;
          return job.state === "running" && job.bytesRead > 0;
        }),
      ).toBe(true);

      expect((await bench.visitors.viewer.post(`${base}/imports/${id}/cancel`)).status).toBe(403);
      const cancel = await bench.visitors.builder.post(`${base}/imports/${id}/cancel`);
      expect(cancel.status).toBe(200);
      expect(cancel.body.state).toBe("cancelled");
      expect(cancel.body.recordingId).toBeNull();
      expect(storedFiles().filter((f) => f.includes(id))).toEqual([]);

      // The worker rolls back at its next progress write; the job stays cancelled, never "done".
      await sleep(1_000);
      const after = await bench.visitors.builder.get(`${base}/imports/${id}`);
      expect(after.body.state).toBe("cancelled");
      expect(after.body.recordingId).toBeNull();
      const recordings = await bench.visitors.builder.get(`${base}/recordings`);
      expect(recordings.body.filter((r: { name: string }) => r.name === "To cancel")).toEqual([]);
      const again = await bench.visitors.builder.post(`${base}/imports/${id}/cancel`);
      expect(again.status).toBe(409);
      expect(again.body.error.message).toMatch(/cancelled/);
    } finally {
      storage.get = realGet;
    }
  });

  it("a finished import cannot be cancelled", async () => {
    const text = writeRecording(HEADER, flight(20));
    const up = await postBytes(bench.visitors.builder, `${base}/recordings/uploads?name=Quick&airframeId=${airframeId}&format=ppr`, text);
    const { job } = await waitForImport(bench.visitors.builder, bench.workshopId, up.body.id);
    expect(job.state).toBe("done");
    const cancel = await bench.visitors.builder.post(`${base}/imports/${up.body.id}/cancel`);
    expect(cancel.status).toBe(409);
    expect(cancel.body.error.message).toMatch(/done/);
    expect((await bench.visitors.builder.get(`${base}/recordings/${job.recordingId}`)).status).toBe(200);
  });
});

describe("the original upload", () => {
  it("downloads byte for byte with its own name and content type", async () => {
    const packed = gzipSync(writeRecording(HEADER, flight(500)));
    const up = await postBytes(
      bench.visitors.builder,
      `${base}/recordings/uploads?name=Packed&airframeId=${airframeId}&format=ppr&fileName=${encodeURIComponent("evening circuit ü.ppr.jsonl.gz")}`,
      packed,
    );
    expect(up.status).toBe(202);
    const { job } = await waitForImport(bench.visitors.builder, bench.workshopId, up.body.id);
    expect(job.state).toBe("done");
    const detail = await bench.visitors.viewer.get(`${base}/recordings/${job.recordingId}`);
    expect(detail.body.hasOriginal).toBe(true);

    const viewer = bench.visitors.viewer;
    const response = await fetch(`${viewer.baseUrl}${base}/recordings/${job.recordingId}/original`, { headers: { cookie: cookieOf(viewer) } });
    expect(response.status).toBe(200);
    expect(response.headers.get("content-type")).toBe("application/gzip");
    expect(response.headers.get("content-disposition")).toBe(
      `attachment; filename="evening-circuit-.ppr.jsonl.gz"; filename*=UTF-8''${encodeURIComponent("evening circuit ü.ppr.jsonl.gz")}`,
    );
    expect(Buffer.from(await response.arrayBuffer()).equals(packed)).toBe(true);
  });

  it("a CSV upload without a file name comes back as text/csv named after the recording", async () => {
    const csv = "time,alt.baro_ft\n0,100\n1000,200\n";
    const up = await postBytes(bench.visitors.builder, `${base}/recordings/uploads?name=Plain&airframeId=${airframeId}&format=csv&delimiter=comma&decimalMark=point`, csv);
    const { job } = await waitForImport(bench.visitors.builder, bench.workshopId, up.body.id);
    expect(job.state).toBe("done");
    const got = await getText(bench.visitors.viewer, `${base}/recordings/${job.recordingId}/original`);
    expect(got.status).toBe(200);
    expect(got.headers.get("content-type")).toMatch(/^text\/csv/);
    expect(got.headers.get("content-disposition")).toContain('filename="Plain.csv"');
    expect(got.text).toBe(csv);
  });

  it("a file name with a folder in it is refused at upload, and generated recordings have no original", async () => {
    const bad = await postBytes(bench.visitors.builder, `${base}/recordings/uploads?name=X&airframeId=${airframeId}&format=ppr&fileName=..%2Fetc%2Fpasswd`, "x");
    expect(bad.status).toBe(422);
    expect(bad.body.error.issues[0].path).toBe("query.fileName");
    const made = await bench.visitors.builder.post(`${base}/recordings/from-scenario`, {
      name: "Generated",
      airframeId,
      scenario: {
        format: "panelproof-scenario",
        version: 1,
        name: "Tiny",
        airframe: "Rig",
        sampleRateHz: 10,
        channels: [{ name: "elec.master", kind: "boolean" }],
        initial: { "elec.master": false },
        tracks: [{ channel: "elec.master", steps: [{ at: 500, set: true }] }],
      },
    });
    expect(made.status).toBe(201);
    expect(made.body.hasOriginal).toBe(false);
    const none = await bench.visitors.viewer.get(`${base}/recordings/${made.body.id}/original`);
    expect(none.status).toBe(404);
    expect(none.body.error.message).toMatch(/no original file/);
  });
});

describe("what the recordings list and page tell", () => {
  it("withImports=true lists a failed import with where and why; the plain list does not", async () => {
    const text = `${JSON.stringify(HEADER)}\n{"t":0,"v":{"alt.baro_ft":1}}\n{"t":10,"v":{"gear.handle":"SIDEWAYS"}}\n`;
    const up = await postBytes(bench.visitors.builder, `${base}/recordings/uploads?name=Broken+enum&airframeId=${airframeId}&format=ppr`, text);
    const { job } = await waitForImport(bench.visitors.builder, bench.workshopId, up.body.id);
    expect(job.state).toBe("failed");

    const plain = await bench.visitors.viewer.get(`${base}/recordings`);
    expect(plain.body.some((r: { name: string }) => r.name === "Broken enum")).toBe(false);
    const withImports = await bench.visitors.viewer.get(`${base}/recordings?withImports=true`);
    expect(withImports.status).toBe(200);
    const row = withImports.body.find((r: { name: string }) => r.name === "Broken enum");
    expect(row).toMatchObject({ id: up.body.id, importId: up.body.id, status: "failed", source: "file" });
    expect(row.failure.code).toBe("unknown_enum_value");
    expect(row.failure.where).toMatch(/line 3/);
    expect(row.failure.where).toMatch(/gear\.handle/);
    expect(row.failure.message).toMatch(/SIDEWAYS/);
    // Sorted newest first together with the recordings.
    const times = withImports.body.map((r: { createdAt: string }) => r.createdAt);
    expect([...times].sort().reverse()).toEqual(times);
    const refused = await bench.visitors.viewer.get(`${base}/recordings?withImports=yes`);
    expect(refused.status).toBe(422);
    expect(refused.body.error.issues[0].path).toBe("query.withImports");
  });

  it("enum channels count each named value, zero for those never set", async () => {
    // UP at 100, 200, ... 900; DOWN at 0 and at 50, 150, ... 950. The DOWN at 50 repeats the
    // value the handle already has: a frame holds only changes, so it is not counted.
    const frames = flight(1000);
    const up = await postBytes(bench.visitors.builder, `${base}/recordings/uploads?name=Gear+cycles&airframeId=${airframeId}&format=ppr`, writeRecording(HEADER, frames));
    const { job } = await waitForImport(bench.visitors.builder, bench.workshopId, up.body.id);
    expect(job.state).toBe("done");
    const detail = await bench.visitors.viewer.get(`${base}/recordings/${job.recordingId}`);
    const gear = detail.body.channels.find((c: { name: string }) => c.name === "gear.handle");
    let up_ = 0;
    let down = 0;
    let handle: unknown;
    for (const f of frames) {
      const value = f.v["gear.handle"];
      if (value === undefined || value === handle) continue;
      handle = value;
      if (value === "UP") up_++;
      else down++;
    }
    expect([up_, down]).toEqual([9, 10]);
    expect(gear.valueCounts).toEqual([
      { value: "UP", count: up_ },
      { value: "DOWN", count: down },
    ]);
    expect(gear.changes).toBe(up_ + down);
    const alt = detail.body.channels.find((c: { name: string }) => c.name === "alt.baro_ft");
    expect(alt.valueCounts).toBeNull();
  });
});
