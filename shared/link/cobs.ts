/**
 * Consistent Overhead Byte Stuffing (Cheshire and Baker, "Consistent Overhead Byte Stuffing",
 * IEEE/ACM Transactions on Networking 7(2), 1999). The encoded form contains no 0x00, so 0x00
 * can end every frame. Overhead is one byte per 254 bytes, at most: a frame of up to 254 bytes
 * always encodes to exactly one byte more, which lets an 8-bit board size its buffers exactly.
 *
 * Neither function adds or expects the 0x00 delimiter; the link codec does that.
 */

/** Largest encoded length for `length` input bytes. */
export function cobsMaxEncodedLength(length: number): number {
  return length + 1 + Math.floor(length / 254);
}

export function cobsEncode(input: Uint8Array): Uint8Array {
  const output = new Uint8Array(cobsMaxEncodedLength(input.length));
  return output.subarray(0, cobsEncodeInto(input, 0, input.length, output, 0));
}

/**
 * COBS-encodes `input[start, end)` into `output` from `at` (room for cobsMaxEncodedLength is the
 * caller's to give) and returns the encoded length: for encoders that write into a buffer they
 * reuse rather than making one per frame.
 */
export function cobsEncodeInto(input: Uint8Array, start: number, end: number, output: Uint8Array, at: number): number {
  let codeIndex = at;
  let code = 1;
  let write = at + 1;
  for (let read = start; read < end; read++) {
    const byte = input[read];
    if (byte === 0) {
      output[codeIndex] = code;
      codeIndex = write++;
      code = 1;
      continue;
    }
    output[write++] = byte;
    code++;
    // A full block of 254 non-zero bytes closes without an implied zero; a new block starts
    // only if more input follows, so 254 non-zero bytes encode to 255 bytes, not 256.
    if (code === 0xff && read + 1 < end) {
      output[codeIndex] = code;
      codeIndex = write++;
      code = 1;
    }
  }
  output[codeIndex] = code;
  return write - at;
}

export type CobsDecodeResult =
  | { ok: true; bytes: Uint8Array }
  | { ok: false; reason: "zero_byte" | "truncated"; detail: string };

type CobsFailure = Extract<CobsDecodeResult, { ok: false }>;

/** The one decoding loop: the decoded length, or why the input is not COBS (an object only then). */
function decodeBlocks(input: Uint8Array, length: number, output: Uint8Array): number | CobsFailure {
  let write = 0;
  let read = 0;
  while (read < length) {
    const code = input[read];
    if (code === 0) return { ok: false, reason: "zero_byte", detail: `0x00 inside encoded data at byte ${read}` };
    const blockEnd = read + code;
    if (blockEnd > length) {
      return {
        ok: false,
        reason: "truncated",
        detail: `code byte ${code} at byte ${read} needs ${code - 1} more bytes, only ${length - read - 1} left`,
      };
    }
    for (let index = read + 1; index < blockEnd; index++) {
      const byte = input[index];
      if (byte === 0) return { ok: false, reason: "zero_byte", detail: `0x00 inside encoded data at byte ${index}` };
      output[write++] = byte;
    }
    read = blockEnd;
    // Every block except a full one (code 0xff) and the last one stands for a following zero.
    if (code !== 0xff && read < length) output[write++] = 0;
  }
  return write;
}

/**
 * Decodes `input[0, length)` into `output` (at least `length` long) and returns the decoded
 * length, or -1 when the input is not COBS (`cobsDecode` then says why): for a stream decoder
 * that unstuffs every frame into the same buffer.
 */
export function cobsDecodeInto(input: Uint8Array, length: number, output: Uint8Array): number {
  const result = decodeBlocks(input, length, output);
  return typeof result === "number" ? result : -1;
}

/**
 * Decodes one COBS block sequence. Never throws: a 0x00 inside, or a code byte that points past
 * the end (the frame was cut short, or noise hit a code byte), is reported instead.
 */
export function cobsDecode(input: Uint8Array): CobsDecodeResult {
  const output = new Uint8Array(input.length);
  const result = decodeBlocks(input, input.length, output);
  return typeof result === "number" ? { ok: true, bytes: output.subarray(0, result) } : result;
}
