import { cobsDecode, cobsEncode, cobsEncodeInto } from "./cobs";
import { crc16Modbus } from "./crc16";
import {
  BREAKER_POSITIONS,
  CAPABILITY_BITS,
  CHANNEL_VALUE_TAGS,
  FREE_MEMORY_UNKNOWN,
  INPUT_TAGS,
  LAMP_STATES,
  LINK_ADDRESS_BROADCAST,
  LINK_ADDRESS_LAST_DEVICE,
  LINK_DELIMITER,
  LINK_ERROR_CODES,
  LINK_ERROR_KIND,
  LINK_FROM_DEVICE,
  LINK_HEADER_BYTES,
  LINK_MAX_FRAME_BYTES,
  LINK_MAX_TEXT_BYTES,
  LINK_MIN_FRAME_BYTES,
  LINK_PROTOCOL_VERSION,
  LINK_TYPE_BYTES,
  SEEN_REPORT_FLAGS,
  SEEN_TAGS,
  VALUE_UPDATE_FLAGS,
} from "./protocol";
import type {
  ChannelValue,
  DeviceCapabilities,
  InputEntry,
  LinkErrorCode,
  LinkFrame,
  LinkMessage,
  SeenEntry,
} from "./messages";
import { linkMessageSender } from "./messages";

/**
 * Binary encoding of link frames. Everything multi-byte is little-endian, the byte order of the
 * AVR and ESP32 boards builders use, so firmware copies values without swapping.
 *
 * Encoding a message the protocol cannot carry is a programming error and throws RangeError.
 * Decoding never throws: bytes from a wire are reported as a fault with a reason.
 */

/** Why a received frame was refused. The first seven have error codes of the same name. */
export type LinkFrameFault =
  | "bad_crc"
  | "truncated"
  | "oversized"
  | "unknown_type"
  | "bad_version"
  | "bad_address"
  | "bad_payload";

export type LinkDecodeResult =
  | { ok: true; frame: LinkFrame }
  | { ok: false; fault: LinkFrameFault; detail: string };

// ---- writing --------------------------------------------------------------------------------

const textEncoder = new TextEncoder();

class FrameWriter {
  readonly bytes = new Uint8Array(LINK_MAX_FRAME_BYTES);
  private readonly view = new DataView(this.bytes.buffer);
  length = 0;

  reset(): this {
    this.length = 0;
    return this;
  }

  private reserve(count: number, what: string): number {
    // Two bytes stay free for the CRC.
    if (this.length + count > LINK_MAX_FRAME_BYTES - 2) {
      throw new RangeError(
        `link frame too large at ${what}: more than ${LINK_MAX_FRAME_BYTES} bytes; split the entries (packLinkEntries)`,
      );
    }
    const at = this.length;
    this.length += count;
    return at;
  }

  u8(value: number, what: string): void {
    checkInteger(value, 0, 0xff, what);
    this.bytes[this.reserve(1, what)] = value;
  }
  i8(value: number, what: string): void {
    checkInteger(value, -128, 127, what);
    this.view.setInt8(this.reserve(1, what), value);
  }
  u16(value: number, what: string): void {
    checkInteger(value, 0, 0xffff, what);
    this.view.setUint16(this.reserve(2, what), value, true);
  }
  u32(value: number, what: string): void {
    checkInteger(value, 0, 0xffffffff, what);
    this.view.setUint32(this.reserve(4, what), value, true);
  }
  i32(value: number, what: string): void {
    checkInteger(value, -0x80000000, 0x7fffffff, what);
    this.view.setInt32(this.reserve(4, what), value, true);
  }
  f32(value: number, what: string): void {
    const rounded = Math.fround(value);
    if (!Number.isFinite(rounded)) throw new RangeError(`${what} must be a finite float32, got ${value}`);
    this.view.setFloat32(this.reserve(4, what), rounded, true);
  }
  text(value: string, what: string): void {
    const encoded = textEncoder.encode(value);
    if (encoded.length > LINK_MAX_TEXT_BYTES) {
      throw new RangeError(`${what} is ${encoded.length} UTF-8 bytes, at most ${LINK_MAX_TEXT_BYTES}`);
    }
    if (encoded.includes(0)) throw new RangeError(`${what} holds a zero byte (U+0000), which the link refuses`);
    this.u8(encoded.length, what);
    this.bytes.set(encoded, this.reserve(encoded.length, what));
  }
  count(value: number, what: string): void {
    if (value > 255) throw new RangeError(`${what}: at most 255 entries per message, got ${value}`);
    this.u8(value, what);
  }
}

