import { describe, expect, it } from "vitest";
import seedrandom from "seedrandom";
import {
  decodeLinkFrame,
  decodeLinkFrameBody,
  encodeLinkFrame,
  encodeLinkFrameBody,
  sealRawLinkFrame,
} from "../../../shared/link/codec";
import { crc16Modbus } from "../../../shared/link/crc16";
import { bytesToHex, hexToBytes } from "../../../shared/link/hex";
import { linkFrame, type LinkFrame } from "../../../shared/link/messages";
import { LINK_MAX_FRAME_BYTES } from "../../../shared/link/protocol";
import { cobsDecode, cobsEncode } from "../../../shared/link/cobs";
import { ALL_MESSAGE_TYPES, messageGenerator } from "./random-messages";

const bytes = (hex: string) => hexToBytes(hex)!;

describe("encoding into reused buffers", () => {
  it("frames encoded one after another keep their own bytes (the encoder's buffer is shared)", () => {
    const generate = messageGenerator("shared-writer");
    const made: { frame: LinkFrame; wire: Uint8Array; body: Uint8Array; hex: string; bodyHex: string }[] = [];
    for (let round = 0; round < 200; round++) {
      const frame = generate.frame(ALL_MESSAGE_TYPES[round % ALL_MESSAGE_TYPES.length]);
      const wire = encodeLinkFrame(frame, { leadingDelimiter: round % 3 === 0 });
      const body = encodeLinkFrameBody(frame);
      made.push({ frame, wire, body, hex: bytesToHex(wire), bodyHex: bytesToHex(body) });
    }
    for (const m of made) {
      expect(bytesToHex(m.wire)).toBe(m.hex);
      expect(bytesToHex(m.body)).toBe(m.bodyHex);
      // A leading delimiter is for a stream's receiver; the frame itself follows it.
      expect(decodeLinkFrame(m.wire[0] === 0 ? m.wire.subarray(1) : m.wire)).toEqual({ ok: true, frame: m.frame });
    }
  });

  it("asks the given allocator for exactly the frame's length and returns what it made", () => {
    const generate = messageGenerator("allocator");
    for (const type of ALL_MESSAGE_TYPES) {
      const frame = generate.frame(type);
      const asked: number[] = [];
      const wire = encodeLinkFrame(frame, { allocate: (length) => (asked.push(length), Buffer.alloc(length, 0xee)) });
      expect(Buffer.isBuffer(wire)).toBe(true);
      expect(asked).toEqual([wire.length]);
      expect(bytesToHex(wire)).toBe(bytesToHex(encodeLinkFrame(frame)));
    }
  });

  it("stuffs bodies at and past one COBS block (254 bytes) the same as the reference stuffing", () => {
    for (const length of [1, 2, 200, 252, 253, 254, 300]) {
      for (const fill of [0x41, 0x00]) {
        const headerAndPayload = new Uint8Array(length).fill(fill);
        const wire = sealRawLinkFrame(headerAndPayload);
        const crc = crc16Modbus(headerAndPayload);
        const body = new Uint8Array([...headerAndPayload, crc & 0xff, crc >>> 8]);
        expect(bytesToHex(wire)).toBe(bytesToHex(new Uint8Array([...cobsEncode(body), 0])));
      }
    }
  });

  it("a refused frame leaves the next one whole", () => {
    expect(() => encodeLinkFrame({ address: 250, sequence: 0, message: { type: "poll" } })).toThrow(RangeError);
    expect(() => encodeLinkFrame({ address: 1, sequence: 0, message: { type: "value_update", keyframeBegin: false, keyframeEnd: false, values: [{ channel: 1, kind: "text", value: "x".repeat(40) }] } })).toThrow(RangeError);
    const frame: LinkFrame = { address: 1, sequence: 7, message: { type: "poll" } };
    expect(decodeLinkFrame(encodeLinkFrame(frame))).toEqual({ ok: true, frame });
  });
});

