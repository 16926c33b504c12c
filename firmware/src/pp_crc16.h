// CRC-16/MODBUS (Catalogue of parametrised CRC algorithms, reveng: width 16, poly 0x8005,
// init 0xffff, refin, refout, xorout 0, check 0x4b37, residue 0). Table-free on purpose: a
// 512-byte table would cost an ATmega2560 flash for a few cycles per byte it does not need.
#pragma once

#include "pp_protocol.h"

#if defined(__AVR__)
#include <util/crc16.h>
#endif

namespace pp {

const uint16_t kCrcInit = 0xffff;

// One byte of the running CRC. avr-libc's _crc16_update is exactly this step (reflected
// polynomial 0xa001), hand-written in assembly, so the board uses it and the host the same
// algorithm in C: the host tests then prove the firmware's arithmetic too.
inline uint16_t crc16Update(uint16_t crc, uint8_t byte) {
#if defined(__AVR__)
  return _crc16_update(crc, byte);
#else
  crc ^= byte;
  for (uint8_t bit = 0; bit < 8; bit++) crc = (crc & 1) ? (uint16_t)((crc >> 1) ^ 0xa001) : (uint16_t)(crc >> 1);
  return crc;
#endif
}

uint16_t crc16Modbus(const uint8_t* data, size_t length, uint16_t crc = kCrcInit);

}  // namespace pp
