import { describe, expect, it } from "vitest";
import {
  characterTimeMs,
  deviceAcceptsFrame,
  deviceMayAnswer,
  frameAirTimeMs,
  framesMissedBetween,
  interFrameSilenceMs,
  lineBytesPerSecond,
  pollCycleMs,
} from "../../../shared/link/bus";
import { encodeLinkFrame } from "../../../shared/link/codec";
import type { LinkFrame } from "../../../shared/link/messages";

describe("line timing", () => {
  it("115,200 baud 8N1 carries at most 11,520 bytes per second", () => {
    // 8N1 sends 10 bit times per byte (common practice, no source): 115200 / 10.
    expect(lineBytesPerSecond(115_200)).toBe(11_520);
    expect(lineBytesPerSecond(9_600)).toBe(960);
  });

  it("the silent interval is fixed at 1.750 ms above 19,200 baud", () => {
    // Modbus over Serial Line, Specification and Implementation Guide V1.02: above 19,200 baud
    // a fixed 1.750 ms for the inter-frame delay (t3.5).
    expect(interFrameSilenceMs(38_400)).toBe(1.75);
    expect(interFrameSilenceMs(115_200)).toBe(1.75);
    expect(interFrameSilenceMs(19_201)).toBe(1.75);
  });

  it("at and below 19,200 baud the silent interval is 3.5 character times", () => {
    // Same guide: 3.5 character times. With 8N1 (10 bits) at 9,600 baud one character is 1.0417 ms.
    expect(characterTimeMs(9_600)).toBeCloseTo(1.041_67, 5);
    expect(interFrameSilenceMs(9_600)).toBeCloseTo(3.645_83, 5);
    expect(interFrameSilenceMs(19_200)).toBeCloseTo(1.822_92, 5);
    // The guide's own RTU character is 11 bits (8 data, parity, stop): 4.0104 ms at 9,600 baud.
    expect(interFrameSilenceMs(9_600, 11)).toBeCloseTo(4.010_42, 5);
  });

  it("a frame's air time is its wire bytes times the character time", () => {
    expect(frameAirTimeMs(11_520, 115_200)).toBeCloseTo(1000, 9);
    const poll = encodeLinkFrame({ address: 3, sequence: 1, message: { type: "poll" } });
    expect(poll.length).toBe(8);
    expect(frameAirTimeMs(poll.length, 115_200)).toBeCloseTo(0.694_44, 5);
  });

  it("one poll turn is both frames plus two silences", () => {
    expect(pollCycleMs({ benchWireBytes: 8, deviceWireBytes: 100, baud: 115_200 })).toBeCloseTo((108 * 10) / 115.2 + 3.5, 9);
    expect(pollCycleMs({ benchWireBytes: 8, deviceWireBytes: 100, baud: 115_200, deviceLatencyMs: 0.5 })).toBeCloseTo((108 * 10) / 115.2 + 4, 9);
  });
});

describe("bus rules", () => {
  const poll = (address: number): LinkFrame => ({ address, sequence: 0, message: { type: "poll" } });
  const answer: LinkFrame = { address: 5, sequence: 0, message: { type: "heartbeat", uptimeMs: 1, framesReceived: 0, badCrc: 0, truncated: 0, oversized: 0, rejected: 0, dropped: 0, freeMemoryBytes: null } };

  it("a device acts on bench frames to its address, to broadcast and to a direct link", () => {
    expect(deviceAcceptsFrame(poll(5), 5)).toBe(true);
    expect(deviceAcceptsFrame(poll(6), 5)).toBe(false);
    expect(deviceAcceptsFrame(poll(255), 5)).toBe(true);
    expect(deviceAcceptsFrame(poll(0), 5)).toBe(true);
  });

  it("a device ignores another device's answer even at its own address", () => {
    expect(deviceAcceptsFrame(answer, 5)).toBe(false);
  });

  it("nobody answers a broadcast", () => {
    expect(deviceMayAnswer(poll(255))).toBe(false);
    expect(deviceMayAnswer(poll(5))).toBe(true);
  });

  it("sequence gaps count lost frames across the wrap from 255 to 0", () => {
    expect(framesMissedBetween(10, 11)).toBe(0);
    expect(framesMissedBetween(10, 13)).toBe(2);
    expect(framesMissedBetween(255, 0)).toBe(0);
    expect(framesMissedBetween(254, 1)).toBe(2);
  });
});

describe("the doc's worked budget", () => {
  it("10 float channels out, 10 pointer angles back: 80 and 81 wire bytes, 17.5 ms a turn at 115,200 baud", () => {
    const update = encodeLinkFrame({
      address: 3,
      sequence: 1,
      message: {
        type: "value_update",
        keyframeBegin: false,
        keyframeEnd: false,
        values: Array.from({ length: 10 }, (_, channel) => ({ channel, kind: "float" as const, value: channel + 0.5 })),
      },
    });
    const report = encodeLinkFrame({
      address: 3,
      sequence: 1,
      message: {
        type: "seen_report",
        appliedSequence: 1,
        seen: Array.from({ length: 10 }, (_, element) => ({ element, kind: "pointer_angle" as const, centidegrees: 1000 + element })),
      },
    });
    expect(update.length).toBe(80);
    expect(report.length).toBe(81);
    expect(frameAirTimeMs(update.length, 115_200)).toBeCloseTo(6.94, 2);
    expect(frameAirTimeMs(report.length, 115_200)).toBeCloseTo(7.03, 2);
    const turn = pollCycleMs({ benchWireBytes: update.length, deviceWireBytes: report.length, baud: 115_200 });
    expect(turn).toBeCloseTo(17.48, 2);
    expect(Math.floor(1000 / turn)).toBe(57);
    expect((update.length * 60) / lineBytesPerSecond(115_200)).toBeCloseTo(0.4167, 4);
  });
});
