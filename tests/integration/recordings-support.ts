import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { expect } from "vitest";
import { readEnv } from "../../server/env";
import { startServer, type RunningServer } from "../../server/start";
import { Visitor, uniqueEmail, type Reply } from "../support/test-server";

/**
 * Shared by the recordings, captures and CLI integration tests: a real server on the test
 * database with its own temporary storage folder (so its import queue is its own, see
 * server/jobs/queue.ts), and a workshop with one person per role plus an outsider.
 */
export interface Bench {
  server: RunningServer;
  storageDir: string;
  workshopId: string;
  visitors: Record<"owner" | "builder" | "viewer" | "outsider" | "anonymous", Visitor>;
  close(): Promise<void>;
}

export async function startRecordingsServer(extraEnv: Record<string, string> = {}): Promise<{ server: RunningServer; storageDir: string }> {
  const url = process.env.TEST_DATABASE_URL;
  if (!url) throw new Error("TEST_DATABASE_URL is not set: run the tests through `npm test`, which starts a test database.");
  const storageDir = mkdtempSync(path.join(tmpdir(), "panelproof-storage-"));
  const server = await startServer(
    readEnv({
      NODE_ENV: "test",
      DATABASE_URL: url,
      HOST: "127.0.0.1",
      PORT: "0",
      AUTH_SECRET: "integration-tests-only-secret-0123456789abcdef",
      MAIL_FAKE_PORT: "0",
      STORAGE_DIR: storageDir,
      IMPORT_POLL_SECONDS: "0.5",
      ...extraEnv,
    }),
  );
  return { server, storageDir };
}

export async function startBench(extraEnv: Record<string, string> = {}): Promise<Bench> {
  const { server, storageDir } = await startRecordingsServer(extraEnv);
  const v = (): Visitor => new Visitor(server.url);
  const visitors = { owner: v(), builder: v(), viewer: v(), outsider: v(), anonymous: v() };
  await visitors.owner.signUp("Rec Owner", uniqueEmail("rec-owner"));
  const workshopId = (await visitors.owner.post("/api/workshops", { name: "Recording Bench" })).body.id as string;
  for (const role of ["builder", "viewer"] as const) {
    const email = uniqueEmail(`rec-${role}`);
    const invite = await visitors.owner.post(`/api/workshops/${workshopId}/invitations`, { email, role });
    expect(invite.status).toBe(201);
    await visitors[role].signUp(`Rec ${role}`, email);
    expect((await visitors[role].post(`/api/invitations/${invite.body.id}/accept`)).status).toBe(200);
  }
  await visitors.outsider.signUp("Rec Outsider", uniqueEmail("rec-outsider"));
  await visitors.outsider.post("/api/workshops", { name: "Elsewhere Bench" });
  return {
    server,
    storageDir,
    workshopId,
    visitors,
    async close() {
      await server.close();
      rmSync(storageDir, { recursive: true, force: true });
    },
  };
}

/** Visitor keeps its cookies private; tests that send raw bytes reuse them. */
function cookieHeader(visitor: Visitor): string {
  const cookies = (visitor as unknown as { cookies: Map<string, string> }).cookies;
  return [...cookies].map(([k, val]) => `${k}=${val}`).join("; ");
}

/** POSTs raw bytes like a browser's fetch with a File body. */
export async function postBytes(visitor: Visitor, urlPath: string, bytes: Uint8Array | string): Promise<Reply> {
  const headers: Record<string, string> = { origin: visitor.baseUrl, "content-type": "application/octet-stream" };
  const cookie = cookieHeader(visitor);
  if (cookie) headers.cookie = cookie;
  const response = await fetch(visitor.baseUrl + urlPath, {
    method: "POST",
    headers,
    body: typeof bytes === "string" ? bytes : Buffer.from(bytes),
  });
  const text = await response.text();
  let body: unknown = text;
  try {
    body = text ? JSON.parse(text) : null;
  } catch {
    /* not JSON */
  }
  return { status: response.status, body, headers: response.headers };
}

/** GETs a download as text (a Visitor would try to parse it as JSON). */
export async function getText(visitor: Visitor, urlPath: string): Promise<{ status: number; text: string; headers: Headers }> {
  const headers: Record<string, string> = { origin: visitor.baseUrl };
  const cookie = cookieHeader(visitor);
  if (cookie) headers.cookie = cookie;
  const response = await fetch(visitor.baseUrl + urlPath, { headers });
  return { status: response.status, text: await response.text(), headers: response.headers };
}

export function cookieOf(visitor: Visitor): string {
  return cookieHeader(visitor);
}

/** Polls an import until it is done or failed. */
export async function waitForImport(visitor: Visitor, workshopId: string, importId: string, timeoutMs = 15_000) {
  const deadline = Date.now() + timeoutMs;
  const seen: string[] = [];
  while (Date.now() < deadline) {
    const reply = await visitor.get(`/api/workshops/${workshopId}/imports/${importId}`);
    expect(reply.status).toBe(200);
    seen.push(reply.body.state);
    if (reply.body.state === "done" || reply.body.state === "failed") return { job: reply.body, seen };
    await new Promise((r) => setTimeout(r, 50));
  }
  throw new Error(`import ${importId} did not finish within ${timeoutMs} ms (states seen: ${[...new Set(seen)].join(", ")})`);
}

/** The invented demo airframe's catalogue, small enough to read in a test. */
export const TEST_CHANNELS = [
  { name: "elec.master", kind: "boolean" },
  { name: "alt.baro_ft", kind: "number", unit: "ft", min: -1000, max: 30000 },
  { name: "gear.handle", kind: "enum", values: ["UP", "DOWN"] },
  { name: "xpdr.code", kind: "text", maxLength: 4 },
];

export async function makeAirframe(bench: Bench, name: string, channels: unknown[] = TEST_CHANNELS): Promise<string> {
  const made = await bench.visitors.owner.post(`/api/workshops/${bench.workshopId}/airframes`, { name });
  expect(made.status).toBe(201);
  const put = await bench.visitors.owner.request("PUT", `/api/workshops/${bench.workshopId}/airframes/${made.body.id}/channels`, { channels });
  expect(put.status).toBe(200);
  return made.body.id as string;
}
