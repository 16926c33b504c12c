#include "pp_receiver.h"

#include "pp_crc16.h"

namespace pp {

FrameReceiver::FrameReceiver(uint8_t maxFrameBytes) : maxFrameBytes_(maxFrameBytes) {
  if (maxFrameBytes_ > kMaxFrameBytes) maxFrameBytes_ = kMaxFrameBytes;
  if (maxFrameBytes_ < kMinFrameBytes) maxFrameBytes_ = kMinFrameBytes;
  reset();
  fault_ = FaultNone;
  result_ = 0;
  wireBytes_ = 0;
}

void FrameReceiver::reset() {
  length_ = 0;
  blockLeft_ = 0;
  zeroOwed_ = false;
  discarding_ = false;
  stuffed_ = 0;
  crc_ = kCrcInit;
}

inline void FrameReceiver::take(uint8_t byte) {
  // Cannot overflow: a body is always shorter than its stuffed form, which is capped below.
  if (length_ < maxFrameBytes_) body_[length_++] = byte;
  crc_ = crc16Update(crc_, byte);
}

bool FrameReceiver::push(uint8_t byte) {
  if (byte == kDelimiter) {
    if (discarding_) {
      // The oversized run was reported when it overflowed; its end is not a second event.
      reset();
      return false;
    }
    if (stuffed_ == 0) return false;  // an empty frame: the sender flushing line noise
    wireBytes_ = stuffed_ + 1;
    if (blockLeft_ != 0 || length_ < kMinFrameBytes) {
      fault_ = ErrTruncated;
    } else if (crc_ != 0) {
      // CRC-16/MODBUS over the body and its own CRC leaves zero (the catalogue's residue).
      fault_ = ErrBadCrc;
    } else {
      fault_ = FaultNone;
    }
    result_ = length_;
    reset();
    return true;
  }
  if (discarding_) return false;
  if (stuffed_ == (uint16_t)maxFrameBytes_ + 1) {
    // One byte more than the largest stuffed frame: count it once, drop the rest of the run.
    fault_ = ErrOversized;
    wireBytes_ = stuffed_ + 1;
    result_ = 0;
    reset();
    discarding_ = true;
    return true;
  }
  stuffed_++;
  if (blockLeft_ == 0) {
    // A code byte: the previous block (if any, and not a full one) ended with a 0x00.
    if (zeroOwed_) take(0);
    blockLeft_ = byte - 1;
    zeroOwed_ = byte != 0xff;
  } else {
    take(byte);
    blockLeft_--;
  }
  return false;
}

}  // namespace pp
