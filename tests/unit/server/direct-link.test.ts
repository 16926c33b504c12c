import seedrandom from "seedrandom";
import { afterEach, describe, expect, it } from "vitest";
import { DirectLink } from "../../../server/bench/links";
import { decodeLinkFrame, encodeLinkFrame, encodeLinkMessage, sealLinkMessage } from "../../../shared/link/codec";
import type { ChannelValue, LinkFrame, LinkMessageOf } from "../../../shared/link/messages";
import { bytesToHex } from "../../../shared/link/hex";
import { ALL_MESSAGE_TYPES, messageGenerator } from "../link/random-messages";

const quiet = { frame() {}, fault() {}, up() {}, down() {} };
const opened: DirectLink[] = [];

/** A link whose sent frames are decoded into `sent`; without a hello, it packs to the protocol's largest frame. */
function linkCapturing(maxFrameBytes?: number) {
  const link = new DirectLink("network", "panel", quiet);
  opened.push(link);
  const sent: LinkFrame[] = [];
  const wires: Uint8Array[] = [];
  link.attach((bytes) => {
    wires.push(bytes);
    // Each write is one wire frame and its delimiter.
    const decoded = decodeLinkFrame(bytes.subarray(0, bytes.length - 1));
    if (!decoded.ok) throw new Error(decoded.detail);
    sent.push(decoded.frame);
  }, { identify: false });
  if (maxFrameBytes) {
    const hello: LinkMessageOf<"hello"> = {
      type: "hello",
      deviceId: "00112233aabbccdd",
      firmware: { major: 1, minor: 0, patch: 0 },
      protocolVersion: 1,
      capabilities: { valueUpdates: true, seenReports: true, inputEvents: true, waitsForPoll: false, textValues: true, floatValues: true },
      maxFrameBytes,
      elementCount: 4,
      channelCount: 80,
      panel: "test",
    };
    link.receive(encodeLinkFrame({ address: 0, sequence: 0, message: hello }));
  }
  return { link, sent, wires };
}

afterEach(async () => {
  for (const link of opened.splice(0)) await link.close();
});

const values: ChannelValue[] = Array.from({ length: 60 }, (_, channel) => ({ channel, kind: channel % 2 ? "float" : "int", value: channel * 3 }));

describe("DirectLink value updates", () => {
  it("links handed the same list send the same updates, each with its own sequence", () => {
    const a = linkCapturing();
    const b = linkCapturing();
    b.link.update([{ channel: 1, kind: "boolean", value: true }], false); // b's sequence runs ahead by one
    const shared = [...values];
    a.link.update(shared, false);
    b.link.update(shared, false);
    const aUpdates = a.sent;
    const bUpdates = b.sent.slice(1);
    expect(aUpdates.length).toBeGreaterThan(1); // 60 values take more than one frame
    expect(bUpdates.map((f) => f.message)).toEqual(aUpdates.map((f) => f.message));
    expect(aUpdates.map((f) => f.sequence)).toEqual(aUpdates.map((_, i) => i));
    expect(bUpdates.map((f) => f.sequence)).toEqual(bUpdates.map((_, i) => i + 1));
    expect(aUpdates.flatMap((f) => (f.message.type === "value_update" ? f.message.values : []))).toEqual(values);
  });

  it("a board that takes smaller frames gets the same list packed for it, not a neighbour's packing", () => {
    const big = linkCapturing();
    const small = linkCapturing(64);
    const shared = [...values];
    big.link.update(shared, false);
    small.link.update(shared, false);
    expect(small.sent.length).toBeGreaterThan(big.sent.length);
    for (const wire of small.wires) expect(wire.length - 1).toBeLessThanOrEqual(64 + 2); // stuffing adds at most a byte or two
    const carried = (frames: LinkFrame[]) => frames.flatMap((f) => (f.message.type === "value_update" ? f.message.values : []));
    expect(carried(small.sent)).toEqual(values);
    expect(carried(big.sent)).toEqual(values);
  });

  it("a new list is encoded afresh, even one with the same contents", () => {
    const a = linkCapturing();
    a.link.update([{ channel: 0, kind: "int", value: 1 }], false);
    a.link.update([{ channel: 0, kind: "int", value: 2 }], false);
    expect(a.sent.map((f) => (f.message.type === "value_update" ? f.message.values[0].value : null))).toEqual([1, 2]);
  });
});

describe("a message encoded once, sealed per link", () => {
  it("gives the same bytes as encoding the whole frame (every message type, random addresses and sequences)", () => {
    const generate = messageGenerator("seal-per-link");
    const random = seedrandom("seal-per-link");
    for (const type of ALL_MESSAGE_TYPES) {
      for (let round = 0; round < 100; round++) {
        const frame = generate.frame(type);
        const encoded = encodeLinkMessage(frame.message);
        const sequence = Math.floor(random() * 256);
        const direct = encodeLinkFrame({ ...frame, sequence });
        expect(bytesToHex(sealLinkMessage(frame.address, sequence, encoded))).toBe(bytesToHex(direct));
      }
    }
  });

  it("refuses what encodeLinkFrame refuses: a message too large for a frame, a reserved address", () => {
    const tooLarge: LinkMessageOf<"value_update"> = { type: "value_update", keyframeBegin: false, keyframeEnd: false, values: Array.from({ length: 40 }, (_, channel) => ({ channel, kind: "float" as const, value: 1.5 })) };
    expect(() => encodeLinkFrame({ address: 0, sequence: 0, message: tooLarge })).toThrow(RangeError);
    expect(() => encodeLinkMessage(tooLarge)).toThrow(RangeError);
    const poll = encodeLinkMessage({ type: "poll" });
    expect(() => sealLinkMessage(250, 0, poll)).toThrow(RangeError);
  });
});
