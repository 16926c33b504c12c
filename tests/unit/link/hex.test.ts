import { describe, expect, it } from "vitest";
// Through the barrel, as the server and browser import it.
import { bytesToHex, hexToBytes } from "../../../shared/link";

describe("hex text for frames", () => {
  it("writes lowercase pairs separated by spaces", () => {
    expect(bytesToHex(Uint8Array.of(0, 0x0f, 0xa0, 0xff))).toBe("00 0f a0 ff");
    expect(bytesToHex(new Uint8Array())).toBe("");
  });

  it("reads hex with any spacing and case", () => {
    expect(Array.from(hexToBytes("0F a0\n FF")!)).toEqual([0x0f, 0xa0, 0xff]);
    expect(Array.from(hexToBytes("")!)).toEqual([]);
  });

  it("refuses an odd digit count or a non-hex character instead of guessing", () => {
    expect(hexToBytes("0f a")).toBeUndefined();
    expect(hexToBytes("0g")).toBeUndefined();
  });
});
