import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { encodeLinkFrame } from "../../shared/link/codec";
import { EmulatedDeviceCore } from "../../shared/link/device-core";
import type { ChannelValue, SeenEntry } from "../../shared/link/messages";
import { LinkStreamDecoder } from "../../shared/link/stream";
import { interFrameSilenceMs } from "../../shared/link/bus";
import { BusMaster } from "../../server/links/bus-master";
import { openSerialTransport } from "../../server/links/serial-transport";
import type { ByteTransport } from "../../server/links/transport";
import { openPtyPair } from "../support/pty-pair";

/** A device that shows channel k's value as element k's pointer angle, in centidegrees. */
function showAsAngles(values: ReadonlyMap<number, ChannelValue>): SeenEntry[] {
  return [...values.values()].map((v) => ({ element: v.channel, kind: "pointer_angle" as const, centidegrees: Math.round(Number(v.value) * 100) }));
}

let pty: Awaited<ReturnType<typeof openPtyPair>>;
let benchSide: ByteTransport;
let boardSide: ByteTransport;
const devices = new Map<number, EmulatedDeviceCore>();
let garbageAfterNextFrame = false;

beforeAll(async () => {
  pty = await openPtyPair();
  benchSide = await openSerialTransport(pty.a, 115_200);
  boardSide = await openSerialTransport(pty.b, 115_200);
  // Three boards sharing one pair: each hears every frame and answers only its own.
  for (const address of [1, 2, 3]) {
    devices.set(
      address,
      new EmulatedDeviceCore({ address, deviceId: `00000000000000${address.toString(16).padStart(2, "0")}`, panel: `bus-${address}`, elementCount: 8, channelCount: 8, waitsForPoll: true, show: showAsAngles }),
    );
  }
  const decoder = new LinkStreamDecoder({ acceptFrom: "bench" });
  const silence = interFrameSilenceMs(115_200);
  boardSide.onData((chunk) => {
    for (const event of decoder.push(chunk)) {
      if (!event.ok) continue;
      for (const device of devices.values()) {
        for (const answer of device.receive(event.frame)) {
          // A board answers after the line's silence, like real RS-485 firmware releasing the driver.
          setTimeout(() => {
            const wire = encodeLinkFrame(answer);
            const bytes = garbageAfterNextFrame ? new Uint8Array([...[0x13, 0x37, 0x99, 0x00], ...wire]) : wire;
            garbageAfterNextFrame = false;
            void boardSide.write(bytes);
          }, silence);
        }
      }
    }
  });
});

afterAll(async () => {
  await benchSide?.close();
  await boardSide?.close();
  await pty?.close();
});

describe("RS-485 bus over a real pseudo-terminal pair", () => {
  it("gives each of three devices its turn, gets exactly one answer each, and times out an absent one", async () => {
    // A generous answer timeout: the test machine may be busy; the absent device still times out.
    const master = new BusMaster(benchSide, { baud: 115_200, answerTimeoutMs: 150 });
    for (const a of [1, 2, 3, 4]) master.addDevice(a); // nobody lives at 4
    const answers: { address: number; type: string }[] = [];
    master.onFrame((address, frame) => answers.push({ address, type: frame.message.type }));

    for (const a of [1, 2, 3]) {
      master.send(a, { type: "identify" });
      master.send(a, { type: "value_update", keyframeBegin: true, keyframeEnd: true, values: [{ channel: 0, kind: "float", value: a * 10 }, { channel: 1, kind: "float", value: 45.5 }] });
    }
    for (let round = 0; round < 3; round++) for (const a of [1, 2, 3, 4]) await master.turn(a);

    for (const a of [1, 2, 3]) {
      const mine = answers.filter((x) => x.address === a).map((x) => x.type);
      expect(mine).toEqual(["hello", "seen_report", "seen_report"]);
      expect(master.countsFor(a)).toMatchObject({ sent: 3, answered: 3, timeouts: 0 });
      // The device applied its own values only.
      expect(devices.get(a)!.channelValues.get(0)?.value).toBe(a * 10);
    }
    expect(master.countsFor(4)).toMatchObject({ sent: 3, answered: 0, timeouts: 3 });
  });

  it("reports what the device shows, acknowledging the update it applied", async () => {
    const master = new BusMaster(benchSide, { baud: 115_200, answerTimeoutMs: 150 });
    master.addDevice(2);
    master.send(2, { type: "value_update", keyframeBegin: false, keyframeEnd: false, values: [{ channel: 3, kind: "float", value: 12.5 }] });
    const answer = await master.turn(2); // the update's answer: what changed
    expect(answer?.message.type).toBe("seen_report");
    if (answer?.message.type === "seen_report") {
      expect(answer.message.seen).toContainEqual({ element: 3, kind: "pointer_angle", centidegrees: 1250 });
      expect(answer.message.appliedSequence).not.toBeNull();
    }
    // Nothing changed since: the poll's answer is an empty report that still acknowledges the update.
    const quiet = await master.turn(2);
    expect(quiet?.message).toMatchObject({ type: "seen_report", seen: [] });
    if (quiet?.message.type === "seen_report" && answer?.message.type === "seen_report") expect(quiet.message.appliedSequence).toBe(answer.message.appliedSequence);
  });

  it("counts garbage on the line and carries on", async () => {
    const master = new BusMaster(benchSide, { baud: 115_200, answerTimeoutMs: 150 });
    master.addDevice(1);
    const before = master.lineCounts.badCrc + master.lineCounts.truncated + master.lineCounts.badPayload + master.lineCounts.unknownType + master.lineCounts.badVersion + master.lineCounts.badAddress;
    garbageAfterNextFrame = true;
    const first = await master.turn(1);
    const second = await master.turn(1);
    expect(first?.message.type).toBe("seen_report");
    expect(second?.message.type).toBe("seen_report");
    const after = master.lineCounts.badCrc + master.lineCounts.truncated + master.lineCounts.badPayload + master.lineCounts.unknownType + master.lineCounts.badVersion + master.lineCounts.badAddress;
    expect(after).toBeGreaterThan(before);
  });

  it("keeps the line model: a turn takes at least both frames' air time plus the silence", async () => {
    const master = new BusMaster(benchSide, { baud: 9_600 }); // slow line: timing is visible
    master.addDevice(3);
    await master.turn(3); // settle
    const start = performance.now();
    for (let i = 0; i < 5; i++) await master.turn(3);
    const perTurn = (performance.now() - start) / 5;
    // A poll is 7 wire bytes (7.3 ms at 9,600 baud) and the silence 3.65 ms, per the Modbus guide's 3.5 characters.
    expect(perTurn).toBeGreaterThan(7.3 + 3.6);
  });
});