function checkInteger(value: number, min: number, max: number, what: string): void {
  if (!Number.isInteger(value) || value < min || value > max) {
    throw new RangeError(`${what} must be an integer in ${min}..${max}, got ${value}`);
  }
}

function indexOf<T extends string>(names: readonly T[], name: T, what: string): number {
  const index = names.indexOf(name);
  if (index < 0) throw new RangeError(`${what}: unknown ${String(name)}`);
  return index;
}

function writeChannelValue(writer: FrameWriter, entry: ChannelValue): void {
  writer.u16(entry.channel, "channel");
  switch (entry.kind) {
    case "boolean":
      writer.u8(CHANNEL_VALUE_TAGS.boolean, "tag");
      writer.u8(entry.value ? 1 : 0, "boolean value");
      return;
    case "int":
      writer.u8(CHANNEL_VALUE_TAGS.int, "tag");
      writer.i32(entry.value, "int value");
      return;
    case "float":
      writer.u8(CHANNEL_VALUE_TAGS.float, "tag");
      writer.f32(entry.value, "float value");
      return;
    case "enum":
      writer.u8(CHANNEL_VALUE_TAGS.enum, "tag");
      writer.u8(entry.value, "enum value");
      return;
    case "text":
      writer.u8(CHANNEL_VALUE_TAGS.text, "tag");
      writer.text(entry.value, "text value");
      return;
  }
}

function writeSeenEntry(writer: FrameWriter, entry: SeenEntry): void {
  writer.u16(entry.element, "element");
  writer.u8(SEEN_TAGS[entry.kind], "tag");
  switch (entry.kind) {
    case "unknown":
      return;
    case "lamp_level":
      writer.u8(entry.level, "lamp level");
      return;
    case "lamp_state":
      writer.u8(indexOf(LAMP_STATES, entry.state, "lamp state"), "lamp state");
      return;
    case "pointer_angle":
      writer.i32(entry.centidegrees, "pointer angle");
      return;
    case "pointer_steps":
      writer.i32(entry.steps, "pointer steps");
      return;
    case "readout":
      writer.text(entry.text, "readout text");
      return;
    case "breaker":
      writer.u8(indexOf(BREAKER_POSITIONS, entry.position, "breaker position"), "breaker position");
      return;
    case "switch":
      writer.u8(entry.position, "switch position");
      return;
  }
}

function writeInputEntry(writer: FrameWriter, entry: InputEntry): void {
  writer.u16(entry.element, "element");
  writer.u8(INPUT_TAGS[entry.kind], "tag");
  switch (entry.kind) {
    case "position":
      writer.u8(entry.position, "input position");
      return;
    case "detents":
      writer.i8(entry.delta, "detent delta");
      return;
    case "button":
      writer.u8(entry.pressed ? 1 : 0, "button");
      return;
    case "analog":
      writer.u16(entry.level, "analog level");
      return;
  }
}

function capabilityBits(capabilities: DeviceCapabilities): number {
  let bits = 0;
  for (const name of Object.keys(CAPABILITY_BITS) as (keyof DeviceCapabilities)[]) {
    if (capabilities[name]) bits |= CAPABILITY_BITS[name];
  }
  return bits;
}

function typeByte(message: LinkMessage): number {
  if (message.type === "error") return message.from === "device" ? LINK_ERROR_KIND | LINK_FROM_DEVICE : LINK_ERROR_KIND;
  return LINK_TYPE_BYTES[message.type];
}

