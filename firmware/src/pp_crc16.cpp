#include "pp_crc16.h"

namespace pp {

uint16_t crc16Modbus(const uint8_t* data, size_t length, uint16_t crc) {
  for (size_t i = 0; i < length; i++) crc = crc16Update(crc, data[i]);
  return crc;
}

}  // namespace pp
