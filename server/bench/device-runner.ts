import WebSocket from "ws";
import { openSerialTransport } from "../links/serial-transport";
import type { PanelEmulator } from "./device-emulator";

/**
 * Puts panel emulators on a line: a WebSocket to the bench (virtual or network link) or a
 * serial port (a direct link with one emulator, or an RS-485 bus with several at their
 * addresses). Disconnect faults close the socket (or fall silent on a port) for their window.
 */
export interface EmulatorHost {
  /** Resolves when the bench ends the link (the run finished) or close() is called. */
  done: Promise<{ code: number; reason: string }>;
  close(): Promise<void>;
}

const TICK_MS = 20;

export function hostOnWebSocket(emulator: PanelEmulator, url: string, headers: Record<string, string> = {}): Promise<EmulatorHost> {
  let ws: WebSocket | null = null;
  let stopped = false;
  let finish!: (v: { code: number; reason: string }) => void;
  const done = new Promise<{ code: number; reason: string }>((resolve) => (finish = resolve));
  let pausedByFault = false;

  const connect = () =>
    new Promise<void>((resolve, reject) => {
      const socket = new WebSocket(url, { headers });
      ws = socket;
      socket.binaryType = "nodebuffer";
      socket.on("open", () => {
        for (const bytes of emulator.powerUp()) socket.send(bytes);
        resolve();
      });
      socket.on("message", (data, isBinary) => {
        if (!isBinary || emulator.disconnectedNow()) return;
        const b = data as Buffer;
        for (const out of emulator.receiveBytes(new Uint8Array(b.buffer, b.byteOffset, b.length))) if (socket.readyState === socket.OPEN) socket.send(out);
      });
      socket.on("close", (code, reason) => {
        if (ws === socket) ws = null;
        if (!pausedByFault && !stopped) {
          stopped = true;
          clearInterval(timer);
          finish({ code, reason: reason.toString() });
        }
      });
      socket.on("error", (error) => reject(error));
    });

  const timer = setInterval(() => {
    if (stopped) return;
    const down = emulator.disconnectedNow();
    if (down && ws && !pausedByFault) {
      pausedByFault = true;
      ws.terminate();
      ws = null;
    } else if (!down && pausedByFault && !ws) {
      void connect()
        .then(() => (pausedByFault = false))
        .catch(() => undefined);
    }
    if (down || !ws || ws.readyState !== ws.OPEN) return;
    for (const bytes of emulator.takeOutgoing()) ws.send(bytes);
    const periodic = emulator.periodic();
    if (periodic) ws.send(periodic);
  }, TICK_MS);

  return connect().then(() => ({
    done,
    async close() {
      stopped = true;
      clearInterval(timer);
      ws?.close(1000, "emulator stopped");
      finish({ code: 1000, reason: "emulator stopped" });
    },
  }));
}

/** One emulator on a direct serial link, or several at their bus addresses on one RS-485 port. */
export async function hostOnSerial(emulators: PanelEmulator[], path: string, baud = 115_200): Promise<EmulatorHost> {
  const transport = await openSerialTransport(path, baud);
  let finish!: (v: { code: number; reason: string }) => void;
  const done = new Promise<{ code: number; reason: string }>((resolve) => (finish = resolve));
  transport.onData((chunk) => {
    for (const e of emulators) {
      if (e.disconnectedNow()) continue; // unplugged: hears nothing, says nothing
      for (const out of e.receiveBytes(chunk)) void transport.write(out);
    }
  });
  // A direct-link board says hello at power-up (the bench may not be listening yet: it identifies).
  for (const e of emulators) for (const bytes of e.powerUp()) await transport.write(bytes);
  const timer = setInterval(() => {
    if (emulators.length !== 1) return; // on a bus, devices speak only when polled
    const e = emulators[0];
    if (e.disconnectedNow()) return;
    for (const bytes of e.takeOutgoing()) void transport.write(bytes);
    const periodic = e.periodic();
    if (periodic) void transport.write(periodic);
  }, TICK_MS);
  return {
    done,
    async close() {
      clearInterval(timer);
      await transport.close();
      finish({ code: 1000, reason: "emulator stopped" });
    },
  };
}
