import { describe, expect, it } from "vitest";
import seedrandom from "seedrandom";
import { encodeLinkFrame, sealRawLinkFrame } from "../../../shared/link/codec";
import { hexToBytes } from "../../../shared/link/hex";
import type { LinkFrame } from "../../../shared/link/messages";
import { LinkStreamDecoder, type LinkStreamEvent } from "../../../shared/link/stream";
import { ALL_MESSAGE_TYPES, messageGenerator } from "./random-messages";

const concat = (...parts: Uint8Array[]) => {
  const all = new Uint8Array(parts.reduce((sum, part) => sum + part.length, 0));
  let at = 0;
  for (const part of parts) {
    all.set(part, at);
    at += part.length;
  }
  return all;
};
const framesOf = (events: LinkStreamEvent[]) => events.flatMap((event) => (event.ok ? [event.frame] : []));
const faultsOf = (events: LinkStreamEvent[]) => events.flatMap((event) => (event.ok ? [] : [event.fault]));

const generate = messageGenerator("stream");
const sample: LinkFrame[] = ALL_MESSAGE_TYPES.map((type) => generate.frame(type));
const sampleWire = concat(...sample.map((frame) => encodeLinkFrame(frame)));

describe("LinkStreamDecoder with chunks split anywhere", () => {
  it("finds the same frames whatever single split point cuts the stream", () => {
    for (let split = 0; split <= sampleWire.length; split++) {
      const decoder = new LinkStreamDecoder();
      const events = [...decoder.push(sampleWire.subarray(0, split)), ...decoder.push(sampleWire.subarray(split))];
      expect(framesOf(events)).toEqual(sample);
      expect(decoder.badFrames).toBe(0);
    }
  });

  it("finds the same frames fed one byte at a time", () => {
    const decoder = new LinkStreamDecoder();
    const events: LinkStreamEvent[] = [];
    for (const byte of sampleWire) events.push(...decoder.push(Uint8Array.of(byte)));
    expect(framesOf(events)).toEqual(sample);
    expect(decoder.counts.frames).toBe(sample.length);
    expect(decoder.counts.bytes).toBe(sampleWire.length);
  });

  it("finds the same frames in random chunk sizes", () => {
    const random = seedrandom("chunks");
    for (let round = 0; round < 50; round++) {
      const decoder = new LinkStreamDecoder();
      const events: LinkStreamEvent[] = [];
      for (let at = 0; at < sampleWire.length; ) {
        const size = 1 + Math.floor(random() * 40);
        events.push(...decoder.push(sampleWire.subarray(at, at + size)));
        at += size;
      }
      expect(framesOf(events)).toEqual(sample);
    }
  });

  it("reports each frame's wire length, delimiter included", () => {
    const decoder = new LinkStreamDecoder();
    const events = decoder.push(sampleWire);
    expect(events.map((event) => event.wireBytes)).toEqual(sample.map((frame) => encodeLinkFrame(frame).length));
  });

  it("ignores empty frames: runs of delimiters are not faults", () => {
    const decoder = new LinkStreamDecoder();
    const poll = encodeLinkFrame({ address: 2, sequence: 4, message: { type: "poll" } });
    const events = decoder.push(concat(Uint8Array.of(0, 0, 0), poll, Uint8Array.of(0, 0), poll));
    expect(framesOf(events)).toHaveLength(2);
    expect(decoder.badFrames).toBe(0);
  });
});

