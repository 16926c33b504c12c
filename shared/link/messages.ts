import { z } from "zod";
import {
  BREAKER_POSITIONS,
  LAMP_STATES,
  LINK_ADDRESS_BROADCAST,
  LINK_ERROR_CODES,
  LINK_MAX_FRAME_BYTES,
  LINK_MAX_TEXT_BYTES,
  LINK_MIN_FRAME_BYTES,
  LINK_MAX_PAYLOAD_BYTES,
} from "./protocol";
import { linkPayloadBytes } from "./pack";
import { utf8Length } from "./text";

/**
 * The link's messages as data. The zod schemas are the single source of the TypeScript types and
 * check messages that come from outside the binary codec (JSON test vectors, the browser's
 * WebSocket mirror, a device emulator's script). The binary decoder produces only values these
 * schemas accept; the encoder refuses values they would reject.
 */

export { utf8Length };

const FLOAT32_MAX = 3.4028234663852886e38;

const u8 = z.int().min(0).max(0xff);
const u16 = z.int().min(0).max(0xffff);
const u32 = z.int().min(0).max(0xffffffff);
const i8 = z.int().min(-128).max(127);
const i32 = z.int().min(-0x80000000).max(0x7fffffff);
const float32 = z
  .number()
  .refine((value) => Number.isFinite(value) && Math.abs(value) <= FLOAT32_MAX, "a finite float32");
const linkText = z
  .string()
  .refine((text) => utf8Length(text) <= LINK_MAX_TEXT_BYTES, `at most ${LINK_MAX_TEXT_BYTES} UTF-8 bytes`);

export const linkAddress = z
  .int()
  .min(0)
  .max(0xff)
  .refine((address) => address <= 247 || address === LINK_ADDRESS_BROADCAST, "0..247 or 255");
export const linkSequence = u8;

// ---- value update ---------------------------------------------------------------------------

const channel = u16;
export const channelValue = z.discriminatedUnion("kind", [
  z.object({ channel, kind: z.literal("boolean"), value: z.boolean() }),
  z.object({ channel, kind: z.literal("int"), value: i32 }),
  /** Sent as IEEE 754 binary32: the decoded value is Math.fround of the sent one. */
  z.object({ channel, kind: z.literal("float"), value: float32 }),
  /** Index into the channel's enum values, as the panel definition lists them. */
  z.object({ channel, kind: z.literal("enum"), value: u8 }),
  z.object({ channel, kind: z.literal("text"), value: linkText }),
]);
export type ChannelValue = z.infer<typeof channelValue>;

export const valueUpdateMessage = z.object({
  type: z.literal("value_update"),
  /** The first message of a keyframe: the device forgets every channel value before applying these. */
  keyframeBegin: z.boolean(),
  /** The last message of a keyframe: every channel now has its value; outputs may follow again. */
  keyframeEnd: z.boolean(),
  values: z.array(channelValue).max(255),
});

// ---- seen report ----------------------------------------------------------------------------

const element = u16;
export const seenEntry = z.discriminatedUnion("kind", [
  /** The element cannot tell what it shows (pointer not homed, display not answering). */
  z.object({ element, kind: z.literal("unknown") }),
  z.object({ element, kind: z.literal("lamp_level"), level: u8 }),
  z.object({ element, kind: z.literal("lamp_state"), state: z.enum(LAMP_STATES) }),
  /** Clockwise from the scale's zero mark, in hundredths of a degree. */
  z.object({ element, kind: z.literal("pointer_angle"), centidegrees: i32 }),
  /** Motor steps from the home position. */
  z.object({ element, kind: z.literal("pointer_steps"), steps: i32 }),
  z.object({ element, kind: z.literal("readout"), text: linkText }),
  z.object({ element, kind: z.literal("breaker"), position: z.enum(BREAKER_POSITIONS) }),
  /** Index of the switch's position, as the panel definition lists them. */
  z.object({ element, kind: z.literal("switch"), position: u8 }),
]);
export type SeenEntry = z.infer<typeof seenEntry>;

export const seenReportMessage = z.object({
  type: z.literal("seen_report"),
  /** Sequence of the latest value update applied when this was seen; null before the first. */
  appliedSequence: linkSequence.nullable(),
  seen: z.array(seenEntry).max(255),
});

// ---- input event ----------------------------------------------------------------------------

export const inputEntry = z.discriminatedUnion("kind", [
  /** A switch, selector, lever or breaker now rests at this position index. */
  z.object({ element, kind: z.literal("position"), position: u8 }),
  /** Encoder detents turned since the last event: positive clockwise. */
  z.object({ element, kind: z.literal("detents"), delta: i8 }),
  z.object({ element, kind: z.literal("button"), pressed: z.boolean() }),
  /** A continuous input (lever, potentiometer): 0 at one end of travel, 65535 at the other. */
  z.object({ element, kind: z.literal("analog"), level: u16 }),
]);
export type InputEntry = z.infer<typeof inputEntry>;

