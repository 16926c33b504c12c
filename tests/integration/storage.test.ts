import { createHash, randomBytes } from "node:crypto";
import { mkdtempSync, rmSync } from "node:fs";
import { createRequire } from "node:module";
import { tmpdir } from "node:os";
import path from "node:path";
import { Readable } from "node:stream";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { LocalStorage, S3Storage, StorageNotFound, type StorageDriver } from "../../server/storage";
import { Visitor } from "../support/test-server";
import { TEST_CHANNELS, getText, postBytes, startRecordingsServer, waitForImport } from "./recordings-support";

/**
 * Both storage drivers on real files and a real (local, fake) S3 server: bytes must round-trip
 * exactly, including multipart uploads, which is where a wrong checksum setting silently
 * stores the SDK's chunk framing inside the object.
 */

interface S3rverInstance {
  run(): Promise<{ port: number }>;
  close(): Promise<void>;
}
type S3rverClass = new (options: Record<string, unknown>) => S3rverInstance;
const S3rver = createRequire(import.meta.url)("s3rver") as S3rverClass;

let s3dir: string;
let localDir: string;
let s3: S3rverInstance;
let endpoint: string;

beforeAll(async () => {
  s3dir = mkdtempSync(path.join(tmpdir(), "panelproof-s3rver-"));
  localDir = mkdtempSync(path.join(tmpdir(), "panelproof-local-"));
  s3 = new S3rver({ address: "127.0.0.1", port: 0, directory: s3dir, silent: true, configureBuckets: [{ name: "panelproof-test" }] });
  const { port } = await s3.run();
  endpoint = `http://127.0.0.1:${port}`;
});
afterAll(async () => {
  await s3?.close();
  rmSync(s3dir, { recursive: true, force: true });
  rmSync(localDir, { recursive: true, force: true });
});

const sha = (bytes: Uint8Array) => createHash("sha256").update(bytes).digest("hex");

/** A stream in uneven chunks, as an HTTP upload arrives. */
function chunked(bytes: Buffer): Readable {
  const pieces: Buffer[] = [];
  for (let i = 0, n = 1; i < bytes.length; i += n, n = (n * 7 + 13) % 300_000 || 1) pieces.push(bytes.subarray(i, i + n));
  return Readable.from(pieces);
}

async function readAll(stream: Readable): Promise<Buffer> {
  const parts: Buffer[] = [];
  for await (const c of stream) parts.push(c as Buffer);
  return Buffer.concat(parts);
}

function drivers(): [string, () => StorageDriver][] {
  return [
    ["local folder", () => new LocalStorage(localDir)],
    [
      "S3 (s3rver)",
      () =>
        new S3Storage({
          endpoint,
          bucket: "panelproof-test",
          accessKeyId: "S3RVER",
          secretAccessKey: "S3RVER",
          region: "us-east-1",
          forcePathStyle: true,
          partBytes: 5 * 1024 * 1024,
        }),
    ],
  ];
}

for (const [name, make] of drivers()) {
  describe(`storage driver: ${name}`, () => {
    it("round-trips small and multipart-sized files byte for byte", async () => {
      const storage = make();
      for (const size of [0, 1, 70_000, 12 * 1024 * 1024 + 17]) {
        const bytes = randomBytes(size);
        const key = `tests/roundtrip-${size}.bin`;
        expect(await storage.put(key, chunked(bytes))).toEqual({ bytes: size });
        expect(await storage.exists(key)).toBe(true);
        expect(await storage.size(key)).toBe(size);
        const back = await readAll(await storage.get(key));
        expect(back.length).toBe(size);
        expect(sha(back)).toBe(sha(bytes));
      }
    });

    it("reports missing keys and deletes", async () => {
      const storage = make();
      await storage.put("tests/gone.txt", Readable.from([Buffer.from("bench")]));
      await storage.delete("tests/gone.txt");
      expect(await storage.exists("tests/gone.txt")).toBe(false);
      expect(await storage.size("tests/gone.txt")).toBeNull();
      await expect(storage.get("tests/gone.txt")).rejects.toBeInstanceOf(StorageNotFound);
      await storage.delete("tests/never-there.txt"); // deleting nothing is fine
    });

    it("refuses keys that could leave its place", async () => {
      const storage = make();
      for (const key of ["../escape", "/abs", "a/../b", "a//b", ".hidden/x", "a b"]) {
        await expect(storage.put(key, Readable.from([Buffer.from("x")]))).rejects.toThrow(/Invalid storage key/);
      }
    });
  });
}

describe("the server on S3 storage", () => {
  it("keeps uploads in the bucket and imports them from there", async () => {
    const { server, storageDir } = await startRecordingsServer({
      STORAGE_DRIVER: "s3",
      S3_ENDPOINT: endpoint,
      S3_BUCKET: "panelproof-test",
      S3_ACCESS_KEY_ID: "S3RVER",
      S3_SECRET_ACCESS_KEY: "S3RVER",
    });
    try {
      expect(server.services.storage.location).toBe(`s3:${endpoint}/panelproof-test`);
      const v = new Visitor(server.url);
      await v.signUp("S3 Tester", `s3-${Date.now()}-${Math.random().toString(36).slice(2)}@panelproof.example`);
      const w = (await v.post("/api/workshops", { name: "Bucket Bench" })).body.id;
      const a = (await v.post(`/api/workshops/${w}/airframes`, { name: "Rig" })).body.id;
      await v.request("PUT", `/api/workshops/${w}/airframes/${a}/channels`, { channels: TEST_CHANNELS });
      const text = `{"format":"panelproof-recording","version":1,"airframe":"Rig","channels":${JSON.stringify(TEST_CHANNELS)}}\n{"t":0,"v":{"alt.baro_ft":1}}\n{"t":5,"v":{"alt.baro_ft":2}}\n`;
      const up = await postBytes(v, `/api/workshops/${w}/recordings/uploads?name=s3&airframeId=${a}&format=ppr`, text);
      expect(up.status).toBe(202);
      const { job } = await waitForImport(v, w, up.body.id);
      expect(job.state).toBe("done");
      const stored = await readAll(await server.services.storage.get(`workshops/${w}/uploads/${job.id}.ppr`));
      expect(stored.toString("utf8")).toBe(text);
      const got = await getText(v, `/api/workshops/${w}/recordings/${job.recordingId}/download`);
      expect(got.text.split("\n").slice(1)).toEqual(['{"t":0,"v":{"alt.baro_ft":1}}', '{"t":5,"v":{"alt.baro_ft":2}}', ""]);
    } finally {
      await server.close();
      rmSync(storageDir, { recursive: true, force: true });
    }
  });

  it("refuses to start on S3 without its settings, naming them", async () => {
    const { readEnv } = await import("../../server/env");
    expect(() => readEnv({ DATABASE_URL: "postgres://x@127.0.0.1/db", AUTH_SECRET: "x".repeat(32), STORAGE_DRIVER: "s3" })).toThrow(
      /S3_BUCKET: is required when STORAGE_DRIVER=s3[\s\S]*S3_ACCESS_KEY_ID[\s\S]*S3_SECRET_ACCESS_KEY/,
    );
  });
});