describe("LinkStreamDecoder counts bad frames and recovers", () => {
  const poll: LinkFrame = { address: 3, sequence: 1, message: { type: "poll" } };
  const pollWire = encodeLinkFrame(poll);
  const bytes = (hex: string) => hexToBytes(hex)!;

  it("garbage before a frame: one fault for the garbage, then the frame", () => {
    const decoder = new LinkStreamDecoder();
    const events = decoder.push(concat(bytes("ff 13 37 00"), pollWire));
    expect(faultsOf(events)).toEqual(["truncated"]);
    expect(framesOf(events)).toEqual([poll]);
  });

  it("garbage glued to the front of a frame costs that frame, and the next one arrives", () => {
    const decoder = new LinkStreamDecoder();
    const events = decoder.push(concat(bytes("55 aa"), pollWire, pollWire));
    expect(events).toHaveLength(2);
    expect(events[0].ok).toBe(false);
    expect(framesOf(events)).toEqual([poll]);
    expect(decoder.badFrames).toBe(1);
  });

  it("a truncated frame (cut short, delimiter arrives) is counted, the next frame decodes", () => {
    const heartbeat = encodeLinkFrame({
      address: 3,
      sequence: 9,
      message: { type: "heartbeat", uptimeMs: 123456, framesReceived: 840, badCrc: 1, truncated: 0, oversized: 0, rejected: 2, dropped: 0, freeMemoryBytes: 5120 },
    });
    const decoder = new LinkStreamDecoder();
    const events = decoder.push(concat(heartbeat.subarray(0, 10), Uint8Array.of(0), pollWire));
    expect(faultsOf(events)).toHaveLength(1);
    expect(["truncated", "bad_crc"]).toContain(faultsOf(events)[0]);
    expect(framesOf(events)).toEqual([poll]);
  });

  it("a bad CRC is counted as bad_crc and the next frame decodes", () => {
    const damaged = pollWire.slice();
    damaged[3] ^= 0x01;
    const decoder = new LinkStreamDecoder();
    const events = decoder.push(concat(damaged, pollWire));
    expect(faultsOf(events)).toEqual(["bad_crc"]);
    expect(framesOf(events)).toEqual([poll]);
    expect(decoder.counts.badCrc).toBe(1);
  });

  it("an endless run without a delimiter is one oversized fault, memory stays bounded, the next frame decodes", () => {
    const decoder = new LinkStreamDecoder();
    const noise = new Uint8Array(5000).fill(0x41);
    const events = [...decoder.push(noise), ...decoder.push(noise)];
    expect(faultsOf(events)).toEqual(["oversized"]);
    expect(decoder.pendingBytes).toBe(0);
    const after = decoder.push(concat(Uint8Array.of(0), pollWire));
    expect(framesOf(after)).toEqual([poll]);
    expect(decoder.counts.oversized).toBe(1);
  });

  it("a board with a small buffer refuses a frame one byte over its limit and takes one at its limit", () => {
    const frameAt = (length: number): Uint8Array => {
      // An error message's text pads the frame: header 4 + code/subject/len 4 + text + CRC 2.
      return encodeLinkFrame({ address: 1, sequence: 0, message: { type: "error", from: "bench", code: "queue_full", subject: 0, text: "x".repeat(length - 10) } });
    };
    const decoder = new LinkStreamDecoder({ maxFrameBytes: 32 });
    expect(framesOf(decoder.push(frameAt(32)))).toHaveLength(1);
    expect(faultsOf(decoder.push(frameAt(33)))).toEqual(["oversized"]);
    expect(framesOf(decoder.push(frameAt(32)))).toHaveLength(1);
  });

  it("unknown type, bad version, bad address and bad payload are each counted under their own name", () => {
    const decoder = new LinkStreamDecoder();
    const events = decoder.push(
      concat(
        sealRawLinkFrame(bytes("01 03 05 00")),
        sealRawLinkFrame(bytes("02 03 01 00")),
        sealRawLinkFrame(bytes("01 fa 01 00")),
        sealRawLinkFrame(bytes("01 03 04 00 00 01")),
        pollWire,
      ),
    );
    expect(faultsOf(events)).toEqual(["unknown_type", "bad_version", "bad_address", "bad_payload"]);
    expect(framesOf(events)).toEqual([poll]);
    expect(decoder.counts).toMatchObject({ unknownType: 1, badVersion: 1, badAddress: 1, badPayload: 1, frames: 1 });
    expect(decoder.badFrames).toBe(4);
  });

  it("a frame cut off by the end of the stream is truncated", () => {
    const decoder = new LinkStreamDecoder();
    expect(decoder.push(pollWire.subarray(0, 4))).toEqual([]);
    expect(faultsOf(decoder.end())).toEqual(["truncated"]);
    expect(decoder.end()).toEqual([]);
  });

  it("the bench ignores its own echo and a device ignores other devices' answers, without counting faults", () => {
    const hello = encodeLinkFrame({
      address: 4,
      sequence: 0,
      message: { type: "input_event", inputs: [{ element: 1, kind: "button", pressed: true }] },
    });
    const bench = new LinkStreamDecoder({ acceptFrom: "device" });
    expect(framesOf(bench.push(concat(pollWire, hello))).map((frame) => frame.message.type)).toEqual(["input_event"]);
    expect(bench.counts).toMatchObject({ ignored: 1, frames: 1 });
    const device = new LinkStreamDecoder({ acceptFrom: "bench" });
    expect(framesOf(device.push(concat(pollWire, hello))).map((frame) => frame.message.type)).toEqual(["poll"]);
    expect(device.counts.ignored).toBe(1);
    expect(device.badFrames).toBe(0);
  });

  it("never throws on random bytes, and good frames after the noise still arrive", () => {
    const random = seedrandom("stream-noise");
    const decoder = new LinkStreamDecoder();
    let frames = 0;
    for (let round = 0; round < 300; round++) {
      const noise = Uint8Array.from({ length: Math.floor(random() * 400) }, () => (random() < 0.05 ? 0 : Math.floor(random() * 256)));
      frames += framesOf(decoder.push(noise)).length;
      // A leading delimiter makes the frame survive whatever noise came before.
      const good = framesOf(decoder.push(encodeLinkFrame(poll, { leadingDelimiter: true })));
      expect(good).toEqual([poll]);
    }
    expect(decoder.counts.frames).toBe(300 + frames);
    expect(decoder.badFrames).toBeGreaterThan(0);
  });

  it("refuses a limit outside 6..254 when built", () => {
    expect(() => new LinkStreamDecoder({ maxFrameBytes: 255 })).toThrow(RangeError);
    expect(() => new LinkStreamDecoder({ maxFrameBytes: 5 })).toThrow(RangeError);
  });
});
