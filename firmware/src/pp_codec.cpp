#include "pp_codec.h"

#include <string.h>

#include "pp_cobs.h"
#include "pp_crc16.h"

namespace pp {

// ---- reading -----------------------------------------------------------------------------------

float Reader::f32() {
  uint32_t bits = u32();
  if (!finiteFloatBits(bits)) {
    ok_ = false;
    return 0;
  }
  float value;
  // Both the AVR and the host are little-endian IEEE 754, so the bits copy straight across.
  memcpy(&value, &bits, sizeof value);
  return value;
}

const char* Reader::text(uint8_t& length) {
  length = u8();
  if (!ok_ || length > kMaxTextBytes || (uint16_t)at_ + length > length_ || !validUtf8(data_ + at_, length)) {
    ok_ = false;
    length = 0;
    return 0;
  }
  const char* text = (const char*)(data_ + at_);
  at_ += length;
  return text;
}

bool validUtf8(const uint8_t* s, uint8_t length) {
  uint8_t i = 0;
  while (i < length) {
    const uint8_t c = s[i];
    if (c < 0x80) {
      i++;
      continue;
    }
    uint8_t extra;
    uint8_t low = 0x80, high = 0xbf;  // allowed range of the second byte
    if (c >= 0xc2 && c <= 0xdf) {
      extra = 1;
    } else if (c >= 0xe0 && c <= 0xef) {
      extra = 2;
      if (c == 0xe0) low = 0xa0;   // overlong
      if (c == 0xed) high = 0x9f;  // surrogates
    } else if (c >= 0xf0 && c <= 0xf4) {
      extra = 3;
      if (c == 0xf0) low = 0x90;   // overlong
      if (c == 0xf4) high = 0x8f;  // above U+10FFFF
    } else {
      return false;
    }
    if ((uint16_t)i + extra >= length) return false;  // sequence cut off by the end
    if (s[i + 1] < low || s[i + 1] > high) return false;
    for (uint8_t k = 2; k <= extra; k++) {
      if ((s[i + k] & 0xc0) != 0x80) return false;
    }
    i += extra + 1;
  }
  return true;
}

bool knownType(uint8_t type) {
  switch (type) {
    case TypeIdentify:
    case TypePoll:
    case TypeReset:
    case TypeValueUpdate:
    case TypeBenchError:
    case TypeHello:
    case TypeSeenReport:
    case TypeInputEvent:
    case TypeHeartbeat:
    case TypeDeviceError:
      return true;
    default:
      return false;
  }
}

Fault checkHeader(const uint8_t* body, uint8_t length, Frame& frame, uint16_t& subject) {
  subject = 0;
  const uint8_t version = body[0];
  frame.address = body[1];
  frame.type = body[2];
  frame.sequence = body[3];
  frame.payload = body + kHeaderBytes;
  frame.payloadLength = length - kMinFrameBytes;
  if (version != kProtocolVersion) {
    subject = version;
    return ErrBadVersion;
  }
  if (frame.address > kAddressLastDevice && frame.address != kAddressBroadcast) {
    subject = frame.address;
    return ErrBadAddress;
  }
  if (!knownType(frame.type)) {
    subject = frame.type;
    return ErrUnknownType;
  }
  if (frame.address == kAddressBroadcast && (frame.type & kFromDevice)) {
    subject = frame.address;
    return ErrBadAddress;
  }
  return FaultNone;
}

static bool skipText(Reader& r) {
  uint8_t length;
  r.text(length);
  return r.ok();
}

static bool checkValueEntry(Reader& r) {
  r.u16();
  switch (r.u8()) {
    case ValueBoolean:
      if (r.u8() > 1) r.fail();
      break;
    case ValueInt:
      r.u32();
      break;
    case ValueFloat:
      if (!finiteFloatBits(r.u32())) r.fail();
      break;
    case ValueEnum:
      r.u8();
      break;
    case ValueText:
      skipText(r);
      break;
    default:
      r.fail();
  }
  return r.ok();
}

static bool checkSeenEntry(Reader& r) {
  r.u16();
  switch (r.u8()) {
    case SeenUnknown:
      break;
    case SeenLampLevel:
    case SeenSwitch:
      r.u8();
      break;
    case SeenLampState:
    case SeenBreaker:
      if (r.u8() > 2) r.fail();
      break;
    case SeenPointerAngle:
    case SeenPointerSteps:
      r.u32();
      break;
    case SeenReadout:
      skipText(r);
      break;
    default:
      r.fail();
  }
  return r.ok();
}

static bool checkInputEntry(Reader& r) {
  r.u16();
  switch (r.u8()) {
    case InputPosition:
    case InputDetents:
      r.u8();
      break;
    case InputButton:
      if (r.u8() > 1) r.fail();
      break;
    case InputAnalog:
      r.u16();
      break;
    default:
      r.fail();
  }
  return r.ok();
}

Fault checkPayload(const Frame& frame) {
  Reader r(frame.payload, frame.payloadLength);
  switch (frame.type) {
    case TypeIdentify:
    case TypePoll:
    case TypeReset:
      break;
    case TypeValueUpdate: {
      // Reserved flag bits must be zero: a later meaning comes with a new version, never silently.
      if (r.u8() & ~(kKeyframeBegin | kKeyframeEnd)) r.fail();
      uint8_t count = r.u8();
      while (r.ok() && count--) checkValueEntry(r);
      break;
    }
    case TypeSeenReport: {
      const uint8_t flags = r.u8();
      if (flags & ~kSeenHasAppliedSequence) r.fail();
      const uint8_t applied = r.u8();
      if (!(flags & kSeenHasAppliedSequence) && applied != 0) r.fail();
      uint8_t count = r.u8();
      while (r.ok() && count--) checkSeenEntry(r);
      break;
    }
    case TypeInputEvent: {
      uint8_t count = r.u8();
      while (r.ok() && count--) checkInputEntry(r);
      break;
    }
    case TypeHello: {
      r.u8();
      for (uint8_t i = 0; i < 8; i++) r.u8();
      r.u8();
      r.u8();
      r.u8();
      if (r.u16() & ~kCapAll) r.fail();
      const uint8_t maxFrame = r.u8();
      if (maxFrame < kMinFrameBytes || maxFrame > kMaxFrameBytes) r.fail();
      r.u16();
      r.u16();
      skipText(r);
      break;
    }
    case TypeHeartbeat:
      r.u32();
      for (uint8_t i = 0; i < 7; i++) r.u16();
      break;
    case TypeBenchError:
    case TypeDeviceError: {
      const uint8_t code = r.u8();
      if (code < 1 || code > kLastErrorCode) r.fail();
      r.u16();
      skipText(r);
      break;
    }
    default:
      r.fail();
  }
  return r.finished() ? FaultNone : (Fault)ErrBadPayload;
}

Fault decodeFrameBody(const uint8_t* body, uint8_t length, Frame& frame, uint8_t maxFrameBytes) {
  if (length > maxFrameBytes) return ErrOversized;
  if (length < kMinFrameBytes) return ErrTruncated;
  // The residue of CRC-16/MODBUS is zero: run it over the CRC bytes too and expect 0.
  if (crc16Modbus(body, length) != 0) return ErrBadCrc;
  uint16_t subject;
  Fault fault = checkHeader(body, length, frame, subject);
  if (fault != FaultNone) return fault;
  return checkPayload(frame);
}

Fault decodeWireFrame(uint8_t* wire, uint16_t length, Frame& frame, uint8_t maxFrameBytes) {
  if (length > 0 && wire[length - 1] == kDelimiter) length--;
  if (length > (uint16_t)maxFrameBytes + 1) return ErrOversized;
  const int unstuffed = cobsDecode(wire, length, wire);
  if (unstuffed < 0) return ErrTruncated;
  return decodeFrameBody(wire, (uint8_t)unstuffed, frame, maxFrameBytes);
}

ValueUpdateReader::ValueUpdateReader(const Frame& frame) : reader_(frame.payload, frame.payloadLength) {
  flags = reader_.u8();
  count = reader_.u8();
  left_ = count;
}

bool ValueUpdateReader::next(ChannelValue& out) {
  if (!left_ || !reader_.ok()) return false;
  left_--;
  out.channel = reader_.u16();
  out.tag = reader_.u8();
  out.i = 0;
  out.f = 0;
  out.text = 0;
  out.textLength = 0;
  switch (out.tag) {
    case ValueBoolean:
    case ValueEnum:
      out.i = reader_.u8();
      break;
    case ValueInt:
      out.i = reader_.i32();
      break;
    case ValueFloat:
      out.f = reader_.f32();
      break;
    case ValueText:
      out.text = reader_.text(out.textLength);
      break;
    default:
      reader_.fail();
  }
  return reader_.ok();
}

SeenReportReader::SeenReportReader(const Frame& frame) : reader_(frame.payload, frame.payloadLength) {
  hasAppliedSequence = (reader_.u8() & kSeenHasAppliedSequence) != 0;
  appliedSequence = reader_.u8();
  count = reader_.u8();
  left_ = count;
}

bool SeenReportReader::next(SeenEntry& out) {
  if (!left_ || !reader_.ok()) return false;
  left_--;
  out.element = reader_.u16();
  out.tag = reader_.u8();
  out.value = 0;
  out.text = 0;
  out.textLength = 0;
  switch (out.tag) {
    case SeenUnknown:
      break;
    case SeenLampLevel:
    case SeenLampState:
    case SeenBreaker:
    case SeenSwitch:
      out.value = reader_.u8();
      break;
    case SeenPointerAngle:
    case SeenPointerSteps:
      out.value = reader_.i32();
      break;
    case SeenReadout:
      out.text = reader_.text(out.textLength);
      break;
    default:
      reader_.fail();
  }
  return reader_.ok();
}

InputEventReader::InputEventReader(const Frame& frame) : reader_(frame.payload, frame.payloadLength) {
  count = reader_.u8();
  left_ = count;
}

bool InputEventReader::next(InputEntry& out) {
  if (!left_ || !reader_.ok()) return false;
  left_--;
  out.element = reader_.u16();
  out.tag = reader_.u8();
  switch (out.tag) {
    case InputPosition:
    case InputButton:
      out.value = reader_.u8();
      break;
    case InputDetents:
      out.value = reader_.i8();
      break;
    case InputAnalog:
      out.value = reader_.u16();
      break;
    default:
      reader_.fail();
  }
  return reader_.ok();
}

bool readHello(const Frame& frame, Hello& out) {
  if (frame.type != TypeHello) return false;
  Reader r(frame.payload, frame.payloadLength);
  out.protocolVersion = r.u8();
  for (uint8_t i = 0; i < 8; i++) out.deviceId[i] = r.u8();
  for (uint8_t i = 0; i < 3; i++) out.firmware[i] = r.u8();
  out.capabilities = r.u16();
  out.maxFrameBytes = r.u8();
  out.elementCount = r.u16();
  out.channelCount = r.u16();
  out.panel = r.text(out.panelLength);
  return r.finished();
}

bool readHeartbeat(const Frame& frame, Heartbeat& out) {
  if (frame.type != TypeHeartbeat) return false;
  Reader r(frame.payload, frame.payloadLength);
  out.uptimeMs = r.u32();
  out.framesReceived = r.u16();
  out.badCrc = r.u16();
  out.truncated = r.u16();
  out.oversized = r.u16();
  out.rejected = r.u16();
  out.dropped = r.u16();
  out.freeMemory = r.u16();
  return r.finished();
}

bool readError(const Frame& frame, ErrorMessage& out) {
  if ((frame.type & ~kFromDevice) != TypeBenchError) return false;
  Reader r(frame.payload, frame.payloadLength);
  out.code = r.u8();
  out.subject = r.u16();
  out.text = r.text(out.textLength);
  return r.finished();
}

// ---- writing -----------------------------------------------------------------------------------

uint8_t seenEntryBytes(const SeenEntry& e) {
  switch (e.tag) {
    case SeenUnknown:
      return 3;
    case SeenPointerAngle:
    case SeenPointerSteps:
      return 7;
    case SeenReadout:
      return 4 + e.textLength;
    default:
      return 4;
  }
}

uint8_t inputEntryBytes(const InputEntry& e) { return e.tag == InputAnalog ? 5 : 4; }

uint8_t channelValueBytes(const ChannelValue& v) {
  switch (v.tag) {
    case ValueInt:
    case ValueFloat:
      return 7;
    case ValueText:
      return 4 + v.textLength;
    default:
      return 4;
  }
}

FrameBuilder::FrameBuilder(uint8_t* buffer, uint8_t maxFrameBytes)
    : buffer_(buffer), maxFrameBytes_(maxFrameBytes), length_(0), countAt_(0), ok_(false) {}

void FrameBuilder::begin(uint8_t address, uint8_t type, uint8_t sequence) {
  length_ = 0;
  countAt_ = 0;
  ok_ = true;
  u8(kProtocolVersion);
  u8(address);
  u8(type);
  u8(sequence);
}

uint8_t FrameBuilder::room() const {
  const uint8_t limit = maxFrameBytes_ - kCrcBytes;
  return length_ >= limit ? 0 : limit - length_;
}

void FrameBuilder::f32(float value) {
  uint32_t bits;
  memcpy(&bits, &value, sizeof bits);
  u32(bits);
}

void FrameBuilder::text(const char* text, uint8_t length) {
  if (length > kMaxTextBytes || !reserve(1 + length)) {
    ok_ = false;
    return;
  }
  buffer_[1 + length_++] = length;
  memcpy(buffer_ + 1 + length_, text, length);
  length_ += length;
}

void FrameBuilder::valueUpdate(uint8_t address, uint8_t sequence, uint8_t flags) {
  begin(address, TypeValueUpdate, sequence);
  u8(flags);
  countAt_ = length_;
  u8(0);
}

bool FrameBuilder::addValue(const ChannelValue& v) {
  if (!ok_ || entryCount() == 255 || channelValueBytes(v) > room()) return false;
  u16(v.channel);
  u8(v.tag);
  switch (v.tag) {
    case ValueBoolean:
    case ValueEnum:
      u8((uint8_t)v.i);
      break;
    case ValueInt:
      i32(v.i);
      break;
    case ValueFloat:
      f32(v.f);
      break;
    case ValueText:
      text(v.text, v.textLength);
      break;
  }
  buffer_[1 + countAt_]++;
  return ok_;
}

void FrameBuilder::seenReport(uint8_t address, uint8_t sequence, bool hasAppliedSequence, uint8_t appliedSequence) {
  begin(address, TypeSeenReport, sequence);
  u8(hasAppliedSequence ? kSeenHasAppliedSequence : 0);
  u8(hasAppliedSequence ? appliedSequence : 0);
  countAt_ = length_;
  u8(0);
}

bool FrameBuilder::addSeen(const SeenEntry& e) {
  if (!ok_ || entryCount() == 255 || e.textLength > kMaxTextBytes) return false;
  const uint8_t size = seenEntryBytes(e);
  if (size > room()) return false;
  // Room is known from here on: the entry is written straight into the buffer, without the
  // per-field checks of u8()/u16() (a report of 40 entries is built for every update).
  uint8_t* out = buffer_ + 1 + length_;
  out[0] = (uint8_t)e.element;
  out[1] = (uint8_t)(e.element >> 8);
  out[2] = e.tag;
  switch (e.tag) {
    case SeenUnknown:
      break;
    case SeenPointerAngle:
    case SeenPointerSteps:
      out[3] = (uint8_t)e.value;
      out[4] = (uint8_t)((uint32_t)e.value >> 8);
      out[5] = (uint8_t)((uint32_t)e.value >> 16);
      out[6] = (uint8_t)((uint32_t)e.value >> 24);
      break;
    case SeenReadout:
      out[3] = e.textLength;
      if (e.textLength) memcpy(out + 4, e.text, e.textLength);
      break;
    default:
      out[3] = (uint8_t)e.value;
  }
  length_ += size;
  buffer_[1 + countAt_]++;
  return true;
}

void FrameBuilder::inputEvent(uint8_t address, uint8_t sequence) {
  begin(address, TypeInputEvent, sequence);
  countAt_ = length_;
  u8(0);
}

bool FrameBuilder::addInput(const InputEntry& e) {
  if (!ok_ || entryCount() == 255 || inputEntryBytes(e) > room()) return false;
  u16(e.element);
  u8(e.tag);
  if (e.tag == InputAnalog) {
    u16((uint16_t)e.value);
  } else {
    u8((uint8_t)e.value);
  }
  buffer_[1 + countAt_]++;
  return ok_;
}

void FrameBuilder::hello(uint8_t address, uint8_t sequence, const Hello& h) {
  begin(address, TypeHello, sequence);
  u8(h.protocolVersion);
  for (uint8_t i = 0; i < 8; i++) u8(h.deviceId[i]);
  for (uint8_t i = 0; i < 3; i++) u8(h.firmware[i]);
  u16(h.capabilities);
  u8(h.maxFrameBytes);
  u16(h.elementCount);
  u16(h.channelCount);
  text(h.panel, h.panelLength);
}

void FrameBuilder::heartbeat(uint8_t address, uint8_t sequence, const Heartbeat& h) {
  begin(address, TypeHeartbeat, sequence);
  u32(h.uptimeMs);
  u16(h.framesReceived);
  u16(h.badCrc);
  u16(h.truncated);
  u16(h.oversized);
  u16(h.rejected);
  u16(h.dropped);
  u16(h.freeMemory);
}

void FrameBuilder::error(uint8_t address, uint8_t sequence, bool fromDevice, uint8_t code, uint16_t subject,
                         const char* text, uint8_t textLength) {
  begin(address, fromDevice ? TypeDeviceError : TypeBenchError, sequence);
  u8(code);
  u16(subject);
  this->text(text, textLength);
}

uint16_t FrameBuilder::seal() {
  if (!ok_) return 0;
  const uint16_t crc = crc16Modbus(buffer_ + 1, length_);
  // Room for the CRC was kept free by room(), so these never overflow maxFrameBytes.
  buffer_[1 + length_++] = (uint8_t)crc;
  buffer_[1 + length_++] = (uint8_t)(crc >> 8);
  const size_t stuffed = cobsEncode(buffer_ + 1, length_, buffer_);
  buffer_[stuffed] = kDelimiter;
  ok_ = false;  // the body is gone (stuffed over); begin() again for the next frame
  return (uint16_t)(stuffed + 1);
}

}  // namespace pp
