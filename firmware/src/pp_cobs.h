// Consistent Overhead Byte Stuffing (Cheshire and Baker, IEEE/ACM Transactions on Networking
// 7(2), 1999). The stuffed form has no 0x00, so 0x00 can end every frame. Neither function
// adds or expects the delimiter; the frame code does that.
#pragma once

#include "pp_protocol.h"

namespace pp {

// Stuffs `length` bytes into `out` and returns the stuffed length (length + 1 for up to 254
// bytes). `out` may be `in - 1` (stuffing in place into a buffer one byte to the left), which
// is how the device builds a frame without a second 255-byte buffer; that holds for inputs of
// up to 254 bytes, all a link frame can be.
size_t cobsEncode(const uint8_t* in, size_t length, uint8_t* out);

// Unstuffs into `out` (which may equal `in`). Returns the unstuffed length, or -1 when a code
// byte points past the end (cut short, or noise hit a code byte) or a 0x00 is inside.
int cobsDecode(const uint8_t* in, size_t length, uint8_t* out);

}  // namespace pp
