import { spawn } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { XMLParser } from "fast-xml-parser";
import { startBench, type Bench } from "./recordings-support";
import { makePanelAirframe, PANEL_RECORDING, testDefinition, uploadRecording } from "./panels-support";

/** The bench's command line: the device emulator as a separate process, and a headless run. */

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../..");
const bin = path.join(root, "bin/panelproof.mjs");

function cli(args: string[]): Promise<{ code: number; out: string; err: string }> {
  return new Promise((resolve) => {
    const child = spawn(process.execPath, [bin, ...args], { cwd: root });
    let out = "";
    let err = "";
    child.stdout.on("data", (d) => (out += d));
    child.stderr.on("data", (d) => (err += d));
    child.on("exit", (code) => resolve({ code: code ?? -1, out, err }));
  });
}

let bench: Bench;
let base: string;
let panelId: string;
let recordingId: string;
let email: string;
let dir: string;

beforeAll(async () => {
  bench = await startBench();
  base = `/api/workshops/${bench.workshopId}`;
  const airframeId = await makePanelAirframe(bench, "CLI run rig");
  panelId = (await bench.visitors.owner.post(`${base}/panels`, { airframeId, definition: testDefinition("cli-panel") })).body.id;
  recordingId = await uploadRecording(bench, airframeId, PANEL_RECORDING, "CLI flight");
  email = (await bench.visitors.builder.get("/api/me")).body.user.email;
  dir = mkdtempSync(path.join(tmpdir(), "panelproof-run-cli-"));
}, 60_000);
afterAll(async () => {
  await bench?.close();
  rmSync(dir, { recursive: true, force: true });
});

describe("panelproof device and panelproof run", () => {
  it("the device emulator process joins a network run with its token and the run passes", async () => {
    const panelFile = path.join(dir, "panel.json");
    writeFileSync(panelFile, JSON.stringify((await bench.visitors.viewer.get(`${base}/panels/${panelId}`)).body.definition));
    const token = (await bench.visitors.owner.post(`${base}/panels/${panelId}/tokens`, { label: "cli board" })).body.token;
    const made = await bench.visitors.builder.post(`${base}/runs`, { recordingId, links: [{ kind: "network", panelId }], speed: 2 });
    const runId = made.body.id;
    const url = `${bench.server.url.replace(/^http/, "ws")}/ws/bench/runs/${runId}/panels/${panelId}`;
    const device = cli(["device", "--panel", panelFile, "--url", url, "--token", token, "--time-scale", "2"]);
    const deadline = Date.now() + 20_000;
    while (!(await bench.visitors.viewer.get(`${base}/runs/${runId}`)).body.links[0].connected) {
      if (Date.now() > deadline) throw new Error("the device process never connected");
      await new Promise((r) => setTimeout(r, 100));
    }
    await bench.visitors.builder.post(`${base}/runs/${runId}/control`, { action: "play" });
    const ended = await device;
    expect(ended.code, ended.err).toBe(0);
    expect(ended.out).toMatch(/link closed \(1000/);
    const d = (await bench.visitors.viewer.get(`${base}/runs/${runId}`)).body;
    expect(d.state).toBe("finished");
    expect(d.counts.fail).toBe(0);
    expect(d.counts.no_data).toBe(0);
  }, 60_000);

  it("a headless run writes JUnit XML and exits 0 when everything passes, 1 when a fault fails an element", async () => {
    const junit = path.join(dir, "out.xml");
    const common = ["run", "--server", bench.server.url, "--email", email, "--password", "correct-horse-battery", "--workshop", bench.workshopId, "--recording", recordingId, "--link", `virtual:${panelId}`, "--speed", "2"];
    const good = await cli([...common, "--junit", junit]);
    expect(good.code, good.out + good.err).toBe(0);
    const doc = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: "" }).parse(readFileSync(junit, "utf8"));
    expect(doc.testsuites.failures).toBe("0");
    expect(Number(doc.testsuites.tests)).toBe(5);

    const bad = await cli([...common, "--junit", junit, "--fault", JSON.stringify({ kind: "lamp_inverted", element: "fire" })]);
    expect(bad.code, bad.out + bad.err).toBe(1);
    expect(bad.out).toMatch(/FAIL FIRE \(fire\)/);
    const doc2 = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: "" }).parse(readFileSync(junit, "utf8"));
    expect(doc2.testsuites.failures).toBe("1");
  }, 90_000);
});
