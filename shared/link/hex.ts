/**
 * Hex text for frames in docs, test vectors and logs: two lowercase digits per byte,
 * separated by single spaces ("03 11 22 02 33"), because that is how a builder reads a
 * serial monitor and how the firmware tests will print what they received.
 */
export function bytesToHex(bytes: Uint8Array): string {
  let text = "";
  for (let index = 0; index < bytes.length; index++) {
    if (index > 0) text += " ";
    text += bytes[index].toString(16).padStart(2, "0");
  }
  return text;
}

/**
 * Reads hex written by people: spaces, line breaks and case do not matter.
 * Returns undefined for an odd digit count or a non-hex character rather than guessing.
 */
export function hexToBytes(hex: string): Uint8Array | undefined {
  const digits = hex.replace(/\s+/g, "");
  if (digits.length % 2 !== 0 || !/^[0-9a-fA-F]*$/.test(digits)) return undefined;
  const bytes = new Uint8Array(digits.length / 2);
  for (let index = 0; index < bytes.length; index++) {
    bytes[index] = parseInt(digits.slice(index * 2, index * 2 + 2), 16);
  }
  return bytes;
}
