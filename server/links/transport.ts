/**
 * Encoding options for frames the server sends: cut from Node's shared buffer pool rather than
 * each a memory block of its own for the collector to sweep (a run sends one per panel per frame).
 */
export const FROM_NODE_POOL = { allocate: (length: number) => Buffer.allocUnsafe(length) };

/** Bytes in and out of one physical or virtual line: a serial port, a pty, a socket, memory. */
export interface ByteTransport {
  write(bytes: Uint8Array): Promise<void>;
  onData(listener: (chunk: Uint8Array) => void): void;
  close(): Promise<void>;
}

/** Two transports wired back to back, for unit tests of the link layer without a port. */
export function memoryPair(): [ByteTransport, ByteTransport] {
  const listeners: [((c: Uint8Array) => void)[], ((c: Uint8Array) => void)[]] = [[], []];
  const make = (self: 0 | 1): ByteTransport => ({
    async write(bytes) {
      const copy = bytes.slice();
      queueMicrotask(() => listeners[1 - self].forEach((l) => l(copy)));
    },
    onData(listener) {
      listeners[self].push(listener);
    },
    async close() {
      listeners[self].length = 0;
    },
  });
  return [make(0), make(1)];
}