describe("round trips", () => {
  it("every message type encodes and decodes to itself (300 random frames per type)", () => {
    const generate = messageGenerator("round-trip");
    for (const type of ALL_MESSAGE_TYPES) {
      for (let round = 0; round < 300; round++) {
        const frame = generate.frame(type);
        const wire = encodeLinkFrame(frame);
        const decoded = decodeLinkFrame(wire);
        expect(decoded).toEqual({ ok: true, frame });
        // The decoder only ever produces what the schema accepts.
        if (decoded.ok) expect(linkFrame.safeParse(decoded.frame).success).toBe(true);
      }
    }
  });

  it("wire bytes hold no 0x00 except the final delimiter, and the body ends in its own CRC", () => {
    const generate = messageGenerator("wire-shape");
    for (const type of ALL_MESSAGE_TYPES) {
      const frame = generate.frame(type);
      const wire = encodeLinkFrame(frame);
      expect(wire[wire.length - 1]).toBe(0);
      expect(wire.subarray(0, -1).includes(0)).toBe(false);
      const body = encodeLinkFrameBody(frame);
      expect(crc16Modbus(body)).toBe(0); // MODBUS residue is 0 over data + CRC low byte first
      const unstuffed = cobsDecode(wire.subarray(0, -1));
      expect(unstuffed.ok && bytesToHex(unstuffed.bytes)).toBe(bytesToHex(body));
    }
  });

  it("a float value arrives as its float32 rounding", () => {
    const frame: LinkFrame = {
      address: 1,
      sequence: 0,
      message: { type: "value_update", keyframeBegin: false, keyframeEnd: false, values: [{ channel: 0, kind: "float", value: 29.92 }] },
    };
    const decoded = decodeLinkFrame(encodeLinkFrame(frame));
    expect(decoded.ok && decoded.frame.message.type === "value_update" && decoded.frame.message.values[0].value).toBe(Math.fround(29.92));
  });

  it("the leading delimiter option adds one 0x00 in front and decodes the same", () => {
    const frame: LinkFrame = { address: 9, sequence: 3, message: { type: "poll" } };
    const plain = encodeLinkFrame(frame);
    const led = encodeLinkFrame(frame, { leadingDelimiter: true });
    expect(bytesToHex(led)).toBe("00 " + bytesToHex(plain));
  });
});

describe("the encoder refuses what the protocol cannot carry", () => {
  const update = (values: unknown): LinkFrame =>
    ({ address: 1, sequence: 0, message: { type: "value_update", keyframeBegin: false, keyframeEnd: false, values } }) as LinkFrame;
  const cases: [string, LinkFrame][] = [
    ["a reserved address", { address: 250, sequence: 0, message: { type: "poll" } }],
    ["a device frame to broadcast", { address: 255, sequence: 0, message: { type: "input_event", inputs: [] } }],
    ["a sequence above 255", { address: 1, sequence: 256, message: { type: "poll" } }],
    ["a channel above 65535", update([{ channel: 70000, kind: "enum", value: 1 }])],
    ["a fractional int", update([{ channel: 1, kind: "int", value: 1.5 }])],
    ["an int beyond 32 bits", update([{ channel: 1, kind: "int", value: 2 ** 31 }])],
    ["an infinite float", update([{ channel: 1, kind: "float", value: Infinity }])],
    ["text over 32 UTF-8 bytes", update([{ channel: 1, kind: "text", value: "°".repeat(17) }])],
    ["too many values for one frame", update(Array.from({ length: 40 }, (_, channel) => ({ channel, kind: "int", value: 1 })))],
    [
      "a malformed device id",
      {
        address: 1,
        sequence: 0,
        message: {
          type: "hello",
          deviceId: "XYZ",
          firmware: { major: 1, minor: 0, patch: 0 },
          protocolVersion: 1,
          capabilities: { valueUpdates: true, seenReports: true, inputEvents: true, waitsForPoll: false, textValues: true, floatValues: true },
          maxFrameBytes: 254,
          elementCount: 1,
          channelCount: 1,
          panel: "p",
        },
      },
    ],
  ];
  for (const [name, frame] of cases) {
    it(`throws RangeError for ${name}, and the schema rejects it too`, () => {
      expect(() => encodeLinkFrame(frame)).toThrow(RangeError);
      expect(linkFrame.safeParse(frame).success).toBe(false);
    });
  }

  it("a value update of exactly 254 bytes is accepted, one byte more is refused", () => {
    // 2 payload head bytes + 61 booleans/enums of 4 bytes = 246 payload; + header 4 + CRC 2 = 252.
    // Add a text value of 1 byte (5 bytes) would be 257; a 2-byte text is 6 => 258; use an int (7) for 259.
    // Aim exactly: 248 payload = 2 + 4*60 + 6 (text "a" + ... ) -> 2 + 240 + 6 = 248 with text of 2 bytes.
    const values = [
      ...Array.from({ length: 60 }, (_, channel) => ({ channel, kind: "enum" as const, value: 1 })),
      { channel: 60, kind: "text" as const, value: "ab" },
    ];
    const frame = update(values);
    expect(encodeLinkFrameBody(frame).length).toBe(LINK_MAX_FRAME_BYTES);
    expect(encodeLinkFrame(frame).length).toBe(LINK_MAX_FRAME_BYTES + 2); // one COBS byte and the delimiter
    const tooBig = update([...values.slice(0, 60), { channel: 60, kind: "text" as const, value: "abc" }]);
    expect(() => encodeLinkFrame(tooBig)).toThrow(/too large/);
  });
});

