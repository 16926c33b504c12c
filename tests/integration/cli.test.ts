import { spawn } from "node:child_process";
import dgram from "node:dgram";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { gzipSync } from "node:zlib";
import { afterAll, describe, expect, it } from "vitest";
import { parseRecording } from "../../shared/recording/recording-file";
import { generateScenario } from "../../shared/recording/scenario";

/** The `panelproof` command as a builder runs it: a real process, real files, a real UDP port. */
const root = path.resolve(__dirname, "../..");
const bin = path.join(root, "bin/panelproof.mjs");
const dir = mkdtempSync(path.join(tmpdir(), "panelproof-cli-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function run(args: string[], onStdout?: (text: string) => void): Promise<{ code: number | null; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    const child = spawn(process.execPath, [bin, ...args], { cwd: dir });
    let stdout = "";
    let stderr = "";
    child.stdout.on("data", (d) => {
      stdout += d;
      onStdout?.(stdout);
    });
    child.stderr.on("data", (d) => (stderr += d));
    child.on("exit", (code) => resolve({ code, stdout, stderr }));
  });
}

const demo = path.join(root, "recordings/demo-pattern-flight.ppr.jsonl");

describe("panelproof import", { timeout: 60_000 }, () => {
  it("summarises a valid file and writes it out again", async () => {
    const out = path.join(dir, "copy.ppr.jsonl");
    const { code, stdout } = await run(["import", demo, "-o", out]);
    expect(code).toBe(0);
    expect(stdout).toMatch(/valid Panelproof recording\n {2}36 frames, 11 channels, 90\.000 s/);
    expect(parseRecording(readFileSync(out, "utf8")).frames).toEqual(parseRecording(readFileSync(demo, "utf8")).frames);
  });

  it("reads gzip and CSV", async () => {
    const gz = path.join(dir, "demo.ppr.jsonl.gz");
    writeFileSync(gz, gzipSync(readFileSync(demo)));
    expect((await run(["import", gz])).code).toBe(0);
    const csv = path.join(dir, "flight.csv");
    writeFileSync(csv, "time [s];alt.baro_ft [ft];gear.handle\n0;320;DOWN\n1;445,5;\n");
    const out = path.join(dir, "flight.ppr.jsonl");
    const { code, stdout } = await run(["import", csv, "--delimiter", "semicolon", "--decimal-mark", "comma", "-o", out]);
    expect(code).toBe(0);
    expect(stdout).toMatch(/2 frames, 2 channels/);
    expect(stdout).toMatch(/new channels \(drafts\): alt\.baro_ft \(number\), gear\.handle \(text\)/);
    expect(parseRecording(readFileSync(out, "utf8")).frames).toEqual([
      { t: 0, v: { "alt.baro_ft": 320, "gear.handle": "DOWN" } },
      { t: 1000, v: { "alt.baro_ft": 445.5 } },
    ]);
  });

  it("refuses bad input with where and why, exit code 1", async () => {
    const bad = path.join(dir, "bad.ppr.jsonl");
    const lines = readFileSync(demo, "utf8").split("\n");
    lines[4] = lines[4].replace(/"t":\d+/, '"t":1');
    writeFileSync(bad, lines.join("\n"));
    const { code, stderr } = await run(["import", bad]);
    expect(code).toBe(1);
    expect(stderr.trim()).toBe(`${bad}: line 5, field t: time 1 ms is before the previous frame's 4000 ms`);

    const csv = path.join(dir, "bad.csv");
    writeFileSync(csv, "time;alt.baro_ft\n0;1\n");
    const wrong = await run(["import", csv, "--delimiter", "comma", "--decimal-mark", "point"]);
    expect(wrong.code).toBe(1);
    expect(wrong.stderr).toMatch(/row 1: only one column found with delimiter ',', but the header contains ';'/);

    const missing = await run(["import", path.join(dir, "nope.ppr.jsonl")]);
    expect(missing.code).toBe(1);
    expect(missing.stderr).toMatch(/ENOENT/);
    expect((await run(["import"])).code).toBe(2);
  });
});

describe("panelproof scenario", { timeout: 60_000 }, () => {
  it("generates the same frames as the shared generator, and points at a bad step", async () => {
    const file = path.join(root, "recordings/demo-engine-fire-drill.scenario.json");
    const out = path.join(dir, "fire.ppr.jsonl");
    const { code } = await run(["scenario", file, "-o", out]);
    expect(code).toBe(0);
    const expected = generateScenario(JSON.parse(readFileSync(file, "utf8")));
    expect(parseRecording(readFileSync(out, "utf8")).frames).toEqual(expected.frames);

    const bad = JSON.parse(readFileSync(file, "utf8"));
    bad.tracks[0].steps[0].set = "yes";
    const badFile = path.join(dir, "bad.scenario.json");
    writeFileSync(badFile, JSON.stringify(bad));
    const refused = await run(["scenario", badFile, "-o", path.join(dir, "x.ppr.jsonl")]);
    expect(refused.code).toBe(1);
    expect(refused.stderr).toMatch(/tracks\[0\]\.steps\[0\]\.set: "yes" is not true or false/);
  });
});

describe("panelproof capture", { timeout: 60_000 }, () => {
  it("records datagrams on a UDP port for N seconds, counting the bad ones", async () => {
    const out = path.join(dir, "captured.ppr.jsonl");
    let port = 0;
    const result = run(["capture", "--udp", "0", "-o", out, "--seconds", "2", "--token", "bench"], (text) => {
      const match = /capturing on udp 127\.0\.0\.1:(\d+)/.exec(text);
      if (match && !port) port = Number(match[1]);
    });
    while (!port) await new Promise((r) => setTimeout(r, 20));
    const socket = dgram.createSocket("udp4");
    const send = (m: unknown) => new Promise<void>((resolve) => socket.send(typeof m === "string" ? m : JSON.stringify(m), port, "127.0.0.1", () => resolve()));
    await send({ token: "bench", seq: 0, t: 10, v: { "alt.baro_ft": 100, "gear.handle": "DOWN" } });
    await send({ token: "bench", seq: 2, t: 30, v: { "alt.baro_ft": 120 } });
    await send({ token: "bench", seq: 1, t: 20, v: { "alt.baro_ft": 110 } });
    await send({ token: "bench", seq: 1, t: 20, v: { "alt.baro_ft": 110 } });
    await send({ token: "wrong", seq: 3, t: 40, v: { "alt.baro_ft": 130 } });
    await send("[1,2");
    socket.close();
    const { code, stdout } = await result;
    expect(code).toBe(0);
    expect(stdout).toMatch(/received 6, malformed 2, out of order 1, duplicates 1, dropped 0/);
    expect(parseRecording(readFileSync(out, "utf8")).frames).toEqual([
      { t: 0, v: { "alt.baro_ft": 100, "gear.handle": "DOWN" } },
      { t: 10, v: { "alt.baro_ft": 110 } },
      { t: 20, v: { "alt.baro_ft": 120 } },
    ]);
  });
});
