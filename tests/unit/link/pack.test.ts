import { describe, expect, it } from "vitest";
import { decodeLinkFrame, encodeLinkFrame, encodeLinkFrameBody } from "../../../shared/link/codec";
import type { ChannelValue, SeenEntry } from "../../../shared/link/messages";
import { linkPayloadBytes, packInputEvents, packSeenReports, packValueUpdates } from "../../../shared/link/pack";
import { LINK_MIN_FRAME_BYTES } from "../../../shared/link/protocol";
import { ALL_MESSAGE_TYPES, messageGenerator } from "./random-messages";

describe("payload sizes", () => {
  it("linkPayloadBytes equals what the encoder writes, for every message type", () => {
    const generate = messageGenerator("sizes");
    for (const type of ALL_MESSAGE_TYPES) {
      for (let round = 0; round < 50; round++) {
        const frame = generate.frame(type);
        expect(linkPayloadBytes(frame.message)).toBe(encodeLinkFrameBody(frame).length - LINK_MIN_FRAME_BYTES);
      }
    }
  });
});

describe("splitting over frames", () => {
  const keyframe: ChannelValue[] = Array.from({ length: 500 }, (_, channel) =>
    channel % 3 === 0 ? { channel, kind: "float", value: channel / 4 } : { channel, kind: "boolean", value: channel % 2 === 0 },
  );

  it("a 500-channel keyframe splits into frames that each fit, in order, begin on the first and end on the last", () => {
    const messages = packValueUpdates(keyframe, { keyframe: true });
    expect(messages.length).toBeGreaterThan(1);
    expect(messages.flatMap((message) => message.values)).toEqual(keyframe);
    expect(messages.map((message) => message.keyframeBegin)).toEqual(messages.map((_, index) => index === 0));
    expect(messages.map((message) => message.keyframeEnd)).toEqual(messages.map((_, index) => index === messages.length - 1));
    for (const message of messages) {
      const decoded = decodeLinkFrame(encodeLinkFrame({ address: 1, sequence: 0, message }));
      expect(decoded.ok).toBe(true);
    }
    // Each frame but the last is full: adding the next value would not have fitted.
    for (let index = 0; index < messages.length - 1; index++) {
      expect(linkPayloadBytes(messages[index]) + 7).toBeGreaterThan(248);
    }
  });

  it("respects a device's smaller announced limit", () => {
    const messages = packValueUpdates(keyframe, { keyframe: false, maxFrameBytes: 64 });
    for (const message of messages) {
      expect(encodeLinkFrameBody({ address: 1, sequence: 0, message }).length).toBeLessThanOrEqual(64);
      expect(message.keyframeBegin || message.keyframeEnd).toBe(false);
    }
  });

  it("an empty keyframe is still one message with both flags", () => {
    expect(packValueUpdates([], { keyframe: true })).toEqual([{ type: "value_update", keyframeBegin: true, keyframeEnd: true, values: [] }]);
  });

  it("seen reports and input events split the same way and keep the applied sequence", () => {
    const seen: SeenEntry[] = Array.from({ length: 120 }, (_, element) => ({ element, kind: "pointer_angle", centidegrees: element * 100 }));
    const reports = packSeenReports(seen, { appliedSequence: 42 });
    expect(reports.flatMap((report) => report.seen)).toEqual(seen);
    expect(reports.every((report) => report.appliedSequence === 42)).toBe(true);
    const inputs = packInputEvents(Array.from({ length: 300 }, (_, element) => ({ element, kind: "button" as const, pressed: true })));
    expect(inputs.length).toBe(Math.ceil(300 / Math.floor(247 / 4)));
  });

  it("refuses an entry too big for the limit rather than loop", () => {
    expect(() => packValueUpdates([{ channel: 0, kind: "text", value: "x".repeat(32) }], { keyframe: false, maxFrameBytes: 32 })).toThrow(RangeError);
  });
});
