import { describe, expect, it } from "vitest";
import seedrandom from "seedrandom";
import { cobsDecode, cobsDecodeInto, cobsEncode, cobsEncodeInto, cobsMaxEncodedLength } from "../../../shared/link/cobs";
import { bytesToHex, hexToBytes } from "../../../shared/link/hex";

const bytes = (hex: string) => hexToBytes(hex)!;
const range = (from: number, to: number) => Uint8Array.from({ length: to - from + 1 }, (_, index) => from + index);

describe("COBS vectors", () => {
  // Cheshire and Baker, "Consistent Overhead Byte Stuffing", IEEE/ACM Trans. Networking 7(2), 1999,
  // and the common vectors that follow its algorithm (from memory, each re-derived by hand here).
  const vectors: [string, string][] = [
    ["00", "01 01"],
    ["00 00", "01 01 01"],
    ["11 22 00 33", "03 11 22 02 33"],
    ["11 22 33 44", "05 11 22 33 44"],
    ["11 00 00 00", "02 11 01 01 01"],
    ["", "01"],
  ];
  for (const [decoded, encoded] of vectors) {
    it(`[${decoded}] encodes to [${encoded}] and back`, () => {
      expect(bytesToHex(cobsEncode(bytes(decoded)))).toBe(encoded);
      const back = cobsDecode(bytes(encoded));
      expect(back.ok && bytesToHex(back.bytes)).toBe(decoded);
    });
  }

  it("254 non-zero bytes take one code byte 0xff and no more (exactly one byte of overhead)", () => {
    const input = range(1, 254);
    const encoded = cobsEncode(input);
    expect(encoded.length).toBe(255);
    expect(encoded[0]).toBe(0xff);
    expect(bytesToHex(encoded.subarray(1))).toBe(bytesToHex(input));
  });

  it("255 non-zero bytes need a second block: ff 01..fe 02 ff", () => {
    const encoded = cobsEncode(range(1, 255));
    expect(encoded.length).toBe(257);
    expect(encoded[0]).toBe(0xff);
    expect(bytesToHex(encoded.subarray(255))).toBe("02 ff");
  });

  it("a zero then 254 non-zero bytes: 01 ff 01..fe", () => {
    const input = new Uint8Array([0, ...range(1, 254)]);
    const encoded = cobsEncode(input);
    expect(bytesToHex(encoded.subarray(0, 2))).toBe("01 ff");
    expect(encoded.length).toBe(256);
  });

  it("round-trips random data, never emits 0x00, and stays within the overhead bound", () => {
    const random = seedrandom("cobs");
    for (let round = 0; round < 400; round++) {
      const data = new Uint8Array(Math.floor(random() * 700));
      const zeroRate = random();
      for (let index = 0; index < data.length; index++) data[index] = random() < zeroRate ? 0 : 1 + Math.floor(random() * 255);
      const encoded = cobsEncode(data);
      expect(encoded.includes(0)).toBe(false);
      expect(encoded.length).toBeLessThanOrEqual(cobsMaxEncodedLength(data.length));
      const back = cobsDecode(encoded);
      expect(back.ok && bytesToHex(back.bytes)).toBe(bytesToHex(data));
    }
  });
});

describe("COBS decoding of bad input", () => {
  it("reports a code byte that points past the end as truncated", () => {
    expect(cobsDecode(bytes("05 11 22"))).toMatchObject({ ok: false, reason: "truncated" });
  });

  it("reports a 0x00 inside the data", () => {
    expect(cobsDecode(bytes("03 11 00"))).toMatchObject({ ok: false, reason: "zero_byte" });
    expect(cobsDecode(bytes("00"))).toMatchObject({ ok: false, reason: "zero_byte" });
  });

  it("never throws on random bytes", () => {
    const random = seedrandom("cobs-garbage");
    for (let round = 0; round < 2000; round++) {
      const data = Uint8Array.from({ length: Math.floor(random() * 40) }, () => Math.floor(random() * 256));
      const result = cobsDecode(data);
      expect(typeof result.ok).toBe("boolean");
    }
  });
});

describe("encoding into a buffer", () => {
  it("a slice of the input, written at an offset, gives the same bytes as encoding the slice alone (500 random cases)", () => {
    const random = seedrandom("cobs-into");
    for (let round = 0; round < 500; round++) {
      const input = Uint8Array.from({ length: Math.floor(random() * 700) }, () => (random() < 0.2 ? 0 : Math.floor(random() * 256)));
      const start = Math.floor(random() * (input.length + 1));
      const end = start + Math.floor(random() * (input.length - start + 1));
      const at = Math.floor(random() * 4);
      const output = new Uint8Array(at + cobsMaxEncodedLength(end - start) + 3).fill(0xee);
      const written = cobsEncodeInto(input, start, end, output, at);
      expect(bytesToHex(output.subarray(at, at + written))).toBe(bytesToHex(cobsEncode(input.slice(start, end))));
      // Nothing outside its room is touched.
      expect([...output.subarray(0, at), ...output.subarray(at + written)].every((b) => b === 0xee)).toBe(true);
    }
  });
});

describe("decoding into a buffer", () => {
  it("agrees with cobsDecode on any bytes: the same output, or -1 exactly when it refuses (2,000 random inputs)", () => {
    const random = seedrandom("cobs-decode-into");
    for (let round = 0; round < 2000; round++) {
      // Half are real encodings (maybe damaged), half are noise.
      const noise = Uint8Array.from({ length: Math.floor(random() * 300) }, () => (random() < 0.1 ? 0 : Math.floor(random() * 256)));
      const input = round % 2 === 0 ? cobsEncode(noise).slice() : noise;
      if (round % 4 === 0 && input.length > 0) input[Math.floor(random() * input.length)] = Math.floor(random() * 256);
      const output = new Uint8Array(input.length + 1).fill(0xee);
      const length = cobsDecodeInto(input, input.length, output);
      const reference = cobsDecode(input);
      if (reference.ok) expect(bytesToHex(output.subarray(0, length))).toBe(bytesToHex(reference.bytes));
      else expect(length).toBe(-1);
    }
  });
});
