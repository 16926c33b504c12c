import seedrandom from "seedrandom";
import type { ChannelValue, InputEntry, LinkFrame, LinkMessage, SeenEntry } from "../../../shared/link/messages";
import { BREAKER_POSITIONS, LAMP_STATES, LINK_ERROR_CODES } from "../../../shared/link/protocol";

/** Deterministic random messages for property tests: every field within what the protocol allows. */
export function messageGenerator(seed: string) {
  const random = seedrandom(seed);
  const int = (min: number, max: number) => min + Math.floor(random() * (max - min + 1));
  const pick = <T>(items: readonly T[]): T => items[int(0, items.length - 1)];
  const bool = () => random() < 0.5;
  // Mixes ASCII with multi-byte characters (degree sign, en dash) up to 32 UTF-8 bytes.
  const text = () => {
    const pieces = ["A", "7", " ", "-", "°", "–", "FL", "0"];
    let value = "";
    const target = int(0, 12);
    for (let index = 0; index < target; index++) {
      const next = value + pick(pieces);
      if (new TextEncoder().encode(next).length > 32) break;
      value = next;
    }
    return value;
  };
  const float32 = () => Math.fround((random() - 0.5) * 10 ** int(0, 30));

  const channelValue = (): ChannelValue => {
    const channel = int(0, 0xffff);
    switch (int(0, 4)) {
      case 0:
        return { channel, kind: "boolean", value: bool() };
      case 1:
        return { channel, kind: "int", value: int(-0x80000000, 0x7fffffff) };
      case 2:
        return { channel, kind: "float", value: float32() };
      case 3:
        return { channel, kind: "enum", value: int(0, 255) };
      default:
        return { channel, kind: "text", value: text() };
    }
  };
  const seenEntry = (): SeenEntry => {
    const element = int(0, 0xffff);
    switch (int(0, 7)) {
      case 0:
        return { element, kind: "unknown" };
      case 1:
        return { element, kind: "lamp_level", level: int(0, 255) };
      case 2:
        return { element, kind: "lamp_state", state: pick(LAMP_STATES) };
      case 3:
        return { element, kind: "pointer_angle", centidegrees: int(-36000, 36000) };
      case 4:
        return { element, kind: "pointer_steps", steps: int(-0x80000000, 0x7fffffff) };
      case 5:
        return { element, kind: "readout", text: text() };
      case 6:
        return { element, kind: "breaker", position: pick(BREAKER_POSITIONS) };
      default:
        return { element, kind: "switch", position: int(0, 255) };
    }
  };
  const inputEntry = (): InputEntry => {
    const element = int(0, 0xffff);
    switch (int(0, 3)) {
      case 0:
        return { element, kind: "position", position: int(0, 255) };
      case 1:
        return { element, kind: "detents", delta: int(-128, 127) };
      case 2:
        return { element, kind: "button", pressed: bool() };
      default:
        return { element, kind: "analog", level: int(0, 0xffff) };
    }
  };
  // Entry counts stay small enough that any mix fits one 254-byte frame (at most 36 bytes each).
  const list = <T>(make: () => T, max: number) => Array.from({ length: int(0, max) }, make);

  const message = (type: LinkMessage["type"]): LinkMessage => {
    switch (type) {
      case "identify":
      case "poll":
      case "reset":
        return { type };
      case "value_update":
        return { type, keyframeBegin: bool(), keyframeEnd: bool(), values: list(channelValue, 6) };
      case "hello":
        return {
          type,
          deviceId: Array.from({ length: 8 }, () => int(0, 255).toString(16).padStart(2, "0")).join(""),
          firmware: { major: int(0, 255), minor: int(0, 255), patch: int(0, 255) },
          protocolVersion: int(1, 255),
          capabilities: { valueUpdates: bool(), seenReports: bool(), inputEvents: bool(), waitsForPoll: bool(), textValues: bool(), floatValues: bool() },
          maxFrameBytes: int(6, 254),
          elementCount: int(0, 0xffff),
          channelCount: int(0, 0xffff),
          panel: text(),
        };
      case "seen_report":
        return { type, appliedSequence: bool() ? null : int(0, 255), seen: list(seenEntry, 6) };
      case "input_event":
        return { type, inputs: list(inputEntry, 40) };
      case "heartbeat":
        return {
          type,
          uptimeMs: int(0, 0xffffffff),
          framesReceived: int(0, 0xffff),
          badCrc: int(0, 0xffff),
          truncated: int(0, 0xffff),
          oversized: int(0, 0xffff),
          rejected: int(0, 0xffff),
          dropped: int(0, 0xffff),
          freeMemoryBytes: bool() ? null : int(0, 0xfffe),
        };
      case "error":
        return { type, from: bool() ? "bench" : "device", code: pick(LINK_ERROR_CODES), subject: int(0, 0xffff), text: text() };
    }
  };

  const frame = (type: LinkMessage["type"]): LinkFrame => {
    const m = message(type);
    const fromDevice = m.type === "hello" || m.type === "seen_report" || m.type === "input_event" || m.type === "heartbeat" || (m.type === "error" && m.from === "device");
    const address = fromDevice ? int(0, 247) : bool() ? 255 : int(0, 247);
    return { address, sequence: int(0, 255), message: m };
  };

  return { random, int, frame, message };
}

export const ALL_MESSAGE_TYPES: LinkMessage["type"][] = [
  "identify",
  "poll",
  "reset",
  "value_update",
  "hello",
  "seen_report",
  "input_event",
  "heartbeat",
  "error",
];
