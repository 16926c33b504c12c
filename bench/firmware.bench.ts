import { lineBytesPerSecond } from "../shared/link/bus";
import { encodeLinkFrame } from "../shared/link/codec";
import type { ChannelValue, LinkMessage } from "../shared/link/messages";
import { buildFirmware, EmulatedBoard } from "../firmware/sim/emulated-board";
import type { BenchReport, BenchRow } from "./harness";

/**
 * The firmware's own cost on an ATmega2560, from the emulator's exact cycle counter: the library
 * writes a section number into GPIOR0 around its work and the harness sums cycles per section
 * (firmware/src/pp_marks.h, firmware/sim/panel-sim.c). The board is the bench-panel example built
 * with 32 spare lamps: 40 channels, 41 elements.
 *
 * Yardsticks: the 16 MHz clock, and the 115,200 baud line (8N1: 11,520 bytes/s, common practice).
 * Target from issue 7: the board keeps up with the line rate with at least half its CPU left for
 * driving steppers.
 */
const F_CPU = 16_000_000;
const LINE = lineBytesPerSecond(115_200);
const ROUNDS = 20;

/** A delta touching the first `count` channels, each to a new value (lamps toggle, readout counts). */
function deltaFor(count: number, round: number): ChannelValue[] {
  const on = round % 2 === 1;
  const values: ChannelValue[] = [];
  // Channels 8.. are the spare lamps; the first ones go first so small updates change lamps only.
  const order = [...Array.from({ length: 32 }, (_, i) => 8 + i), 0, 1, 2, 3, 4, 5, 6, 7];
  for (const channel of order.slice(0, count)) {
    if (channel === 2) values.push({ channel, kind: "enum", value: on ? 1 : 0 });
    else if (channel === 3) values.push({ channel, kind: "boolean", value: false }); // lamp test stays off
    else if (channel === 4) values.push({ channel, kind: "float", value: 1500 }); // the needle stays put: no stepper noise in the counts
    else if (channel === 5) values.push({ channel, kind: "int", value: 1000 + round });
    else if (channel === 7) values.push({ channel, kind: "int", value: (round * 7) % 256 });
    else values.push({ channel, kind: "boolean", value: on });
  }
  return values;
}

function percentile(sorted: number[], p: number): number {
  const rank = (p / 100) * (sorted.length - 1);
  const low = Math.floor(rank);
  return sorted[low] + (sorted[Math.min(low + 1, sorted.length - 1)] - sorted[low]) * (rank - low);
}