export const inputEventMessage = z.object({
  type: z.literal("input_event"),
  inputs: z.array(inputEntry).max(255),
});

// ---- hello, heartbeat, error, and the three empty ones ----------------------------------------

export const deviceCapabilities = z.object({
  valueUpdates: z.boolean(),
  seenReports: z.boolean(),
  inputEvents: z.boolean(),
  /** On a shared bus: speaks only when polled. */
  waitsForPoll: z.boolean(),
  textValues: z.boolean(),
  floatValues: z.boolean(),
});
export type DeviceCapabilities = z.infer<typeof deviceCapabilities>;

export const helloMessage = z.object({
  type: z.literal("hello"),
  /** Eight bytes as 16 lowercase hex digits: a chip serial, a MAC padded with zeros, or builder-chosen. */
  deviceId: z.string().regex(/^[0-9a-f]{16}$/, "16 lowercase hex digits"),
  firmware: z.object({ major: u8, minor: u8, patch: u8 }),
  /** Highest protocol version the device speaks. */
  protocolVersion: u8,
  capabilities: deviceCapabilities,
  /** Largest frame (before stuffing) the device accepts: the bench splits value updates to fit. */
  maxFrameBytes: z.int().min(LINK_MIN_FRAME_BYTES).max(LINK_MAX_FRAME_BYTES),
  elementCount: u16,
  channelCount: u16,
  /** Which panel definition the firmware was built for, e.g. "overhead-left". */
  panel: linkText,
});

export const heartbeatMessage = z.object({
  type: z.literal("heartbeat"),
  /** Wraps after about 49.7 days, like the board's own millisecond counter. */
  uptimeMs: u32,
  /** Counters since power-up; they stop at 65535 rather than wrap, so a busy link never looks clean. */
  framesReceived: u16,
  badCrc: u16,
  truncated: u16,
  oversized: u16,
  /** Frames with a good CRC that were refused: unknown type, bad version, bad address or bad payload. */
  rejected: u16,
  /** Reports the device could not queue and dropped. */
  dropped: u16,
  /** Free RAM in bytes, capped at 65534; null when the device cannot tell. */
  freeMemoryBytes: z.int().min(0).max(0xfffe).nullable(),
});

export const linkErrorCode = z.enum(LINK_ERROR_CODES);
export type LinkErrorCode = z.infer<typeof linkErrorCode>;

export const errorMessage = z.object({
  type: z.literal("error"),
  from: z.enum(["bench", "device"]),
  code: linkErrorCode,
  /** A number the code explains: the channel or element index, the type byte, the frame length; 0 if none. */
  subject: u16,
  text: linkText,
});

export const identifyMessage = z.object({ type: z.literal("identify") });
export const pollMessage = z.object({ type: z.literal("poll") });
export const resetMessage = z.object({ type: z.literal("reset") });

export const linkMessage = z.discriminatedUnion("type", [
  identifyMessage,
  pollMessage,
  resetMessage,
  valueUpdateMessage,
  helloMessage,
  seenReportMessage,
  inputEventMessage,
  heartbeatMessage,
  errorMessage,
]);
export type LinkMessage = z.infer<typeof linkMessage>;
export type LinkMessageType = LinkMessage["type"];
export type LinkMessageOf<T extends LinkMessageType> = Extract<LinkMessage, { type: T }>;

export const linkFrame = z
  .object({
    address: linkAddress,
    sequence: linkSequence,
    message: linkMessage,
  })
  .superRefine((frame, context) => {
    if (frame.address === LINK_ADDRESS_BROADCAST && linkMessageSender(frame.message) === "device") {
      context.addIssue({ code: "custom", path: ["address"], message: "a device frame carries the device's own address, never broadcast" });
    }
    const payloadBytes = linkPayloadBytes(frame.message);
    if (payloadBytes > LINK_MAX_PAYLOAD_BYTES) {
      context.addIssue({
        code: "custom",
        path: ["message"],
        message: `payload of ${payloadBytes} bytes, at most ${LINK_MAX_PAYLOAD_BYTES}: split the entries`,
      });
    }
  });
/** One frame as the application sees it. The protocol version is the codec's own (1). */
export type LinkFrame = z.infer<typeof linkFrame>;

/** Who sends a message of this type; error goes both ways and says so itself. */
export function linkMessageSender(message: LinkMessage): "bench" | "device" {
  switch (message.type) {
    case "identify":
    case "poll":
    case "reset":
    case "value_update":
      return "bench";
    case "hello":
    case "seen_report":
    case "input_event":
    case "heartbeat":
      return "device";
    case "error":
      return message.from;
  }
}
