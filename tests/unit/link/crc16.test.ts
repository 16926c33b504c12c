import { describe, expect, it } from "vitest";
import { crc16ccitt, crc16kermit, crc16modbus } from "crc";
import seedrandom from "seedrandom";
import { CRC16_IBM_3740, CRC16_KERMIT, CRC16_MODBUS, crc16, crc16Modbus } from "../../../shared/link/crc16";

const ascii = (text: string) => new TextEncoder().encode(text);
const CHECK_INPUT = ascii("123456789");

describe("CRC-16 models against the catalogue's check values", () => {
  it("CRC-16/MODBUS of ASCII 123456789 is 0x4B37", () => {
    // Catalogue of parametrised CRC algorithms (reveng), CRC-16/MODBUS: check=0x4b37
    expect(crc16(CRC16_MODBUS, CHECK_INPUT)).toBe(0x4b37);
    expect(crc16Modbus(CHECK_INPUT)).toBe(0x4b37);
    expect(CRC16_MODBUS.check).toBe(0x4b37);
  });

  it("CRC-16/IBM-3740 of ASCII 123456789 is 0x29B1", () => {
    // Catalogue of parametrised CRC algorithms (reveng), CRC-16/IBM-3740 (alias CRC-16/CCITT-FALSE): check=0x29b1
    expect(crc16(CRC16_IBM_3740, CHECK_INPUT)).toBe(0x29b1);
  });

  it("CRC-16/KERMIT of ASCII 123456789 is 0x2189", () => {
    // Catalogue of parametrised CRC algorithms (reveng), CRC-16/KERMIT: check=0x2189
    expect(crc16(CRC16_KERMIT, CHECK_INPUT)).toBe(0x2189);
  });

  it("MODBUS residue is 0x0000: the CRC over data followed by its CRC, low byte first, is zero", () => {
    // Catalogue of parametrised CRC algorithms (reveng), CRC-16/MODBUS: residue=0x0000
    const crc = crc16Modbus(CHECK_INPUT);
    const sealed = new Uint8Array([...CHECK_INPUT, crc & 0xff, crc >>> 8]);
    expect(crc16Modbus(sealed)).toBe(0x0000);
  });

  it("the empty input gives the init value (no bytes, no change)", () => {
    expect(crc16Modbus(new Uint8Array())).toBe(0xffff);
  });
});

describe("CRC-16 against the reference library `crc` (npm, 4.3)", () => {
  // `crc` exports crc16modbus, crc16ccitt (= CRC-16/IBM-3740 parameters: poly 0x1021, init 0xffff,
  // no reflection) and crc16kermit; each takes a Buffer, string or Uint8Array.
  it("agrees on the check string", () => {
    expect(crc16modbus(Buffer.from(CHECK_INPUT))).toBe(0x4b37);
    expect(crc16ccitt(Buffer.from(CHECK_INPUT))).toBe(0x29b1);
    expect(crc16kermit(Buffer.from(CHECK_INPUT))).toBe(0x2189);
  });

  it("agrees on 500 random inputs of 0..300 bytes, bitwise model and table alike", () => {
    const random = seedrandom("crc-cross-check");
    for (let round = 0; round < 500; round++) {
      const data = new Uint8Array(Math.floor(random() * 301));
      for (let index = 0; index < data.length; index++) data[index] = Math.floor(random() * 256);
      const reference = crc16modbus(Buffer.from(data));
      expect(crc16Modbus(data)).toBe(reference);
      expect(crc16(CRC16_MODBUS, data)).toBe(reference);
      expect(crc16(CRC16_IBM_3740, data)).toBe(crc16ccitt(Buffer.from(data)));
      expect(crc16(CRC16_KERMIT, data)).toBe(crc16kermit(Buffer.from(data)));
    }
  });

  it("continues a running CRC over pieces the same as over the whole, as a board computes it byte by byte", () => {
    const whole = ascii("Panelproof link frame");
    let running = 0xffff;
    for (let index = 0; index < whole.length; index++) running = crc16Modbus(whole, index, index + 1, running);
    expect(running).toBe(crc16modbus(Buffer.from(whole)));
  });
});