function writePayload(writer: FrameWriter, message: LinkMessage): void {
  switch (message.type) {
    case "identify":
    case "poll":
    case "reset":
      return;
    case "value_update":
      writer.u8(
        (message.keyframeBegin ? VALUE_UPDATE_FLAGS.keyframeBegin : 0) |
          (message.keyframeEnd ? VALUE_UPDATE_FLAGS.keyframeEnd : 0),
        "flags",
      );
      writer.count(message.values.length, "values");
      for (const entry of message.values) writeChannelValue(writer, entry);
      return;
    case "hello": {
      if (!/^[0-9a-f]{16}$/.test(message.deviceId)) {
        throw new RangeError(`deviceId must be 16 lowercase hex digits, got ${message.deviceId}`);
      }
      writer.u8(message.protocolVersion, "protocol version");
      for (let index = 0; index < 8; index++) {
        writer.u8(parseInt(message.deviceId.slice(index * 2, index * 2 + 2), 16), "device id");
      }
      writer.u8(message.firmware.major, "firmware major");
      writer.u8(message.firmware.minor, "firmware minor");
      writer.u8(message.firmware.patch, "firmware patch");
      writer.u16(capabilityBits(message.capabilities), "capabilities");
      checkInteger(message.maxFrameBytes, LINK_MIN_FRAME_BYTES, LINK_MAX_FRAME_BYTES, "maxFrameBytes");
      writer.u8(message.maxFrameBytes, "maxFrameBytes");
      writer.u16(message.elementCount, "element count");
      writer.u16(message.channelCount, "channel count");
      writer.text(message.panel, "panel");
      return;
    }
    case "seen_report":
      writer.u8(message.appliedSequence === null ? 0 : SEEN_REPORT_FLAGS.appliedSequence, "flags");
      writer.u8(message.appliedSequence ?? 0, "applied sequence");
      writer.count(message.seen.length, "seen");
      for (const entry of message.seen) writeSeenEntry(writer, entry);
      return;
    case "input_event":
      writer.count(message.inputs.length, "inputs");
      for (const entry of message.inputs) writeInputEntry(writer, entry);
      return;
    case "heartbeat":
      writer.u32(message.uptimeMs, "uptime");
      writer.u16(message.framesReceived, "frames received");
      writer.u16(message.badCrc, "bad CRC count");
      writer.u16(message.truncated, "truncated count");
      writer.u16(message.oversized, "oversized count");
      writer.u16(message.rejected, "rejected count");
      writer.u16(message.dropped, "dropped count");
      if (message.freeMemoryBytes !== null) checkInteger(message.freeMemoryBytes, 0, 0xfffe, "free memory");
      writer.u16(message.freeMemoryBytes ?? FREE_MEMORY_UNKNOWN, "free memory");
      return;
    case "error":
      writer.u8(indexOf(LINK_ERROR_CODES, message.code, "error code") + 1, "error code");
      writer.u16(message.subject, "error subject");
      writer.text(message.text, "error text");
      return;
  }
}

/** The frame before stuffing: header, payload and CRC (low byte first). */
export function encodeLinkFrameBody(frame: LinkFrame): Uint8Array {
  const writer = sealedBody(frame);
  return writer.bytes.slice(0, writer.length);
}

/**
 * One writer for every frame this thread encodes: encoding runs start to end without a call out,
 * and a bench sends every frame to every link (a writer each time was a 254-byte buffer each).
 */
const sharedWriter = new FrameWriter();

/** The shared writer, emptied, with the header written. */
function startFrame(address: number, sequence: number, message: LinkMessage): FrameWriter {
  checkInteger(address, 0, 0xff, "address");
  if (address > LINK_ADDRESS_LAST_DEVICE && address !== LINK_ADDRESS_BROADCAST) {
    throw new RangeError(`address ${address} is reserved (248..254)`);
  }
  if (address === LINK_ADDRESS_BROADCAST && linkMessageSender(message) === "device") {
    throw new RangeError("a device frame carries the device's own address, never broadcast");
  }
  const writer = sharedWriter.reset();
  writer.u8(LINK_PROTOCOL_VERSION, "version");
  writer.u8(address, "address");
  writer.u8(typeByte(message), "type");
  writer.u8(sequence, "sequence");
  return writer;
}

