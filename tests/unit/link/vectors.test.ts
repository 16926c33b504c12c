import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import { crc16modbus } from "crc";
import { cobsDecode, cobsEncode } from "../../../shared/link/cobs";
import { decodeLinkFrame, encodeLinkFrame, encodeLinkFrameBody } from "../../../shared/link/codec";
import { crc16Modbus } from "../../../shared/link/crc16";
import { bytesToHex, hexToBytes } from "../../../shared/link/hex";
import { linkFrame } from "../../../shared/link/messages";
import { LINK_PROTOCOL_VERSION } from "../../../shared/link/protocol";
import { LinkStreamDecoder } from "../../../shared/link/stream";
import { ALL_MESSAGE_TYPES } from "./random-messages";

const root = (path: string) => fileURLToPath(new URL(`../../../${path}`, import.meta.url));
const vectors = JSON.parse(readFileSync(root("shared/link/test-vectors.json"), "utf8"));
const doc = readFileSync(root("docs/link-protocol.md"), "utf8");
const bytes = (hex: string) => {
  const parsed = hexToBytes(hex);
  if (!parsed) throw new Error(`not hex: ${hex}`);
  return parsed;
};

interface FrameVector {
  name: string;
  frame: unknown;
  body: string;
  wire: string;
}
const frames: FrameVector[] = vectors.frames;

describe("shared test vectors (shared/link/test-vectors.json)", () => {
  it("are for this protocol version", () => {
    expect(vectors.protocolVersion).toBe(LINK_PROTOCOL_VERSION);
  });

  it("cover every message type, and errors from both sides", () => {
    const types = frames.map((vector) => linkFrame.parse(vector.frame).message.type);
    expect(new Set(types)).toEqual(new Set(ALL_MESSAGE_TYPES));
    const errorSenders = frames.flatMap((vector) => {
      const message = linkFrame.parse(vector.frame).message;
      return message.type === "error" ? [message.from] : [];
    });
    expect(new Set(errorSenders)).toEqual(new Set(["bench", "device"]));
  });

  for (const vector of frames) {
    it(`${vector.name}: the encoder gives the vector's bytes and the decoder its meaning`, () => {
      const frame = linkFrame.parse(vector.frame);
      expect(bytesToHex(encodeLinkFrameBody(frame))).toBe(vector.body);
      expect(bytesToHex(encodeLinkFrame(frame))).toBe(vector.wire);
      expect(decodeLinkFrame(bytes(vector.wire))).toEqual({ ok: true, frame });
      // The body's CRC agrees with the reference library too.
      const body = bytes(vector.body);
      const crc = crc16modbus(Buffer.from(body.subarray(0, -2)));
      expect(body[body.length - 2] | (body[body.length - 1] << 8)).toBe(crc);
    });
  }

  it("CRC checks hold, with the catalogue's check value among them", () => {
    expect(vectors.crc.model.check).toBe("0x4b37"); // reveng catalogue, CRC-16/MODBUS
    for (const check of vectors.crc.checks) {
      const data = check.ascii !== undefined ? new TextEncoder().encode(check.ascii) : bytes(check.hex);
      expect("0x" + crc16Modbus(data).toString(16).padStart(4, "0")).toBe(check.crc);
    }
  });

  it("COBS vectors hold both ways", () => {
    for (const vector of vectors.cobs.vectors) {
      expect(bytesToHex(cobsEncode(bytes(vector.decoded)))).toBe(vector.encoded);
      const back = cobsDecode(bytes(vector.encoded));
      expect(back.ok && bytesToHex(back.bytes)).toBe(vector.decoded);
    }
  });

  for (const vector of vectors.faults as { name: string; wire: string; fault: string }[]) {
    it(`fault ${vector.name}: reported as ${vector.fault}, and the stream recovers after it`, () => {
      const decoder = new LinkStreamDecoder();
      const poll = bytes(frames.find((frame) => frame.name === "poll")!.wire);
      const events = [...decoder.push(bytes(vector.wire)), ...decoder.push(poll)];
      expect(events.map((event) => (event.ok ? event.frame.message.type : event.fault))).toEqual([vector.fault, "poll"]);
      expect(decoder.badFrames).toBe(1);
    });
  }

  it("the stream vector gives the listed events", () => {
    const decoder = new LinkStreamDecoder();
    const events = decoder.push(bytes(vectors.stream.wire));
    const expected = vectors.stream.expect.map((entry: { fault?: string; frame?: string }) => entry.fault ?? entry.frame);
    expect(events.map((event) => (event.ok ? event.frame.message.type : event.fault))).toEqual(expected);
  });
});

describe("docs/link-protocol.md matches the encoder", () => {
  for (const vector of frames) {
    it(`shows the ${vector.name} example with the encoder's own bytes`, () => {
      const marker = `<!-- vector: ${vector.name} -->`;
      const at = doc.indexOf(marker);
      expect(at, `${marker} missing from the doc`).toBeGreaterThanOrEqual(0);
      const block = /```\nbody: ([0-9a-f ]+)\nwire: ([0-9a-f ]+)\n```/.exec(doc.slice(at));
      expect(block, `no body/wire block after ${marker}`).not.toBeNull();
      const frame = linkFrame.parse(vector.frame);
      expect(block![1]).toBe(bytesToHex(encodeLinkFrameBody(frame)));
      expect(block![2]).toBe(bytesToHex(encodeLinkFrame(frame)));
    });
  }

  it("lists every type byte the codec knows, with the sender the codec uses", () => {
    const rows: [string, string, string][] = [
      ["0x01", "identify", "bench"],
      ["0x02", "poll", "bench"],
      ["0x03", "reset", "bench"],
      ["0x04", "value_update", "bench"],
      ["0x0f", "error", "bench"],
      ["0x81", "hello", "device"],
      ["0x82", "seen_report", "device"],
      ["0x83", "input_event", "device"],
      ["0x84", "heartbeat", "device"],
      ["0x8f", "error", "device"],
    ];
    for (const [typeByte, name, sender] of rows) {
      expect(doc).toContain(`| \`${typeByte}\` | ${name} | ${sender} |`);
    }
  });

  it("states the CRC parameters the code uses", () => {
    expect(doc).toContain("| poly | `0x8005`");
    expect(doc).toContain("| init | `0xFFFF` |");
    expect(doc).toContain("| check | `0x4B37`");
  });
});
