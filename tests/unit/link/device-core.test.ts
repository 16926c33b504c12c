import { describe, expect, it } from "vitest";
import { EmulatedDeviceCore } from "../../../shared/link/device-core";
import type { SeenEntry } from "../../../shared/link/messages";

const lampShowsChannel0 = (values: ReadonlyMap<number, { value: unknown }>): SeenEntry[] => [
  { element: 0, kind: "lamp_state", state: values.get(0)?.value === true ? "on" : "off" },
];

function direct() {
  return new EmulatedDeviceCore({ address: 0, deviceId: "00000000000000aa", panel: "bench-test", elementCount: 1, channelCount: 1, waitsForPoll: false, show: lampShowsChannel0 as never });
}

describe("emulated device core", () => {
  it("on a direct link says hello at power-up and reports after every complete update", () => {
    const device = direct();
    expect(device.powerUp().map((f) => f.message.type)).toEqual(["hello"]);
    const out = device.receive({ address: 0, sequence: 9, message: { type: "value_update", keyframeBegin: false, keyframeEnd: false, values: [{ channel: 0, kind: "boolean", value: true }] } });
    expect(out).toHaveLength(1);
    expect(out[0].message).toEqual({ type: "seen_report", appliedSequence: 9, seen: [{ element: 0, kind: "lamp_state", state: "on" }] });
  });

  it("shows nothing new in the middle of a keyframe that spans several frames", () => {
    const device = direct();
    const begin = device.receive({ address: 0, sequence: 1, message: { type: "value_update", keyframeBegin: true, keyframeEnd: false, values: [{ channel: 0, kind: "boolean", value: true }] } });
    expect(begin).toEqual([]);
    const end = device.receive({ address: 0, sequence: 2, message: { type: "value_update", keyframeBegin: false, keyframeEnd: true, values: [] } });
    expect(end[0].message).toMatchObject({ type: "seen_report", appliedSequence: 2 });
  });

  it("forgets every value on reset and answers a poll with a heartbeat", () => {
    const device = direct();
    device.receive({ address: 0, sequence: 1, message: { type: "value_update", keyframeBegin: false, keyframeEnd: false, values: [{ channel: 0, kind: "boolean", value: true }] } });
    expect(device.receive({ address: 0, sequence: 2, message: { type: "reset" } })).toEqual([]);
    expect(device.channelValues.size).toBe(0);
    const beat = device.receive({ address: 0, sequence: 3, message: { type: "poll" } });
    expect(beat[0].message.type).toBe("heartbeat");
  });

  it("on a bus answers exactly once per frame addressed to it, never a broadcast, never another's", () => {
    const device = new EmulatedDeviceCore({ address: 5, deviceId: "0000000000000005", panel: "p", elementCount: 1, channelCount: 1, waitsForPoll: true, show: lampShowsChannel0 as never });
    expect(device.powerUp()).toEqual([]);
    expect(device.receive({ address: 6, sequence: 1, message: { type: "poll" } })).toEqual([]);
    expect(device.receive({ address: 255, sequence: 2, message: { type: "reset" } })).toEqual([]);
    const identify = device.receive({ address: 5, sequence: 3, message: { type: "identify" } });
    expect(identify.map((f) => f.message.type)).toEqual(["hello"]);
    const poll = device.receive({ address: 5, sequence: 4, message: { type: "poll" } });
    expect(poll.map((f) => f.message.type)).toEqual(["seen_report"]);
    expect(poll[0].address).toBe(5);
  });

  it("answers a garbled frame with the protocol's error on a direct link, and stays quiet on a bus", () => {
    expect(direct().refuse("bad_crc", "crc 0x1234 expected 0x4321")[0].message).toMatchObject({ type: "error", code: "bad_crc" });
    const bus = new EmulatedDeviceCore({ address: 5, deviceId: "0000000000000005", panel: "p", elementCount: 1, channelCount: 1, waitsForPoll: true, show: lampShowsChannel0 as never });
    expect(bus.refuse("bad_crc", "x")).toEqual([]);
  });
});