/** Appends the CRC of everything written (the writer keeps two bytes free for it). */
function endFrame(writer: FrameWriter): FrameWriter {
  const crc = crc16Modbus(writer.bytes, 0, writer.length);
  writer.bytes[writer.length++] = crc & 0xff;
  writer.bytes[writer.length++] = crc >>> 8;
  return writer;
}

/** Header, payload and CRC of `frame` in the shared writer (valid until the next encode). */
function sealedBody(frame: LinkFrame): FrameWriter {
  const writer = startFrame(frame.address, frame.sequence, frame.message);
  writePayload(writer, frame.message);
  return endFrame(writer);
}

/**
 * A message's payload, encoded once to go out on several links: each seals it with its own
 * address and sequence (`sealLinkMessage`). A run sends the same update to every panel that
 * reads the same channels; the payload is most of the work.
 */
export interface EncodedLinkMessage {
  readonly message: LinkMessage;
  readonly payload: Uint8Array;
}

export function encodeLinkMessage(message: LinkMessage): EncodedLinkMessage {
  const writer = sharedWriter.reset();
  // Written where it sits in a frame, so the frame-size limit counts the same.
  writer.length = LINK_HEADER_BYTES;
  writePayload(writer, message);
  return { message, payload: writer.bytes.slice(LINK_HEADER_BYTES, writer.length) };
}

/** The wire bytes of an encoded message from `address` with `sequence`: the same as encodeLinkFrame's. */
export function sealLinkMessage(address: number, sequence: number, encoded: EncodedLinkMessage, options: EncodeLinkFrameOptions = {}): Uint8Array {
  const writer = startFrame(address, sequence, encoded.message);
  writer.bytes.set(encoded.payload, writer.length);
  writer.length += encoded.payload.length;
  endFrame(writer);
  return stuff(writer.bytes, writer.length, options.leadingDelimiter ?? false, options.allocate ?? newBytes);
}

function appendCrc(body: Uint8Array): Uint8Array {
  const sealed = new Uint8Array(body.length + 2);
  sealed.set(body);
  const crc = crc16Modbus(body);
  sealed[body.length] = crc & 0xff;
  sealed[body.length + 1] = crc >>> 8;
  return sealed;
}

/**
 * Adds the CRC to any header-and-payload bytes, stuffs them and appends the delimiter. For tools
 * and tests that must produce frames the typed encoder refuses (another version, a reserved type).
 */
export function sealRawLinkFrame(headerAndPayload: Uint8Array): Uint8Array {
  const sealed = appendCrc(headerAndPayload);
  return stuff(sealed, sealed.length, false, newBytes);
}

function stuff(body: Uint8Array, length: number, leadingDelimiter: boolean, allocate: (length: number) => Uint8Array): Uint8Array {
  const offset = leadingDelimiter ? 1 : 0;
  if (length <= COBS_BLOCK) {
    // Up to one block, COBS adds exactly one byte: stuff straight into the bytes handed back.
    const wire = allocate(offset + length + 2);
    wire[0] = LINK_DELIMITER;
    wire[offset + cobsEncodeInto(body, 0, length, wire, offset)] = LINK_DELIMITER;
    return wire;
  }
  // Longer than any frame the codec makes (raw frames from tools and tests): the plain way.
  const encoded = cobsEncode(body.subarray(0, length));
  const wire = allocate(offset + encoded.length + 1);
  wire[0] = LINK_DELIMITER;
  wire.set(encoded, offset);
  wire[offset + encoded.length] = LINK_DELIMITER;
  return wire;
}

const newBytes = (length: number) => new Uint8Array(length);

/** The most bytes COBS carries behind one code byte. */
const COBS_BLOCK = 254;

