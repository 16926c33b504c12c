// Finds frames in a byte stream as it arrives, one byte at a time: COBS is undone and the CRC
// run as each byte comes in, so a finished frame is already unstuffed and CRC-checked and the
// work per frame is spread over the bytes (a board never stalls on a long frame). One buffer of
// maxFrameBytes; whatever garbage arrives, the next 0x00 starts afresh.
#pragma once

#include "pp_protocol.h"

namespace pp {

class FrameReceiver {
 public:
  explicit FrameReceiver(uint8_t maxFrameBytes = kMaxFrameBytes);

  // Feeds one byte. Returns true when a frame ended or failed: then fault(), body(), length()
  // and wireBytes() describe it until the next push. Empty frames (0x00 runs) are not events.
  bool push(uint8_t byte);

  Fault fault() const { return fault_; }
  // The unstuffed body (header, payload, CRC) of the frame that just ended well.
  const uint8_t* body() const { return body_; }
  uint8_t length() const { return result_; }
  // Bytes the frame (or the failed run) took on the wire, its delimiter included.
  uint16_t wireBytes() const { return wireBytes_; }
  // Inside a frame: some bytes since the last delimiter.
  bool busy() const { return stuffed_ != 0 || discarding_; }
  void reset();

 private:
  uint8_t body_[kMaxFrameBytes];
  uint8_t maxFrameBytes_;
  uint8_t length_;     // body bytes so far
  uint8_t blockLeft_;  // bytes still due in the current COBS block
  bool zeroOwed_;      // the block that just closed stands for a 0x00, if anything follows
  bool discarding_;    // past an oversized run: skip to the next delimiter
  uint16_t stuffed_;   // wire bytes since the last delimiter
  uint16_t crc_;
  Fault fault_;
  uint8_t result_;
  uint16_t wireBytes_;
  void take(uint8_t byte);
};

}  // namespace pp