export async function run(): Promise<BenchReport> {
  buildFirmware();
  const rows: BenchRow[] = [];
  const board = await EmulatedBoard.start("wide", { cycles: true });
  try {
    await board.waitFor((f) => f.message.type === "hello", { timeoutMs: 5000, what: "hello" });
    const deadline = performance.now() + 5000;
    while (board.seen.get(3)?.kind !== "pointer_angle" && performance.now() < deadline) await new Promise((r) => setTimeout(r, 20));
    const keyframe = (values: ChannelValue[]): LinkMessage => ({ type: "value_update", keyframeBegin: true, keyframeEnd: true, values });
    let from = board.frames.length;
    await board.waitForApplied(await board.send(keyframe(deltaFor(40, 0))), from);
    await new Promise((r) => setTimeout(r, 200)); // let the first full report and the needle settle

    let perUpdate40 = 0;
    let updateBytes40 = 0;
    let reportBytes40 = 0;
    for (const count of [1, 10, 40]) {
      const decode: number[] = [];
      const encode: number[] = [];
      const total: number[] = [];
      let entries = 0;
      let updateBytes = 0;
      let reportBytes = 0;
      for (let round = 1; round <= ROUNDS; round++) {
        const message: LinkMessage = { type: "value_update", keyframeBegin: false, keyframeEnd: false, values: deltaFor(count, round) };
        updateBytes = encodeLinkFrame({ address: 0, sequence: 0, message }).length;
        const cyclesFrom = board.cycleLines.length;
        from = board.frames.length;
        const sequence = await board.send(message);
        const report = await board.waitForApplied(sequence, from);
        // The harness prints its line as the report's last byte leaves the UART; wait for it.
        const until = performance.now() + 500;
        while (!board.cycleLines.slice(cyclesFrom).some((l) => l.type === 0x82) && performance.now() < until) await new Promise((r) => setTimeout(r, 5));
        const lines = board.cycleLines.slice(cyclesFrom);
        const upToReport = lines.slice(0, lines.findIndex((l) => l.type === 0x82) + 1);
        const sum = (key: "receive" | "frame" | "follow" | "encode" | "write") => upToReport.reduce((s, l) => s + l[key], 0);
        decode.push(sum("receive") + sum("frame"));
        encode.push(sum("encode"));
        total.push(sum("receive") + sum("frame") + sum("follow") + sum("encode") + sum("write"));
        if (report.frame.message.type === "seen_report") entries = report.frame.message.seen.length;
        reportBytes = encodeLinkFrame(report.frame).length;
        await new Promise((r) => setTimeout(r, 30));
      }
      const median = (xs: number[]) => percentile([...xs].sort((a, b) => a - b), 50);
      rows.push({
        metric: `decode a value update of ${count} value${count === 1 ? "" : "s"} (${updateBytes} wire bytes): COBS, CRC, checks, channel table`,
        value: median(decode),
        unit: "cycles",
        note: `median of ${ROUNDS}; ${(median(decode) / updateBytes).toFixed(0)} cycles per wire byte; ${((median(decode) / F_CPU) * 1e6).toFixed(0)} us at 16 MHz`,
      });
      rows.push({
        metric: `encode the seen report answering it (${entries} entries, ${reportBytes} wire bytes)`,
        value: median(encode),
        unit: "cycles",
        note: "includes asking all 41 elements what they show (pins read back) to find what changed, CRC and COBS",
      });
      if (count === 40) {
        perUpdate40 = median(total);
        updateBytes40 = updateBytes;
        reportBytes40 = reportBytes;
        rows.push({
          metric: "whole update for a 40-channel panel: decode, drive outputs, report, hand to the UART",
          value: perUpdate40,
          unit: "cycles",
          note: "not counted: the Arduino core's UART interrupts and the 20 ms change scan",
        });
      }
    }

    // The line is full duplex: updates in and reports out each have 11,520 bytes/s; the busier one limits.
    const lineRate = LINE / Math.max(updateBytes40, reportBytes40);
    const cpuRate = F_CPU / perUpdate40;
    const cpuAtLineRate = (lineRate * perUpdate40) / F_CPU;
    rows.push({ metric: "40-channel updates per second the CPU could take (16 MHz / cycles per update)", value: cpuRate, unit: "updates/s" });
    rows.push({
      metric: "40-channel updates per second the 115,200 baud line carries",
      value: lineRate,
      unit: "updates/s",
      note: `${updateBytes40} bytes in, ${reportBytes40} bytes out per update; 11,520 bytes/s each way (8N1)`,
    });
    rows.push({
      metric: "highest sustained 40-channel update rate (the lower of the two)",
      value: Math.min(cpuRate, lineRate),
      unit: "updates/s",
      note: cpuRate >= lineRate ? "line-bound: the board outpaces its own serial line" : "CPU-bound",
    });
    rows.push({
      metric: "CPU used by the link at the line's full rate (marked sections only)",
      value: cpuAtLineRate,
      unit: "fraction",
      target: "<= 0.5 (half the CPU left for steppers)",
      met: cpuAtLineRate <= 0.5,
    });
    // The Arduino core's UART interrupts run outside the marked sections. Estimate, not measured:
    // avr-objdump of the example shows 63 instructions for a received byte (vector and handler)
    // and about 66 for a sent one; at roughly 1.4 cycles per AVR instruction, about 90 cycles a byte
    // each way.
    const uartCyclesPerByte = 90;
    const withUart = cpuAtLineRate + (lineRate * (updateBytes40 + reportBytes40) * uartCyclesPerByte) / F_CPU;
    rows.push({
      metric: "CPU used at the line's full rate, with the UART interrupts (estimated 90 cycles a byte each way)",
      value: withUart,
      unit: "fraction",
      target: "<= 0.5 (half the CPU left for steppers)",
      met: withUart <= 0.5,
      note: "estimate from the disassembly's instruction count, not the cycle counter",
    });

    // Round trip over the pty: a one-value update leaving the bench to the seen report of its effect.
    const latencies: number[] = [];
    for (let round = 0; round < 300; round++) {
      const message: LinkMessage = { type: "value_update", keyframeBegin: false, keyframeEnd: false, values: deltaFor(1, round) };
      from = board.frames.length;
      const sent = performance.now();
      const sequence = await board.send(message);
      const report = await board.waitForApplied(sequence, from);
      latencies.push(report.at - sent);
      await new Promise((r) => setTimeout(r, 10));
    }
    latencies.sort((a, b) => a - b);
    const oneWire = encodeLinkFrame({ address: 0, sequence: 0, message: { type: "value_update", keyframeBegin: false, keyframeEnd: false, values: deltaFor(1, 1) } }).length;
    rows.push({
      metric: "round trip: 1-value update sent -> its seen report back (p50)",
      value: percentile(latencies, 50),
      unit: "ms",
      note: `300 rounds over a pty into the emulated UART; line time alone is about ${(((oneWire + 12) * 11) / 115.2).toFixed(2)} ms (simavr sends 11 bits per byte)`,
    });
    rows.push({ metric: "round trip p99", value: percentile(latencies, 99), unit: "ms" });
    const state = await board.state();
    rows.push({ metric: "emulator behind the wall clock at the end", value: state.behindMs, unit: "ms", note: "0 means emulated time kept up" });
  } finally {
    await board.stop();
  }
  return { topic: "firmware", rows };
}
