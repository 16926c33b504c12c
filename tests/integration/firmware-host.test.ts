import { execFileSync } from "node:child_process";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { beforeAll, describe, expect, it } from "vitest";
import { decodeLinkFrame } from "../../shared/link/codec";
import { hexToBytes } from "../../shared/link/hex";
import { linkMessageSender } from "../../shared/link/messages";

/**
 * The firmware library's host tests (make -C firmware host-test): the C++ code compiled with the
 * machine's g++ and held to shared/link/test-vectors.json. Their output is checked here so they
 * count in npm test, and every frame the C++ device produced is decoded again by the TypeScript
 * codec: the two implementations check each other.
 */
const firmware = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../../firmware");
let output = "";

beforeAll(() => {
  try {
    execFileSync("sh", ["-c", "command -v g++ && command -v make"], { stdio: "ignore" });
  } catch {
    throw new Error("g++ or make is missing for the firmware host tests: sudo apt-get install g++ make");
  }
  try {
    output = execFileSync("make", ["-s", "-C", firmware, "host-test"], { encoding: "utf8", timeout: 240_000, maxBuffer: 64 * 1024 * 1024 });
  } catch (error) {
    const e = error as { stdout?: string; stderr?: string; message: string };
    output = `${e.stdout ?? ""}\n${e.stderr ?? ""}\n${e.message}`;
  }
}, 300_000);

describe("firmware library on the host (g++)", () => {
  it("passes every host test against the shared vectors", () => {
    const failures = output.split("\n").filter((l) => l.startsWith("not ok"));
    expect(failures, output.slice(-3000)).toEqual([]);
    const summary = /^host tests: (\d+) passed, (\d+) failed$/m.exec(output);
    expect(summary, `no summary line in:\n${output.slice(-3000)}`).not.toBeNull();
    expect(Number(summary![2])).toBe(0);
    // Every frame vector three ways, every fault vector twice, device behaviour on a direct link and a bus.
    expect(Number(summary![1])).toBeGreaterThanOrEqual(90);
    const passed = output.split("\n").filter((l) => l.startsWith("ok ")).length;
    expect(passed).toBe(Number(summary![1]));
  });

  it("produces only device frames the TypeScript codec decodes cleanly", () => {
    const frames = output
      .split("\n")
      .filter((l) => l.startsWith("device-frame "))
      .map((l) => l.slice("device-frame ".length));
    expect(frames.length).toBeGreaterThan(50);
    const kinds = new Set<string>();
    for (const hex of frames) {
      const bytes = hexToBytes(hex);
      expect(bytes, hex).toBeDefined();
      const result = decodeLinkFrame(bytes!);
      expect(result.ok, `${hex}: ${result.ok ? "" : result.fault}`).toBe(true);
      if (result.ok) {
        expect(linkMessageSender(result.frame.message)).toBe("device");
        kinds.add(result.frame.message.type);
      }
    }
    expect([...kinds].sort()).toEqual(["error", "heartbeat", "hello", "input_event", "seen_report"]);
  });
});
