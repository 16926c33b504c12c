const utf8 = new TextEncoder();

/** Length of `text` on the wire: the link counts text limits in UTF-8 bytes, not characters. */
export function utf8Length(text: string): number {
  return utf8.encode(text).length;
}
