#include "pp_cobs.h"

namespace pp {

size_t cobsEncode(const uint8_t* in, size_t length, uint8_t* out) {
  size_t codeAt = 0;
  size_t write = 1;
  uint8_t code = 1;
  for (size_t read = 0; read < length; read++) {
    // Read before writing: with out == in - 1 the write position never passes the read one.
    const uint8_t byte = in[read];
    if (byte == 0) {
      out[codeAt] = code;
      codeAt = write++;
      code = 1;
      continue;
    }
    out[write++] = byte;
    code++;
    // A full block of 254 non-zero bytes closes without an implied zero; a new block opens
    // only if more input follows, so 254 non-zero bytes stuff to 255, not 256.
    if (code == 0xff && read + 1 < length) {
      out[codeAt] = code;
      codeAt = write++;
      code = 1;
    }
  }
  out[codeAt] = code;
  return write;
}

int cobsDecode(const uint8_t* in, size_t length, uint8_t* out) {
  size_t read = 0;
  size_t write = 0;
  while (read < length) {
    const uint8_t code = in[read];
    if (code == 0) return -1;
    const size_t blockEnd = read + code;
    if (blockEnd > length) return -1;
    for (size_t i = read + 1; i < blockEnd; i++) {
      if (in[i] == 0) return -1;
      out[write++] = in[i];
    }
    read = blockEnd;
    // Every block but a full one (code 0xff) and the last stands for a following zero.
    if (code != 0xff && read < length) out[write++] = 0;
  }
  return (int)write;
}

}  // namespace pp
