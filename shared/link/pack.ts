import type { ChannelValue, InputEntry, LinkMessage, LinkMessageOf, SeenEntry } from "./messages";
import { LINK_MAX_FRAME_BYTES, LINK_MIN_FRAME_BYTES } from "./protocol";
import { utf8Length } from "./text";

/**
 * Splitting many entries over as few frames as fit. A keyframe of a big panel, or one received by
 * a board that announced a small maxFrameBytes, does not fit one frame.
 */

/** Bytes one value takes in a value update: channel (2), tag (1), value. */
export function channelValueBytes(entry: ChannelValue): number {
  switch (entry.kind) {
    case "boolean":
    case "enum":
      return 4;
    case "int":
    case "float":
      return 7;
    case "text":
      return 4 + utf8Length(entry.value);
  }
}

/** Bytes one entry takes in a seen report: element (2), tag (1), what it shows. */
export function seenEntryBytes(entry: SeenEntry): number {
  switch (entry.kind) {
    case "unknown":
      return 3;
    case "lamp_level":
    case "lamp_state":
    case "breaker":
    case "switch":
      return 4;
    case "pointer_angle":
    case "pointer_steps":
      return 7;
    case "readout":
      return 4 + utf8Length(entry.text);
  }
}

/** Bytes one entry takes in an input event: element (2), tag (1), value. */
export function inputEntryBytes(entry: InputEntry): number {
  return entry.kind === "analog" ? 5 : 4;
}

/** Payload length of a message on the wire (header and CRC not included). */
export function linkPayloadBytes(message: LinkMessage): number {
  switch (message.type) {
    case "identify":
    case "poll":
    case "reset":
      return 0;
    case "value_update":
      return message.values.reduce((sum, entry) => sum + channelValueBytes(entry), 2);
    case "hello":
      return 20 + utf8Length(message.panel);
    case "seen_report":
      return message.seen.reduce((sum, entry) => sum + seenEntryBytes(entry), 3);
    case "input_event":
      return message.inputs.reduce((sum, entry) => sum + inputEntryBytes(entry), 1);
    case "heartbeat":
      return 18;
    case "error":
      return 4 + utf8Length(message.text);
  }
}

function pack<T>(entries: readonly T[], sizeOf: (entry: T) => number, headBytes: number, maxFrameBytes: number): T[][] {
  if (maxFrameBytes < LINK_MIN_FRAME_BYTES || maxFrameBytes > LINK_MAX_FRAME_BYTES) {
    throw new RangeError(`maxFrameBytes must be ${LINK_MIN_FRAME_BYTES}..${LINK_MAX_FRAME_BYTES}, got ${maxFrameBytes}`);
  }
  const room = maxFrameBytes - LINK_MIN_FRAME_BYTES - headBytes;
  const groups: T[][] = [];
  let group: T[] = [];
  let used = 0;
  for (const entry of entries) {
    const size = sizeOf(entry);
    if (size > room) throw new RangeError(`an entry of ${size} bytes cannot fit a frame of ${maxFrameBytes} bytes`);
    if (used + size > room || group.length === 255) {
      groups.push(group);
      group = [];
      used = 0;
    }
    group.push(entry);
    used += size;
  }
  if (group.length > 0 || groups.length === 0) groups.push(group);
  return groups;
}

/**
 * Value updates carrying `values` in order. For a keyframe the first message carries
 * keyframeBegin and the last keyframeEnd (one message carries both); an empty keyframe is still
 * one message, so the device still learns to forget every value.
 */
export function packValueUpdates(
  values: readonly ChannelValue[],
  options: { keyframe: boolean; maxFrameBytes?: number },
): LinkMessageOf<"value_update">[] {
  const groups = pack(values, channelValueBytes, 2, options.maxFrameBytes ?? LINK_MAX_FRAME_BYTES);
  return groups.map((group, index) => ({
    type: "value_update",
    keyframeBegin: options.keyframe && index === 0,
    keyframeEnd: options.keyframe && index === groups.length - 1,
    values: group,
  }));
}

/** Seen reports carrying `seen` in order, each with the same applied sequence. */
export function packSeenReports(
  seen: readonly SeenEntry[],
  options: { appliedSequence: number | null; maxFrameBytes?: number },
): LinkMessageOf<"seen_report">[] {
  return pack(seen, seenEntryBytes, 3, options.maxFrameBytes ?? LINK_MAX_FRAME_BYTES).map((group) => ({
    type: "seen_report",
    appliedSequence: options.appliedSequence,
    seen: group,
  }));
}

/** Input events carrying `inputs` in order. */
export function packInputEvents(inputs: readonly InputEntry[], options: { maxFrameBytes?: number } = {}): LinkMessageOf<"input_event">[] {
  return pack(inputs, inputEntryBytes, 1, options.maxFrameBytes ?? LINK_MAX_FRAME_BYTES).map((group) => ({
    type: "input_event",
    inputs: group,
  }));
}