describe("decoding faults", () => {
  const poll = encodeLinkFrameBody({ address: 3, sequence: 1, message: { type: "poll" } });
  const seal = (hex: string) => sealRawLinkFrame(bytes(hex));

  it("a flipped bit anywhere in the body is a bad CRC", () => {
    for (let bit = 0; bit < poll.length * 8; bit++) {
      const damaged = poll.slice();
      damaged[bit >> 3] ^= 1 << (bit & 7);
      expect(decodeLinkFrameBody(damaged)).toMatchObject({ ok: false, fault: "bad_crc" });
    }
  });

  it("fewer than six bytes is truncated", () => {
    expect(decodeLinkFrameBody(bytes("01 03 02 01 31"))).toMatchObject({ ok: false, fault: "truncated" });
    expect(decodeLinkFrame(bytes("00"))).toMatchObject({ ok: false, fault: "truncated" });
  });

  it("a frame longer than the receiver's limit is oversized", () => {
    expect(decodeLinkFrameBody(new Uint8Array(255))).toMatchObject({ ok: false, fault: "oversized" });
    const frame = encodeLinkFrame({
      address: 1,
      sequence: 0,
      message: { type: "input_event", inputs: Array.from({ length: 20 }, (_, element) => ({ element, kind: "position" as const, position: 1 })) },
    });
    expect(decodeLinkFrame(frame).ok).toBe(true);
    expect(decodeLinkFrame(frame, 64)).toMatchObject({ ok: false, fault: "oversized" });
  });

  it("version 2 is a bad version", () => {
    expect(decodeLinkFrame(seal("02 03 02 00"))).toMatchObject({ ok: false, fault: "bad_version" });
  });

  it("addresses 248..254 are bad addresses; 0, 247 and 255 are fine for the bench", () => {
    for (let address = 248; address <= 254; address++) {
      expect(decodeLinkFrame(seal(`01 ${address.toString(16)} 02 00`))).toMatchObject({ ok: false, fault: "bad_address" });
    }
    for (const address of [0, 247, 255]) {
      expect(decodeLinkFrame(seal(`01 ${address.toString(16).padStart(2, "0")} 02 00`)).ok).toBe(true);
    }
    // A device never speaks as broadcast.
    expect(decodeLinkFrame(seal("01 ff 84 00 00 00 00 00 00 00 00 00 00 00 00 00 00 00 00 00 ff ff"))).toMatchObject({
      ok: false,
      fault: "bad_address",
    });
  });

  it("type bytes this version does not define are unknown types", () => {
    const known = new Set([0x01, 0x02, 0x03, 0x04, 0x0f, 0x81, 0x82, 0x83, 0x84, 0x8f]);
    for (let type = 0; type < 256; type++) {
      const result = decodeLinkFrame(seal(`01 03 ${type.toString(16).padStart(2, "0")} 00`));
      if (known.has(type)) expect(result.ok || result.fault === "bad_payload").toBe(true);
      else expect(result).toMatchObject({ ok: false, fault: "unknown_type" });
    }
  });

  const badPayloads: [string, string][] = [
    ["an empty payload where a poll has none, plus a stray byte", "01 03 02 00 99"],
    ["a count promising more values than present", "01 03 04 00 00 01"],
    ["reserved value update flag bits", "01 03 04 00 04 00"],
    ["an unknown value tag", "01 03 04 00 00 01 00 00 09 01"],
    ["a boolean byte of 2", "01 03 04 00 00 01 00 00 01 02"],
    ["a text length beyond 32", "01 03 04 00 00 01 00 00 05 21" + " 41".repeat(33)],
    ["invalid UTF-8 text", "01 03 04 00 00 01 00 00 05 01 ff"],
    ["a zero byte in text (PostgreSQL could not keep it)", "01 03 04 00 00 01 00 00 05 02 41 00"],
    ["a non-finite float (NaN)", "01 03 04 00 00 01 00 00 03 00 00 c0 7f"],
    ["a lamp state of 3", "01 03 82 00 00 00 01 00 00 02 03"],
    ["a breaker position of 3", "01 03 82 00 00 00 01 00 00 06 03"],
    ["an applied sequence without its flag", "01 03 82 00 00 05 00"],
    ["an unknown error code", "01 03 8f 00 0c 00 00 00"],
    ["a hello whose max frame is 5", "01 03 81 00 01 00 00 00 00 00 00 00 00 01 00 00 00 00 05 00 00 00 00 00"],
    ["hello capability bits that are reserved", "01 03 81 00 01 00 00 00 00 00 00 00 00 01 00 00 40 00 80 00 00 00 00 00"],
  ];
  for (const [name, hex] of badPayloads) {
    it(`${name} is a bad payload`, () => {
      expect(decodeLinkFrame(seal(hex))).toMatchObject({ ok: false, fault: "bad_payload" });
    });
  }

  it("never throws on random bytes or on damaged good frames, only reports", () => {
    const random = seedrandom("decoder-fuzz");
    const generate = messageGenerator("decoder-fuzz-frames");
    const faults = new Set<string>();
    for (let round = 0; round < 3000; round++) {
      let wire: Uint8Array;
      if (round % 3 === 0) {
        wire = Uint8Array.from({ length: Math.floor(random() * 80) }, () => Math.floor(random() * 256));
      } else {
        // Damage a good body and re-seal it: the CRC passes, so the payload parser itself is exercised.
        const body = encodeLinkFrameBody(generate.frame(ALL_MESSAGE_TYPES[round % ALL_MESSAGE_TYPES.length]));
        const headerAndPayload = body.slice(0, -2);
        const damage = 1 + Math.floor(random() * 3);
        for (let hit = 0; hit < damage; hit++) {
          headerAndPayload[Math.floor(random() * headerAndPayload.length)] = Math.floor(random() * 256);
        }
        const cut = random() < 0.3 ? Math.floor(random() * headerAndPayload.length) : headerAndPayload.length;
        wire = sealRawLinkFrame(headerAndPayload.subarray(0, Math.max(cut, 0)));
      }
      const result = decodeLinkFrame(wire);
      if (!result.ok) faults.add(result.fault);
      else expect(linkFrame.safeParse(result.frame).success).toBe(true);
    }
    // The fuzz reached every check, not just the first.
    expect([...faults].sort()).toEqual(["bad_address", "bad_crc", "bad_payload", "bad_version", "truncated", "unknown_type"]);
  });
});
