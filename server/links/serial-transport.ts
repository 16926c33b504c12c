import { SerialPort } from "serialport";
import type { ByteTransport } from "./transport";

/**
 * A serial port as a byte transport. Writes are paced: at most `maxInFlight` bytes are
 * handed to the port before it drains, because very large bursts can stall the binding's
 * writes while the echo is read (seen with bindings-cpp 13 on a pty; RECIPES.md).
 */
export async function openSerialTransport(path: string, baudRate: number, maxInFlight = 2048): Promise<ByteTransport> {
  const port = new SerialPort({ path, baudRate, autoOpen: false });
  await new Promise<void>((resolve, reject) => port.open((err) => (err ? reject(new Error(`cannot open ${path}: ${err.message}`)) : resolve())));
  let writing: Promise<void> = Promise.resolve();
  return {
    write(bytes) {
      // Chain writes so frames never interleave, and pace each chunk until the port drains.
      writing = writing.then(async () => {
        for (let at = 0; at < bytes.length; at += maxInFlight) {
          const chunk = bytes.subarray(at, at + maxInFlight);
          await new Promise<void>((resolve, reject) => port.write(Buffer.from(chunk), (err) => (err ? reject(err) : resolve())));
          await new Promise<void>((resolve, reject) => port.drain((err) => (err ? reject(err) : resolve())));
        }
      });
      return writing;
    },
    onData(listener) {
      port.on("data", (chunk: Buffer) => listener(new Uint8Array(chunk.buffer, chunk.byteOffset, chunk.length)));
    },
    close() {
      return new Promise<void>((resolve) => (port.isOpen ? port.close(() => resolve()) : resolve()));
    },
  };
}

/** Ports the machine offers, for the link form. A pty pair made by socat is not listed; type its path. */
export async function listSerialPorts() {
  const ports = await SerialPort.list();
  return ports.map((p) => ({ path: p.path, manufacturer: p.manufacturer ?? null, serialNumber: p.serialNumber ?? null, vendorId: p.vendorId ?? null, productId: p.productId ?? null }));
}