export interface EncodeLinkFrameOptions {
  /**
   * Also send a 0x00 before the frame, so a receiver that caught noise since the last frame
   * drops it instead of prefixing it to this one. Worth a byte after the line was idle.
   */
  leadingDelimiter?: boolean;
  /**
   * Makes the returned bytes (exactly `length` of them), `new Uint8Array` unless told. The server
   * passes Node's `Buffer.allocUnsafe`, which cuts small buffers from a shared pool instead of
   * giving each frame a memory block of its own for the collector to sweep.
   */
  allocate?: (length: number) => Uint8Array;
}

/** The bytes to put on the wire: COBS-stuffed frame and its 0x00 delimiter. */
export function encodeLinkFrame(frame: LinkFrame, options: EncodeLinkFrameOptions = {}): Uint8Array {
  const writer = sealedBody(frame);
  return stuff(writer.bytes, writer.length, options.leadingDelimiter ?? false, options.allocate ?? newBytes);
}

// ---- reading --------------------------------------------------------------------------------

class PayloadError extends Error {}

// ignoreBOM: a text field starting with EF BB BF is data, and must come back byte for byte.
const textDecoder = new TextDecoder("utf-8", { fatal: true, ignoreBOM: true });

class FrameReader {
  private readonly view: DataView;
  offset: number;

  constructor(
    private readonly bytes: Uint8Array,
    start: number,
    private readonly end: number,
  ) {
    this.view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    this.offset = start;
  }

  private take(count: number, what: string): number {
    if (this.offset + count > this.end) {
      throw new PayloadError(`payload ends inside ${what} (needs ${count} bytes at payload byte ${this.offset - LINK_HEADER_BYTES})`);
    }
    const at = this.offset;
    this.offset += count;
    return at;
  }
  u8(what: string): number {
    return this.bytes[this.take(1, what)];
  }
  i8(what: string): number {
    return this.view.getInt8(this.take(1, what));
  }
  u16(what: string): number {
    return this.view.getUint16(this.take(2, what), true);
  }
  u32(what: string): number {
    return this.view.getUint32(this.take(4, what), true);
  }
  i32(what: string): number {
    return this.view.getInt32(this.take(4, what), true);
  }
  f32(what: string): number {
    const value = this.view.getFloat32(this.take(4, what), true);
    if (!Number.isFinite(value)) throw new PayloadError(`${what} is not a finite number`);
    return value;
  }
  flag(what: string): boolean {
    const value = this.u8(what);
    if (value > 1) throw new PayloadError(`${what} must be 0 or 1, got ${value}`);
    return value === 1;
  }
  choice<T>(names: readonly T[], what: string): T {
    const value = this.u8(what);
    if (value >= names.length) throw new PayloadError(`${what} ${value} is not one of 0..${names.length - 1}`);
    return names[value];
  }
  text(what: string): string {
    const length = this.u8(`${what} length`);
    if (length > LINK_MAX_TEXT_BYTES) throw new PayloadError(`${what} is ${length} bytes, at most ${LINK_MAX_TEXT_BYTES}`);
    const at = this.take(length, what);
    const bytes = this.bytes.subarray(at, at + length);
    // No readout shows U+0000 and PostgreSQL text cannot hold it (a mismatch quoting it could not be kept).
    if (bytes.includes(0)) throw new PayloadError(`${what} holds a zero byte at text byte ${bytes.indexOf(0)}`);
    try {
      return textDecoder.decode(bytes);
    } catch {
      throw new PayloadError(`${what} is not valid UTF-8`);
    }
  }
  finish(): void {
    if (this.offset !== this.end) throw new PayloadError(`${this.end - this.offset} bytes left over after the payload`);
  }
}

