// Frames and messages of the link protocol: building them into a caller's buffer and reading
// them in place. No heap and no copies of payloads: decoded entries point into the frame, so
// a board needs one receive buffer and one transmit buffer, nothing per message.
#pragma once

#include "pp_protocol.h"

namespace pp {

// ---- what the messages carry -----------------------------------------------------------------

// One channel value of a value update. Booleans and enums are held in `i` (0/1, index).
struct ChannelValue {
  uint16_t channel;
  uint8_t tag;  // ValueTag
  int32_t i;
  float f;
  const char* text;  // ValueText: not NUL-terminated, `textLength` bytes
  uint8_t textLength;
};

// One element of a seen report. `value` holds level, state, centidegrees, steps, breaker
// position or switch position as the tag says; readouts use `text`.
struct SeenEntry {
  uint16_t element;
  uint8_t tag;  // SeenTag
  int32_t value;
  const char* text;
  uint8_t textLength;
};

// One input of an input event: position index, signed detents, 0/1 button, 0..65535 analog.
struct InputEntry {
  uint16_t element;
  uint8_t tag;  // InputTag
  int32_t value;
};

struct Hello {
  uint8_t protocolVersion;
  uint8_t deviceId[8];
  uint8_t firmware[3];  // major, minor, patch
  uint16_t capabilities;
  uint8_t maxFrameBytes;
  uint16_t elementCount;
  uint16_t channelCount;
  const char* panel;
  uint8_t panelLength;
};

struct Heartbeat {
  uint32_t uptimeMs;
  uint16_t framesReceived;
  uint16_t badCrc;
  uint16_t truncated;
  uint16_t oversized;
  uint16_t rejected;
  uint16_t dropped;
  uint16_t freeMemory;  // kFreeMemoryUnknown when the device cannot tell
};

struct ErrorMessage {
  uint8_t code;  // ErrorCode
  uint16_t subject;
  const char* text;
  uint8_t textLength;
};

// A checked frame, pointing into the buffer it was decoded from.
struct Frame {
  uint8_t address;
  uint8_t type;
  uint8_t sequence;
  const uint8_t* payload;
  uint8_t payloadLength;
};

// ---- reading -----------------------------------------------------------------------------------

// Bytes of a payload, read little-endian with bounds checks. A read past the end sets !ok()
// and returns 0, so callers check once at the end instead of after every field.
class Reader {
 public:
  Reader(const uint8_t* data, uint8_t length) : data_(data), length_(length), at_(0), ok_(true) {}
  // Inline: these run for every payload byte, and a call costs more than the read on an AVR.
  uint8_t u8() {
    if (!ok_ || at_ >= length_) return fail(), (uint8_t)0;
    return data_[at_++];
  }
  int8_t i8() { return (int8_t)u8(); }
  uint16_t u16() {
    if (!ok_ || (uint16_t)at_ + 2 > length_) return fail(), (uint16_t)0;
    const uint16_t value = (uint16_t)data_[at_] | ((uint16_t)data_[at_ + 1] << 8);
    at_ += 2;
    return value;
  }
  uint32_t u32() {
    if (!ok_ || (uint16_t)at_ + 4 > length_) return fail(), (uint32_t)0;
    const uint32_t value = (uint32_t)u16raw(at_) | ((uint32_t)u16raw(at_ + 2) << 16);
    at_ += 4;
    return value;
  }
  int32_t i32() { return (int32_t)u32(); }
  // A float32 that must be finite (NaN and infinities are bad payload).
  float f32();
  // A length byte then that many bytes of valid UTF-8, at most kMaxTextBytes.
  const char* text(uint8_t& length);
  void fail() { ok_ = false; }
  bool ok() const { return ok_; }
  bool finished() const { return ok_ && at_ == length_; }

 private:
  const uint8_t* data_;
  uint8_t length_;
  uint8_t at_;
  bool ok_;
  uint16_t u16raw(uint8_t at) const { return (uint16_t)data_[at] | ((uint16_t)data_[at + 1] << 8); }
};

// Strict UTF-8 (no overlong forms, no surrogates, nothing above U+10FFFF), as the bench's
// fatal TextDecoder reads it, so both sides refuse the same bytes.
bool validUtf8(const uint8_t* bytes, uint8_t length);

// Whether a float32 bit pattern is finite: checked on the bits, so no float code is pulled in.
inline bool finiteFloatBits(uint32_t bits) { return (bits & 0x7f800000UL) != 0x7f800000UL; }

// True for the type bytes version 1 knows.
bool knownType(uint8_t type);

// Header checks in the protocol's order after length and CRC: version, reserved address,
// type, broadcast from a device. Fills `frame` (payload unchecked). `subject` gets the byte
// an error answer names.
Fault checkHeader(const uint8_t* body, uint8_t length, Frame& frame, uint16_t& subject);

// Checks that the payload parses exactly as its type says (ErrBadPayload if not).
Fault checkPayload(const Frame& frame);

// Everything: length against `maxFrameBytes`, CRC, header, payload. For a frame already
// unstuffed (header, payload, CRC). The device does the same in steps as bytes arrive.
Fault decodeFrameBody(const uint8_t* body, uint8_t length, Frame& frame, uint8_t maxFrameBytes = kMaxFrameBytes);

// Unstuffs a wire frame (with or without its delimiter) in place and decodes it.
Fault decodeWireFrame(uint8_t* wire, uint16_t length, Frame& frame, uint8_t maxFrameBytes = kMaxFrameBytes);

// Walks a checked value update's entries.
class ValueUpdateReader {
 public:
  explicit ValueUpdateReader(const Frame& frame);
  uint8_t flags;
  uint8_t count;
  bool next(ChannelValue& out);

