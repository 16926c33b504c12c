/**
 * Fixed numbers of the Panelproof link protocol, version 1. docs/link-protocol.md explains each;
 * the firmware library repeats them, and the shared test vectors hold both sides to them.
 */

export const LINK_PROTOCOL_VERSION = 1;

/** A link with exactly one device on it (USB serial, WebSocket, virtual panel): no bus address needed. */
export const LINK_ADDRESS_DIRECT = 0;
export const LINK_ADDRESS_FIRST_DEVICE = 1;
export const LINK_ADDRESS_LAST_DEVICE = 247;
/** Bench to every device on the bus at once. Devices never answer a broadcast, so answers cannot collide. */
export const LINK_ADDRESS_BROADCAST = 255;

/** version, address, type, sequence. */
export const LINK_HEADER_BYTES = 4;
export const LINK_CRC_BYTES = 2;
/**
 * Largest frame before stuffing (header + payload + CRC). 254 because COBS adds exactly one byte
 * to anything up to 254 bytes: a board needs a 255-byte receive buffer, never more.
 */
export const LINK_MAX_FRAME_BYTES = 254;
export const LINK_MIN_FRAME_BYTES = LINK_HEADER_BYTES + LINK_CRC_BYTES;
export const LINK_MAX_PAYLOAD_BYTES = LINK_MAX_FRAME_BYTES - LINK_MIN_FRAME_BYTES;
/** Longest text (readout, text channel, panel identifier, error text), in UTF-8 bytes. */
export const LINK_MAX_TEXT_BYTES = 32;
/** The frame delimiter. COBS guarantees it never occurs inside a frame. */
export const LINK_DELIMITER = 0x00;

/** Set in the type byte of every frame a device sends, clear in every frame the bench sends. */
export const LINK_FROM_DEVICE = 0x80;

export const LINK_TYPE_BYTES = {
  identify: 0x01,
  poll: 0x02,
  reset: 0x03,
  value_update: 0x04,
  hello: 0x81,
  seen_report: 0x82,
  input_event: 0x83,
  heartbeat: 0x84,
  /** Error uses kind 0x0f in both directions: 0x0f from the bench, 0x8f from a device. */
  error: 0x0f,
} as const;
export const LINK_ERROR_KIND = 0x0f;

export const CHANNEL_VALUE_TAGS = { boolean: 0x01, int: 0x02, float: 0x03, enum: 0x04, text: 0x05 } as const;

export const SEEN_TAGS = {
  unknown: 0x00,
  lamp_level: 0x01,
  lamp_state: 0x02,
  pointer_angle: 0x03,
  pointer_steps: 0x04,
  readout: 0x05,
  breaker: 0x06,
  switch: 0x07,
} as const;

export const INPUT_TAGS = { position: 0x01, detents: 0x02, button: 0x03, analog: 0x04 } as const;

/** Index = byte on the wire. */
export const LAMP_STATES = ["off", "on", "flashing"] as const;
export const BREAKER_POSITIONS = ["in", "pulled", "tripped"] as const;

/** Error codes, byte on the wire = index + 1. The first seven mirror the receiver's frame faults. */
export const LINK_ERROR_CODES = [
  "bad_crc",
  "truncated",
  "oversized",
  "unknown_type",
  "bad_version",
  "bad_address",
  "bad_payload",
  "unknown_channel",
  "unknown_element",
  "unsupported_value",
  "queue_full",
] as const;

export const VALUE_UPDATE_FLAGS = { keyframeBegin: 0x01, keyframeEnd: 0x02 } as const;
export const SEEN_REPORT_FLAGS = { appliedSequence: 0x01 } as const;
export const CAPABILITY_BITS = {
  valueUpdates: 0x0001,
  seenReports: 0x0002,
  inputEvents: 0x0004,
  waitsForPoll: 0x0008,
  textValues: 0x0010,
  floatValues: 0x0020,
} as const;

/** Heartbeat's free-memory field when the device cannot tell. */
export const FREE_MEMORY_UNKNOWN = 0xffff;