function readChannelValue(reader: FrameReader): ChannelValue {
  const channel = reader.u16("channel");
  const tag = reader.u8("value tag");
  switch (tag) {
    case CHANNEL_VALUE_TAGS.boolean:
      return { channel, kind: "boolean", value: reader.flag("boolean value") };
    case CHANNEL_VALUE_TAGS.int:
      return { channel, kind: "int", value: reader.i32("int value") };
    case CHANNEL_VALUE_TAGS.float:
      return { channel, kind: "float", value: reader.f32("float value") };
    case CHANNEL_VALUE_TAGS.enum:
      return { channel, kind: "enum", value: reader.u8("enum value") };
    case CHANNEL_VALUE_TAGS.text:
      return { channel, kind: "text", value: reader.text("text value") };
    default:
      throw new PayloadError(`unknown value tag 0x${tag.toString(16)} for channel ${channel}`);
  }
}

function readSeenEntry(reader: FrameReader): SeenEntry {
  const element = reader.u16("element");
  const tag = reader.u8("seen tag");
  switch (tag) {
    case SEEN_TAGS.unknown:
      return { element, kind: "unknown" };
    case SEEN_TAGS.lamp_level:
      return { element, kind: "lamp_level", level: reader.u8("lamp level") };
    case SEEN_TAGS.lamp_state:
      return { element, kind: "lamp_state", state: reader.choice(LAMP_STATES, "lamp state") };
    case SEEN_TAGS.pointer_angle:
      return { element, kind: "pointer_angle", centidegrees: reader.i32("pointer angle") };
    case SEEN_TAGS.pointer_steps:
      return { element, kind: "pointer_steps", steps: reader.i32("pointer steps") };
    case SEEN_TAGS.readout:
      return { element, kind: "readout", text: reader.text("readout text") };
    case SEEN_TAGS.breaker:
      return { element, kind: "breaker", position: reader.choice(BREAKER_POSITIONS, "breaker position") };
    case SEEN_TAGS.switch:
      return { element, kind: "switch", position: reader.u8("switch position") };
    default:
      throw new PayloadError(`unknown seen tag 0x${tag.toString(16)} for element ${element}`);
  }
}

function readInputEntry(reader: FrameReader): InputEntry {
  const element = reader.u16("element");
  const tag = reader.u8("input tag");
  switch (tag) {
    case INPUT_TAGS.position:
      return { element, kind: "position", position: reader.u8("input position") };
    case INPUT_TAGS.detents:
      return { element, kind: "detents", delta: reader.i8("detent delta") };
    case INPUT_TAGS.button:
      return { element, kind: "button", pressed: reader.flag("button") };
    case INPUT_TAGS.analog:
      return { element, kind: "analog", level: reader.u16("analog level") };
    default:
      throw new PayloadError(`unknown input tag 0x${tag.toString(16)} for element ${element}`);
  }
}

function readFlags(reader: FrameReader, known: number, what: string): number {
  const flags = reader.u8(what);
  // Reserved bits must be zero: a later meaning comes with a new protocol version, never silently.
  if (flags & ~known) throw new PayloadError(`${what} 0x${flags.toString(16)} sets reserved bits`);
  return flags;
}

