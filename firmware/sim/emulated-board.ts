import { execFileSync, spawn, type ChildProcess } from "node:child_process";
import { existsSync } from "node:fs";
import path from "node:path";
import { createInterface } from "node:readline";
import { fileURLToPath } from "node:url";
import { encodeLinkFrame } from "../../shared/link/codec";
import type { LinkFrame, LinkMessage, SeenEntry } from "../../shared/link/messages";
import { LinkStreamDecoder, type LinkStreamEvent } from "../../shared/link/stream";
import { openSerialTransport } from "../../server/links/serial-transport";
import type { ByteTransport } from "../../server/links/transport";

/**
 * The bench-panel firmware on an emulated ATmega2560 (firmware/sim/panel-sim.c), reached over a
 * pseudo-terminal with the bench's own serial transport and link codec: the same path a real
 * board on a USB cable takes. Used by tests/integration/firmware-avr.test.ts and
 * bench/firmware.bench.ts.
 */

export const FIRMWARE_DIR = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
export type FirmwareVariant = "panel" | "fault" | "wide";

const DEBIAN_PACKAGES = "gcc-avr avr-libc arduino-core-avr simavr libsimavr-dev libsimavrparts1 libelf-dev";

/** Throws with what to install when the AVR tool chain or simavr is missing, never skips. */
export function requireAvrTools(): void {
  const missing: string[] = [];
  for (const tool of ["avr-gcc", "avr-g++", "avr-size", "make", "cc"]) {
    try {
      execFileSync("sh", ["-c", `command -v ${tool}`], { stdio: "ignore" });
    } catch {
      missing.push(tool);
    }
  }
  if (!existsSync("/usr/share/arduino/hardware/arduino/avr/cores/arduino/Arduino.h")) missing.push("arduino-core-avr");
  if (!existsSync("/usr/include/simavr/sim_avr.h")) missing.push("libsimavr-dev");
  if (missing.length) {
    throw new Error(
      `AVR tools missing (${missing.join(", ")}). npm test installs them when run as root; otherwise: sudo apt-get install ${DEBIAN_PACKAGES}`,
    );
  }
}

/** Builds the example's variants and the harness (make -j2: the machine is shared). */
export function buildFirmware(): void {
  requireAvrTools();
  execFileSync("make", ["-C", FIRMWARE_DIR, "-j2", "avr", "sim"], { stdio: "pipe", timeout: 600_000 });
}

export interface HarnessState {
  ms: number;
  /** Bits 0..2: GEAR UNSAFE, FUEL LOW, MASTER CAUTION as their pins drive them. */
  lamps: number;
  trip: number;
  /** Needle position from counted step pulses, against a mechanical stop at 0. */
  steps: number;
  rises: number;
  /** The eight digits as the MAX7219 holds them. */
  readout: string;
  /** How far emulated time is behind the wall clock now (0: keeping up), and the most it ever was. */
  behindMs: number;
  worstBehindMs: number;
}

/** Every emulated cycle since power-up by where the CPU spent it (panel-sim's `cpu` answer). */
export interface CpuAccount {
  cycles: number;
  /** The main program outside the library's marked sections: the loop going round, the panel's own ticks. */
  idle: number;
  receive: number;
  frame: number;
  follow: number;
  encode: number;
  write: number;
  scan: number;
  other: number;
  isr_uart_rx: number;
  isr_uart_udre: number;
  isr_uart_tx: number;
  isr_timer0: number;
  isr_timer1: number;
  isr_other: number;
}

export interface ArrivedFrame {
  frame: LinkFrame;
  at: number;
}

export class EmulatedBoard {
  readonly frames: ArrivedFrame[] = [];
  readonly faults: LinkStreamEvent[] = [];
  readonly cycleLines: { at: number; type: number; receive: number; frame: number; follow: number; encode: number; write: number }[] = [];
  /** Latest seen entry per element, from every seen report so far (reports carry changes). */
  readonly seen = new Map<number, SeenEntry>();
  private sequence = 0;
  private stateWaiters: ((line: string) => void)[] = [];
  private cpuWaiters: ((line: string) => void)[] = [];
  private waiters: (() => void)[] = [];

  private constructor(
    private readonly child: ChildProcess,
    private readonly link: ByteTransport | null,
    readonly ptyPath: string,
    private readonly countsCycles: boolean,
  ) {}

  /** Our own serial link to the board; absent when the bench holds the port (`ownLink: false`). */
  get transport(): ByteTransport {
    if (!this.link) throw new Error("this board's port belongs to the bench (started with ownLink: false)");
    return this.link;
  }

