import type { LinkFrame } from "./messages";
import { linkMessageSender } from "./messages";
import { LINK_ADDRESS_BROADCAST, LINK_ADDRESS_DIRECT } from "./protocol";

/**
 * Line timing and bus rules. A pseudo-terminal ignores baud rate, so the bench models line time
 * itself from these figures rather than measuring it.
 */

/** 8N1: start bit, 8 data bits, stop bit (common practice, no source). */
export const BITS_PER_BYTE_8N1 = 10;

/**
 * Above this rate the Modbus serial line guide (V1.02; the section number is from memory) fixes the silent interval
 * instead of scaling it with the character time.
 */
export const FIXED_SILENCE_ABOVE_BAUD = 19_200;
export const FIXED_SILENCE_MS = 1.75;

/** Time to send one character on the line. */
export function characterTimeMs(baud: number, bitsPerByte = BITS_PER_BYTE_8N1): number {
  return (bitsPerByte / baud) * 1000;
}

/** Most bytes the line can carry per second. */
export function lineBytesPerSecond(baud: number, bitsPerByte = BITS_PER_BYTE_8N1): number {
  return baud / bitsPerByte;
}

/**
 * Silence a station keeps between the end of one frame on the bus and the start of the next
 * (3.5 character times, fixed at 1.750 ms above 19,200 baud). COBS frames do not need silence to
 * be found; the silence is there for RS-485 turnaround: the station that just sent must release
 * the line before another drives it.
 */
export function interFrameSilenceMs(baud: number, bitsPerByte = BITS_PER_BYTE_8N1): number {
  if (baud > FIXED_SILENCE_ABOVE_BAUD) return FIXED_SILENCE_MS;
  return 3.5 * characterTimeMs(baud, bitsPerByte);
}

/** Time a frame occupies the line, delimiters included (pass the length encodeLinkFrame returned). */
export function frameAirTimeMs(wireBytes: number, baud: number, bitsPerByte = BITS_PER_BYTE_8N1): number {
  return wireBytes * characterTimeMs(baud, bitsPerByte);
}

/**
 * One turn on a polled bus: the bench's frame, silence, the device's answer, silence.
 * `deviceLatencyMs` is how long the device takes to start answering beyond the silence.
 */
export function pollCycleMs(options: {
  benchWireBytes: number;
  deviceWireBytes: number;
  baud: number;
  bitsPerByte?: number;
  deviceLatencyMs?: number;
}): number {
  const bits = options.bitsPerByte ?? BITS_PER_BYTE_8N1;
  const silence = interFrameSilenceMs(options.baud, bits);
  return (
    frameAirTimeMs(options.benchWireBytes, options.baud, bits) +
    silence +
    (options.deviceLatencyMs ?? 0) +
    frameAirTimeMs(options.deviceWireBytes, options.baud, bits) +
    silence
  );
}

/**
 * Whether a device at `deviceAddress` acts on a frame it heard: only frames the bench sent, to
 * its own address or to everyone. Address 0 is for a link with one device, which acts on it
 * whatever address it was given.
 */
export function deviceAcceptsFrame(frame: LinkFrame, deviceAddress: number): boolean {
  if (linkMessageSender(frame.message) !== "bench") return false;
  return frame.address === deviceAddress || frame.address === LINK_ADDRESS_BROADCAST || frame.address === LINK_ADDRESS_DIRECT;
}

/** A device never answers a broadcast: every device would answer at once. */
export function deviceMayAnswer(frame: LinkFrame): boolean {
  return frame.address !== LINK_ADDRESS_BROADCAST;
}

/** Frames lost between two sequence numbers from the same sender (sequence wraps 255 to 0). */
export function framesMissedBetween(previousSequence: number, sequence: number): number {
  return (sequence - previousSequence - 1) & 0xff;
}