function readPayload(reader: FrameReader, type: number): LinkMessage {
  switch (type) {
    case LINK_TYPE_BYTES.identify:
      return { type: "identify" };
    case LINK_TYPE_BYTES.poll:
      return { type: "poll" };
    case LINK_TYPE_BYTES.reset:
      return { type: "reset" };
    case LINK_TYPE_BYTES.value_update: {
      const flags = readFlags(reader, VALUE_UPDATE_FLAGS.keyframeBegin | VALUE_UPDATE_FLAGS.keyframeEnd, "value update flags");
      const count = reader.u8("value count");
      const values: ChannelValue[] = [];
      for (let index = 0; index < count; index++) values.push(readChannelValue(reader));
      return {
        type: "value_update",
        keyframeBegin: (flags & VALUE_UPDATE_FLAGS.keyframeBegin) !== 0,
        keyframeEnd: (flags & VALUE_UPDATE_FLAGS.keyframeEnd) !== 0,
        values,
      };
    }
    case LINK_TYPE_BYTES.hello: {
      const protocolVersion = reader.u8("protocol version");
      let deviceId = "";
      for (let index = 0; index < 8; index++) deviceId += reader.u8("device id").toString(16).padStart(2, "0");
      const firmware = { major: reader.u8("firmware major"), minor: reader.u8("firmware minor"), patch: reader.u8("firmware patch") };
      const allBits = Object.values(CAPABILITY_BITS).reduce((all, bit) => all | bit, 0);
      const bits = reader.u16("capabilities");
      if (bits & ~allBits) throw new PayloadError(`capabilities 0x${bits.toString(16)} set reserved bits`);
      const capabilities = {
        valueUpdates: (bits & CAPABILITY_BITS.valueUpdates) !== 0,
        seenReports: (bits & CAPABILITY_BITS.seenReports) !== 0,
        inputEvents: (bits & CAPABILITY_BITS.inputEvents) !== 0,
        waitsForPoll: (bits & CAPABILITY_BITS.waitsForPoll) !== 0,
        textValues: (bits & CAPABILITY_BITS.textValues) !== 0,
        floatValues: (bits & CAPABILITY_BITS.floatValues) !== 0,
      };
      const maxFrameBytes = reader.u8("max frame bytes");
      if (maxFrameBytes < LINK_MIN_FRAME_BYTES || maxFrameBytes > LINK_MAX_FRAME_BYTES) {
        throw new PayloadError(`max frame bytes ${maxFrameBytes} is outside ${LINK_MIN_FRAME_BYTES}..${LINK_MAX_FRAME_BYTES}`);
      }
      return {
        type: "hello",
        deviceId,
        firmware,
        protocolVersion,
        capabilities,
        maxFrameBytes,
        elementCount: reader.u16("element count"),
        channelCount: reader.u16("channel count"),
        panel: reader.text("panel"),
      };
    }
    case LINK_TYPE_BYTES.seen_report: {
      const flags = readFlags(reader, SEEN_REPORT_FLAGS.appliedSequence, "seen report flags");
      const applied = reader.u8("applied sequence");
      if (!(flags & SEEN_REPORT_FLAGS.appliedSequence) && applied !== 0) {
        throw new PayloadError("applied sequence must be 0 when the flag says there is none");
      }
      const count = reader.u8("seen count");
      const seen: SeenEntry[] = [];
      for (let index = 0; index < count; index++) seen.push(readSeenEntry(reader));
      return { type: "seen_report", appliedSequence: flags & SEEN_REPORT_FLAGS.appliedSequence ? applied : null, seen };
    }
    case LINK_TYPE_BYTES.input_event: {
      const count = reader.u8("input count");
      const inputs: InputEntry[] = [];
      for (let index = 0; index < count; index++) inputs.push(readInputEntry(reader));
      return { type: "input_event", inputs };
    }
    case LINK_TYPE_BYTES.heartbeat: {
      const uptimeMs = reader.u32("uptime");
      const framesReceived = reader.u16("frames received");
      const badCrc = reader.u16("bad CRC count");
      const truncated = reader.u16("truncated count");
      const oversized = reader.u16("oversized count");
      const rejected = reader.u16("rejected count");
      const dropped = reader.u16("dropped count");
      const freeMemory = reader.u16("free memory");
      return {
        type: "heartbeat",
        uptimeMs,
        framesReceived,
        badCrc,
        truncated,
        oversized,
        rejected,
        dropped,
        freeMemoryBytes: freeMemory === FREE_MEMORY_UNKNOWN ? null : freeMemory,
      };
    }
    case LINK_ERROR_KIND:
    case LINK_ERROR_KIND | LINK_FROM_DEVICE: {
      const codeByte = reader.u8("error code");
      if (codeByte < 1 || codeByte > LINK_ERROR_CODES.length) throw new PayloadError(`unknown error code ${codeByte}`);
      const code: LinkErrorCode = LINK_ERROR_CODES[codeByte - 1];
      return {
        type: "error",
        from: type & LINK_FROM_DEVICE ? "device" : "bench",
        code,
        subject: reader.u16("error subject"),
        text: reader.text("error text"),
      };
    }
    default:
      // Callers check the type byte first; reaching here is a bug in this file.
      throw new PayloadError(`unknown type 0x${type.toString(16)}`);
  }
}

