/**
 * CRC-16 in the parametrised model of the "Catalogue of parametrised CRC algorithms" (reveng):
 * width 16, poly, init, refin, refout, xorout. The link uses CRC-16/MODBUS; the generic form is
 * here so tests can show that the documented parameters, not a copied table, give the catalogue's
 * check values.
 */
export interface Crc16Model {
  name: string;
  poly: number;
  init: number;
  refin: boolean;
  refout: boolean;
  xorout: number;
  /** CRC of the nine ASCII bytes "123456789", as the catalogue lists it. */
  check: number;
}

/** The link's CRC. Catalogue entry: width=16 poly=0x8005 init=0xffff refin=true refout=true xorout=0x0000 check=0x4b37 residue=0x0000. */
export const CRC16_MODBUS: Crc16Model = {
  name: "CRC-16/MODBUS",
  poly: 0x8005,
  init: 0xffff,
  refin: true,
  refout: true,
  xorout: 0x0000,
  check: 0x4b37,
};

/** Catalogue entry: width=16 poly=0x1021 init=0xffff refin=false refout=false xorout=0x0000 check=0x29b1. */
export const CRC16_IBM_3740: Crc16Model = {
  name: "CRC-16/IBM-3740",
  poly: 0x1021,
  init: 0xffff,
  refin: false,
  refout: false,
  xorout: 0x0000,
  check: 0x29b1,
};

/** Catalogue entry: width=16 poly=0x1021 init=0x0000 refin=true refout=true xorout=0x0000 check=0x2189. */
export const CRC16_KERMIT: Crc16Model = {
  name: "CRC-16/KERMIT",
  poly: 0x1021,
  init: 0x0000,
  refin: true,
  refout: true,
  xorout: 0x0000,
  check: 0x2189,
};

function reflect(value: number, width: number): number {
  let result = 0;
  for (let bit = 0; bit < width; bit++) {
    if (value & (1 << bit)) result |= 1 << (width - 1 - bit);
  }
  return result;
}

/** Bit by bit, straight from the model's definition: slow, but obviously the catalogue's algorithm. */
export function crc16(model: Crc16Model, data: Uint8Array): number {
  let crc = model.init & 0xffff;
  for (let index = 0; index < data.length; index++) {
    const byte = model.refin ? reflect(data[index], 8) : data[index];
    crc ^= byte << 8;
    for (let bit = 0; bit < 8; bit++) {
      crc = crc & 0x8000 ? ((crc << 1) ^ model.poly) & 0xffff : (crc << 1) & 0xffff;
    }
  }
  if (model.refout) crc = reflect(crc, 16);
  return (crc ^ model.xorout) & 0xffff;
}

// Reflected MODBUS table (poly 0x8005 reflected is 0xa001), built once: the bench checks every
// frame of every link, so the bitwise form above is too slow for it.
const MODBUS_TABLE = (() => {
  const table = new Uint16Array(256);
  for (let byte = 0; byte < 256; byte++) {
    let crc = byte;
    for (let bit = 0; bit < 8; bit++) crc = crc & 1 ? (crc >>> 1) ^ 0xa001 : crc >>> 1;
    table[byte] = crc;
  }
  return table;
})();

/**
 * CRC-16/MODBUS of `data[start, end)`. `previous` continues a running CRC, which is how a
 * small board computes it while bytes arrive (avr-libc's `_crc16_update` is this update step,
 * started at 0xffff).
 */
export function crc16Modbus(data: Uint8Array, start = 0, end = data.length, previous = 0xffff): number {
  let crc = previous & 0xffff;
  for (let index = start; index < end; index++) {
    crc = MODBUS_TABLE[(crc ^ data[index]) & 0xff] ^ (crc >>> 8);
  }
  return crc;
}