 private:
  Reader reader_;
  uint8_t left_;
};

class SeenReportReader {
 public:
  explicit SeenReportReader(const Frame& frame);
  bool hasAppliedSequence;
  uint8_t appliedSequence;
  uint8_t count;
  bool next(SeenEntry& out);

 private:
  Reader reader_;
  uint8_t left_;
};

class InputEventReader {
 public:
  explicit InputEventReader(const Frame& frame);
  uint8_t count;
  bool next(InputEntry& out);

 private:
  Reader reader_;
  uint8_t left_;
};

bool readHello(const Frame& frame, Hello& out);
bool readHeartbeat(const Frame& frame, Heartbeat& out);
bool readError(const Frame& frame, ErrorMessage& out);

// ---- writing -----------------------------------------------------------------------------------

// Wire bytes an entry takes in its message, for packing reports to fit a frame.
uint8_t seenEntryBytes(const SeenEntry& entry);
uint8_t inputEntryBytes(const InputEntry& entry);
uint8_t channelValueBytes(const ChannelValue& value);

// Builds one frame in a buffer of kMaxWireBytes (256) bytes. The body grows at buffer + 1 so
// that seal() can stuff it in place one byte to the left and add the delimiter: one 256-byte
// buffer is all a board spends on sending.
//
// Adding what does not fit sets !ok() (or, for the add* entry helpers, returns false and
// leaves the frame as it was, so the caller sends this one and the rest in the next).
class FrameBuilder {
 public:
  FrameBuilder(uint8_t* buffer, uint8_t maxFrameBytes = kMaxFrameBytes);

  void begin(uint8_t address, uint8_t type, uint8_t sequence);
  void u8(uint8_t value) {
    if (reserve(1)) buffer_[1 + length_++] = value;
  }
  void i8(int8_t value) { u8((uint8_t)value); }
  void u16(uint16_t value) {
    if (!reserve(2)) return;
    buffer_[1 + length_++] = (uint8_t)value;
    buffer_[1 + length_++] = (uint8_t)(value >> 8);
  }
  void u32(uint32_t value) {
    if (!reserve(4)) return;
    u16((uint16_t)value);
    u16((uint16_t)(value >> 16));
  }
  void i32(int32_t value) { u32((uint32_t)value); }
  void f32(float value);
  void text(const char* text, uint8_t length);
  // Payload bytes still free (two stay reserved for the CRC).
  uint8_t room() const;
  uint8_t bodyLength() const { return length_; }
  const uint8_t* body() const { return buffer_ + 1; }
  bool ok() const { return ok_; }

  // Typed messages. Entries are added one by one; the count byte is kept up to date.
  void valueUpdate(uint8_t address, uint8_t sequence, uint8_t flags);
  bool addValue(const ChannelValue& value);
  void seenReport(uint8_t address, uint8_t sequence, bool hasAppliedSequence, uint8_t appliedSequence);
  bool addSeen(const SeenEntry& entry);
  void inputEvent(uint8_t address, uint8_t sequence);
  bool addInput(const InputEntry& entry);
  uint8_t entryCount() const { return countAt_ ? buffer_[1 + countAt_] : 0; }
  void hello(uint8_t address, uint8_t sequence, const Hello& hello);
  void heartbeat(uint8_t address, uint8_t sequence, const Heartbeat& heartbeat);
  void error(uint8_t address, uint8_t sequence, bool fromDevice, uint8_t code, uint16_t subject, const char* text,
             uint8_t textLength);

  // Appends the CRC (low byte first), stuffs and adds the 0x00. Returns the wire length
  // (the bytes are at wire()), or 0 if anything overflowed.
  uint16_t seal();
  const uint8_t* wire() const { return buffer_; }

 private:
  uint8_t* buffer_;
  uint8_t maxFrameBytes_;
  uint8_t length_;
  uint8_t countAt_;  // body offset of the entry count, 0 when the message has none
  bool ok_;
  bool reserve(uint8_t count) {
    // Two bytes stay free for the CRC.
    if (ok_ && (uint16_t)length_ + count + kCrcBytes <= maxFrameBytes_) return true;
    ok_ = false;
    return false;
  }
};

}  // namespace pp
