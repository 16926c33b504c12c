// Fixed numbers of the Panelproof link protocol, version 1 (docs/link-protocol.md).
// They repeat shared/link/protocol.ts on purpose: the shared test vectors hold both sides to
// the same bytes, so a drift shows up as a failing host test rather than a confused board.
#pragma once

#include <stddef.h>
#include <stdint.h>

namespace pp {

const uint8_t kProtocolVersion = 1;

const uint8_t kAddressDirect = 0;
const uint8_t kAddressFirstDevice = 1;
const uint8_t kAddressLastDevice = 247;
const uint8_t kAddressBroadcast = 255;

const uint8_t kHeaderBytes = 4;
const uint8_t kCrcBytes = 2;
// 254 because COBS adds exactly one byte to anything up to 254 bytes: one 255-byte buffer.
const uint8_t kMaxFrameBytes = 254;
const uint8_t kMinFrameBytes = kHeaderBytes + kCrcBytes;
const uint8_t kMaxPayloadBytes = kMaxFrameBytes - kMinFrameBytes;
const uint8_t kMaxTextBytes = 32;
const uint8_t kDelimiter = 0x00;
// Stuffed frame plus its delimiter: the most a frame can occupy on the wire.
const uint16_t kMaxWireBytes = kMaxFrameBytes + 2;

// Set in the type byte of every frame a device sends.
const uint8_t kFromDevice = 0x80;

enum Type : uint8_t {
  TypeIdentify = 0x01,
  TypePoll = 0x02,
  TypeReset = 0x03,
  TypeValueUpdate = 0x04,
  TypeBenchError = 0x0f,
  TypeHello = 0x81,
  TypeSeenReport = 0x82,
  TypeInputEvent = 0x83,
  TypeHeartbeat = 0x84,
  TypeDeviceError = 0x8f,
};

enum ValueTag : uint8_t {
  ValueBoolean = 0x01,
  ValueInt = 0x02,
  ValueFloat = 0x03,
  ValueEnum = 0x04,
  ValueText = 0x05,
};

// Bit masks for Channel::accepts: which value kinds a channel takes (bit = 1 << tag).
const uint8_t kAcceptBoolean = 1 << ValueBoolean;
const uint8_t kAcceptInt = 1 << ValueInt;
const uint8_t kAcceptFloat = 1 << ValueFloat;
const uint8_t kAcceptEnum = 1 << ValueEnum;
const uint8_t kAcceptText = 1 << ValueText;
const uint8_t kAcceptNumber = kAcceptInt | kAcceptFloat;

enum SeenTag : uint8_t {
  SeenUnknown = 0x00,
  SeenLampLevel = 0x01,
  SeenLampState = 0x02,
  SeenPointerAngle = 0x03,
  SeenPointerSteps = 0x04,
  SeenReadout = 0x05,
  SeenBreaker = 0x06,
  SeenSwitch = 0x07,
};

enum InputTag : uint8_t {
  InputPosition = 0x01,
  InputDetents = 0x02,
  InputButton = 0x03,
  InputAnalog = 0x04,
};

enum LampState : uint8_t { LampOff = 0, LampOn = 1, LampFlashing = 2 };
enum BreakerPosition : uint8_t { BreakerIn = 0, BreakerPulled = 1, BreakerTripped = 2 };

// Error codes as they go on the wire. The first seven are also the receiver's frame faults.
enum ErrorCode : uint8_t {
  ErrNone = 0,
  ErrBadCrc = 1,
  ErrTruncated = 2,
  ErrOversized = 3,
  ErrUnknownType = 4,
  ErrBadVersion = 5,
  ErrBadAddress = 6,
  ErrBadPayload = 7,
  ErrUnknownChannel = 8,
  ErrUnknownElement = 9,
  ErrUnsupportedValue = 10,
  ErrQueueFull = 11,
};
const uint8_t kLastErrorCode = ErrQueueFull;

// A received frame's fault: FaultNone or one of the first seven error codes.
typedef uint8_t Fault;
const Fault FaultNone = ErrNone;

const uint8_t kKeyframeBegin = 0x01;
const uint8_t kKeyframeEnd = 0x02;
const uint8_t kSeenHasAppliedSequence = 0x01;

const uint16_t kCapValueUpdates = 0x0001;
const uint16_t kCapSeenReports = 0x0002;
const uint16_t kCapInputEvents = 0x0004;
const uint16_t kCapWaitsForPoll = 0x0008;
const uint16_t kCapTextValues = 0x0010;
const uint16_t kCapFloatValues = 0x0020;
const uint16_t kCapAll = 0x003f;

const uint16_t kFreeMemoryUnknown = 0xffff;

}  // namespace pp