const KNOWN_TYPE_BYTES = new Set<number>([
  ...Object.values(LINK_TYPE_BYTES),
  LINK_ERROR_KIND | LINK_FROM_DEVICE,
]);

/** True for the type bytes this version knows. */
export function isKnownLinkType(typeByte: number): boolean {
  return KNOWN_TYPE_BYTES.has(typeByte);
}

/**
 * Decodes a frame already unstuffed (header, payload, CRC). Checks, in order: length, CRC,
 * version, address, type, payload; the first failure is the fault reported.
 */
export function decodeLinkFrameBody(body: Uint8Array, maxFrameBytes = LINK_MAX_FRAME_BYTES): LinkDecodeResult {
  if (body.length > maxFrameBytes) {
    return { ok: false, fault: "oversized", detail: `${body.length} bytes, at most ${maxFrameBytes}` };
  }
  if (body.length < LINK_MIN_FRAME_BYTES) {
    return { ok: false, fault: "truncated", detail: `${body.length} bytes, at least ${LINK_MIN_FRAME_BYTES}` };
  }
  const end = body.length - 2;
  const expected = crc16Modbus(body, 0, end);
  const received = body[end] | (body[end + 1] << 8);
  if (expected !== received) {
    return {
      ok: false,
      fault: "bad_crc",
      detail: `CRC 0x${received.toString(16).padStart(4, "0")} received, 0x${expected.toString(16).padStart(4, "0")} computed`,
    };
  }
  const version = body[0];
  if (version !== LINK_PROTOCOL_VERSION) {
    return { ok: false, fault: "bad_version", detail: `version ${version}, this codec speaks ${LINK_PROTOCOL_VERSION}` };
  }
  const address = body[1];
  if (address > LINK_ADDRESS_LAST_DEVICE && address !== LINK_ADDRESS_BROADCAST) {
    return { ok: false, fault: "bad_address", detail: `address ${address} is reserved (248..254)` };
  }
  const type = body[2];
  if (!KNOWN_TYPE_BYTES.has(type)) {
    return { ok: false, fault: "unknown_type", detail: `type byte 0x${type.toString(16).padStart(2, "0")}` };
  }
  if (address === LINK_ADDRESS_BROADCAST && type & LINK_FROM_DEVICE) {
    return { ok: false, fault: "bad_address", detail: "a device frame addressed to broadcast" };
  }
  const sequence = body[3];
  const reader = new FrameReader(body, LINK_HEADER_BYTES, end);
  try {
    const message = readPayload(reader, type);
    reader.finish();
    return { ok: true, frame: { address, sequence, message } };
  } catch (error) {
    if (error instanceof PayloadError) return { ok: false, fault: "bad_payload", detail: error.message };
    throw error;
  }
}

/**
 * Decodes one frame as it came off the wire: COBS bytes, with or without the 0x00 delimiter at
 * the end. For a byte stream use LinkStreamDecoder, which finds the frames.
 */
export function decodeLinkFrame(wire: Uint8Array, maxFrameBytes = LINK_MAX_FRAME_BYTES): LinkDecodeResult {
  let encoded = wire;
  if (encoded.length > 0 && encoded[encoded.length - 1] === LINK_DELIMITER) encoded = encoded.subarray(0, encoded.length - 1);
  if (encoded.length > maxFrameBytes + 1) {
    return { ok: false, fault: "oversized", detail: `${encoded.length} encoded bytes, at most ${maxFrameBytes + 1}` };
  }
  const unstuffed = cobsDecode(encoded);
  if (!unstuffed.ok) return { ok: false, fault: "truncated", detail: `COBS: ${unstuffed.detail}` };
  return decodeLinkFrameBody(unstuffed.bytes, maxFrameBytes);
}