  /**
   * Starts the emulated board. By default it opens the pty itself (frames, seen, send); with
   * `ownLink: false` it leaves the pty to someone else, such as the bench in a serial run, and
   * powers up at once: only the pins (`state`, `setPin`) and the cycle counter (`cpu`) are ours.
   */
  static async start(variant: FirmwareVariant, options: { cycles?: boolean; ownLink?: boolean } = {}): Promise<EmulatedBoard> {
    const elf = path.join(FIRMWARE_DIR, "build/avr", variant, "bench-panel.elf");
    const sim = path.join(FIRMWARE_DIR, "build/sim/panel-sim");
    const child = spawn(sim, ["--hold", ...(options.cycles ? ["--cycles"] : []), elf], { stdio: ["pipe", "pipe", "inherit"] });
    const lines = createInterface({ input: child.stdout! });
    let board: EmulatedBoard | undefined;
    const ptyPath = await new Promise<string>((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error("panel-sim printed no pty within 5 s")), 5000);
      child.once("error", (err) => reject(new Error(`panel-sim did not start: ${err.message}`)));
      child.once("exit", (code) => reject(new Error(`panel-sim exited (${code}) before its pty was ready`)));
      lines.on("line", (line) => {
        if (line.startsWith("pty ")) {
          clearTimeout(timer);
          resolve(line.slice(4));
        } else board?.onLine(line);
      });
    });
    if (options.ownLink === false) {
      board = new EmulatedBoard(child, null, ptyPath, Boolean(options.cycles));
      child.stdin!.write("start\n");
      return board;
    }
    const transport = await openSerialTransport(ptyPath, 115_200);
    board = new EmulatedBoard(child, transport, ptyPath, Boolean(options.cycles));
    const decoder = new LinkStreamDecoder({ acceptFrom: "device" });
    transport.onData((chunk) => {
      const at = performance.now();
      for (const event of decoder.push(chunk)) {
        if (event.ok) board!.onFrame(event.frame, at);
        else board!.faults.push(event);
      }
    });
    // Power up only now that the port is open, as plugging in a board's USB cable would.
    child.stdin!.write("start\n");
    return board;
  }

  private onLine(line: string) {
    if (line.startsWith("state ")) {
      const waiter = this.stateWaiters.shift();
      waiter?.(line);
    } else if (line.startsWith("cpu ")) {
      const waiter = this.cpuWaiters.shift();
      waiter?.(line);
    } else if (line.startsWith("cycles ")) {
      const n = (key: string) => Number(new RegExp(`${key}=(\\w+)`).exec(line)?.[1] ?? 0);
      this.cycleLines.push({ at: performance.now(), type: parseInt(/type=(\w+)/.exec(line)?.[1] ?? "0", 16), receive: n("receive"), frame: n("frame"), follow: n("follow"), encode: n("encode"), write: n("write") });
    }
  }

  private onFrame(frame: LinkFrame, at: number) {
    this.frames.push({ frame, at });
    if (frame.message.type === "seen_report") for (const entry of frame.message.seen) this.seen.set(entry.element, entry);
    const waiting = this.waiters.splice(0);
    waiting.forEach((w) => w());
  }

  /** Sends one bench message (address 0, a direct link); returns its sequence number. */
  async send(message: LinkMessage): Promise<number> {
    const sequence = this.sequence;
    this.sequence = (this.sequence + 1) & 0xff;
    await this.transport.write(encodeLinkFrame({ address: 0, sequence, message }));
    return sequence;
  }

  async sendRaw(bytes: Uint8Array): Promise<void> {
    await this.transport.write(bytes);
  }

  /** Resolves with the first frame from `from` on (an index into frames) that matches. */
  async waitFor(match: (frame: LinkFrame) => boolean, options: { from?: number; timeoutMs?: number; what?: string } = {}): Promise<ArrivedFrame> {
    const deadline = performance.now() + (options.timeoutMs ?? 3000);
    let index = options.from ?? 0;
    for (;;) {
      for (; index < this.frames.length; index++) if (match(this.frames[index].frame)) return this.frames[index];
      const left = deadline - performance.now();
      if (left <= 0) throw new Error(`no ${options.what ?? "matching frame"} from the board within ${options.timeoutMs ?? 3000} ms`);
      await new Promise<void>((resolve) => {
        const timer = setTimeout(resolve, left);
        this.waiters.push(() => {
          clearTimeout(timer);
          resolve();
        });
      });
    }
  }

  /** The seen report acknowledging the value update with this sequence. */
  waitForApplied(sequence: number, from = 0, timeoutMs = 3000): Promise<ArrivedFrame> {
    return this.waitFor((f) => f.message.type === "seen_report" && f.message.appliedSequence === sequence, { from, timeoutMs, what: `seen report for update ${sequence}` });
  }

  /** What the harness says the firmware drives right now. */
  async state(): Promise<HarnessState> {
    const line = await new Promise<string>((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error("panel-sim did not answer 'state'")), 3000);
      this.stateWaiters.push((l) => {
        clearTimeout(timer);
        resolve(l);
      });
      this.child.stdin!.write("state\n");
    });
    const n = (key: string) => Number(new RegExp(`${key}=(0x[0-9a-f]+|-?\\d+)`).exec(line)?.[1]);
    return { ms: n("ms"), lamps: n("lamps"), trip: n("trip"), steps: n("steps"), rises: n("rises"), readout: /readout="(.{8})"/.exec(line)?.[1] ?? "", behindMs: n("behind"), worstBehindMs: n("worst") };
  }

  /** Where every emulated cycle since power-up went (exact, from the emulator's cycle counter; needs `cycles: true`). */
  async cpu(): Promise<CpuAccount> {
    if (!this.countsCycles) throw new Error("start the board with { cycles: true } to count where the cycles go");
    const line = await new Promise<string>((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error("panel-sim did not answer 'cpu'")), 3000);
      this.cpuWaiters.push((l) => {
        clearTimeout(timer);
        resolve(l);
      });
      this.child.stdin!.write("cpu\n");
    });
    const account: Record<string, number> = {};
    for (const [, key, value] of line.matchAll(/(\w+)=(\d+)/g)) account[key] = Number(value);
    return account as unknown as CpuAccount;
  }

  /** Drives an input pin as a switch contact would: "C0" low = closed. */
  setPin(pin: string, level: 0 | 1): void {
    this.child.stdin!.write(`set ${pin} ${level}\n`);
  }

  async stop(): Promise<void> {
    await this.link?.close();
    if (this.child.exitCode === null) {
      this.child.stdin!.write("quit\n");
      await Promise.race([new Promise((r) => this.child.once("exit", r)), new Promise((r) => setTimeout(r, 2000))]);
      if (this.child.exitCode === null) this.child.kill("SIGTERM");
    }
  }
}
