import { lineBytesPerSecond } from "../shared/link/bus";
import { encodeLinkFrame } from "../shared/link/codec";
import type { ChannelValue, LinkMessage } from "../shared/link/messages";
import { buildFirmware, EmulatedBoard, type CpuAccount } from "../firmware/sim/emulated-board";
import type { BenchReport, BenchRow } from "./harness";

/**
 * The firmware's own cost on an ATmega2560, from the emulator's exact cycle counter: the library
 * writes a section number into GPIOR0 around its work and the harness sums cycles per section
 * (firmware/src/pp_marks.h, firmware/sim/panel-sim.c); interrupts are counted apart, from the
 * CPU arriving at their vector to their RETI, so the UART interrupts (the sketch's own, or the core's with Serial) are measured
 * too. The board is the bench-panel example built with 31 spare lamps: 40 elements, 42 channels.
 *
 * Yardsticks: the 16 MHz clock, and the 115,200 baud line (8N1: 11,520 bytes/s, common practice).
 * Target from issue 7: the board keeps up with the line rate with at least half its CPU left for
 * driving steppers. Only the round trip is wall time (it includes the pty and the bench's process).
 */
const F_CPU = 16_000_000;
const LINE = lineBytesPerSecond(115_200);
const ROUNDS = 20;
/** Updates in the saturating burst: about three seconds of the line. */
const BURST = 160;
const SPARE_FIRST = 11;
const SPARES = 31;
const CHANNELS = SPARE_FIRST + SPARES;

/**
 * A delta touching `count` channels, each to a new value: the spare lamps first (so small updates
 * change lamps only), then the example's own channels. The needle's channel keeps its value, so
 * the stepper's interrupt stays idle and the counts are the link's.
 */
function deltaFor(count: number, round: number): ChannelValue[] {
  const on = round % 2 === 1;
  const values: ChannelValue[] = [];
  const order = [...Array.from({ length: SPARES }, (_, i) => SPARE_FIRST + i), ...Array.from({ length: SPARE_FIRST }, (_, i) => i)];
  for (const channel of order.slice(0, count)) {
    if (channel === 1) values.push({ channel, kind: "boolean", value: false }); // lamp test stays off
    else if (channel === 3) values.push({ channel, kind: "enum", value: on ? 1 : 0 }); // master caution steady / off
    else if (channel === 4) values.push({ channel, kind: "float", value: 1500 }); // the needle stays put
    else if (channel === 5) values.push({ channel, kind: "int", value: 1000 + round }); // the readout counts
    else if (channel === 7) values.push({ channel, kind: "enum", value: round % 3 });
    else if (channel === 8 || channel === 9) values.push({ channel, kind: "boolean", value: false }); // the breaker stays in
    else if (channel === 10) values.push({ channel, kind: "int", value: (round * 7) % 101 }); // dimmer %
    else values.push({ channel, kind: "boolean", value: on });
  }
  return values;
}

/**
 * A typical update of a 40-element panel in flight (issue 5's serial target): the needle moving,
 * the readout counting, the dimmer, and five of the spare lamps changing (a different five each
 * time): 8 values, a fifth of the panel.
 */
function typicalDelta(round: number): ChannelValue[] {
  const values: ChannelValue[] = [
    { channel: 4, kind: "float", value: Math.round(1500 + 400 * Math.sin(round / 30)) },
    { channel: 5, kind: "int", value: 1000 + round },
    { channel: 10, kind: "int", value: 40 + (round % 20) },
  ];
  for (let k = 0; k < 5; k++) {
    const lamp = (round * 5 + k) % SPARES;
    values.push({ channel: SPARE_FIRST + lamp, kind: "boolean", value: Math.floor((round * 5 + k) / SPARES) % 2 === 0 });
  }
  return values;
}

const LINK_SECTIONS = ["receive", "frame", "follow", "encode", "write", "scan"] as const;
const UART_INTERRUPTS = ["isr_uart_rx", "isr_uart_udre", "isr_uart_tx"] as const;

function minus(after: CpuAccount, before: CpuAccount): CpuAccount {
  const out = {} as Record<string, number>;
  for (const key of Object.keys(after) as (keyof CpuAccount)[]) out[key] = after[key] - (before[key] ?? 0);
  return out as unknown as CpuAccount;
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
        note: `median of ${ROUNDS}; ${(median(decode) / updateBytes).toFixed(0)} cycles per wire byte; ${((median(decode) / F_CPU) * 1e6).toFixed(0)} us at 16 MHz; interrupts not included (counted below)`,
      });
      rows.push({
        metric: `encode the seen report answering it (${entries} entries, ${reportBytes} wire bytes)`,
        value: median(encode),
        unit: "cycles",
        note: "includes asking all 40 elements what they show (pins read back from the port registers) to find what changed, CRC and COBS",
      });
      if (count === 40) {
        updateBytes40 = updateBytes;
        reportBytes40 = reportBytes;
        rows.push({
          metric: "one 40-value update in the main program: decode, drive outputs, report, hand to the UART",
          value: median(total),
          unit: "cycles",
          note: "one at a time, 30 ms apart; the UART interrupts and the 20 ms change scan are in the burst below",
        });
      }
    }

    // The burst: 40-value updates back to back, as fast as the line takes them, for about three
    // seconds. The bench's serial transport paces its writes and the harness feeds the UART only
    // as its receiver takes bytes, so the line is full for the whole burst. Every cycle of the
    // window is accounted for by the harness: marked sections, each interrupt, the rest.
    const heartbeat = async () => {
      const at = board.frames.length;
      await board.send({ type: "poll" });
      const beat = await board.waitFor((f) => f.message.type === "heartbeat", { from: at, what: "heartbeat" });
      if (beat.frame.message.type !== "heartbeat") throw new Error("not a heartbeat");
      return beat.frame.message;
    };
    const beatBefore = await heartbeat();
    const burst: Uint8Array[] = [];
    for (let round = 1; round <= BURST; round++) {
      const message: LinkMessage = { type: "value_update", keyframeBegin: false, keyframeEnd: false, values: deltaFor(40, round) };
      burst.push(encodeLinkFrame({ address: 0, sequence: 0, message })); // for its wire bytes only: send() numbers the frames
    }
    const cpuBefore = await board.cpu();
    from = board.frames.length;
    const sends: Promise<number>[] = [];
    for (let round = 1; round <= BURST; round++) {
      sends.push(board.send({ type: "value_update", keyframeBegin: false, keyframeEnd: false, values: deltaFor(40, round) }));
    }
    const lastSequence = (await Promise.all(sends)).at(-1)!;
    await board.waitForApplied(lastSequence, from, 20_000);
    const cpuAfter = await board.cpu();
    const beatAfter = await heartbeat();
    const lost = ["badCrc", "truncated", "oversized", "rejected", "dropped"].reduce(
      (sum, key) => sum + Number((beatAfter as Record<string, unknown>)[key] ?? 0) - Number((beatBefore as Record<string, unknown>)[key] ?? 0),
      0,
    );
    const window = minus(cpuAfter, cpuBefore);
    const seconds = window.cycles / F_CPU;
    const burstBytes = burst.reduce((s, b) => s + b.length, 0);
    const linkCycles = LINK_SECTIONS.reduce((s, k) => s + window[k], 0) + UART_INTERRUPTS.reduce((s, k) => s + window[k], 0);
    const uartCycles = UART_INTERRUPTS.reduce((s, k) => s + window[k], 0);
    const housekeeping = window.isr_timer0 + window.isr_other + window.other;
    const leftForSteppers = (window.idle + window.isr_timer1) / window.cycles;
    const sustained = BURST / seconds;
    const ceiling = LINE / updateBytes40;
    const cpuCould = F_CPU / (linkCycles / BURST);
    rows.push({
      metric: `40-value updates per second sustained in a ${BURST}-update burst at the full line (emulated time)`,
      value: sustained,
      unit: "updates/s",
      baseline: ceiling,
      ratio: sustained / ceiling,
      target: "keeps up with the line: every update applied, nothing lost",
      met: lost === 0,
      note: `ceiling: 115,200 baud 8N1 carries ${ceiling.toFixed(1)} updates/s of ${updateBytes40} bytes; the emulated line moved ${(burstBytes / seconds).toFixed(0)} bytes/s (simavr times 11 bits a byte at the UART's real divisor); ${lost} frames lost or refused; answers ${reportBytes40} bytes, merged while the line is busy. A lower bound when the emulator fell behind: catching up, it runs faster than real time and the bench's paced writes no longer fill the line; the cycles per update below do not depend on it`,
    });
    rows.push({
      metric: "40-value updates per second the CPU could take (16 MHz / link cycles per update in the burst, interrupts included)",
      value: cpuCould,
      unit: "updates/s",
      baseline: ceiling,
      ratio: cpuCould / ceiling,
      note: cpuCould >= ceiling ? "line-bound: the board outpaces its own serial line" : "CPU-bound",
    });
    const burstShare = linkCycles / window.cycles;
    rows.push({
      metric: "CPU used by the link during the burst: marked sections and UART interrupts, measured",
      value: burstShare,
      unit: "fraction",
      note: `of ${window.cycles.toLocaleString("en")} cycles (${seconds.toFixed(2)} s): receive ${(window.receive / window.cycles).toFixed(3)}, frame ${(window.frame / window.cycles).toFixed(3)}, follow ${(window.follow / window.cycles).toFixed(3)}, encode ${(window.encode / window.cycles).toFixed(3)}, write ${(window.write / window.cycles).toFixed(3)}, scan ${(window.scan / window.cycles).toFixed(3)}, UART interrupts ${(uartCycles / window.cycles).toFixed(3)} (${(uartCycles / burstBytes).toFixed(0)} cycles per received byte, sending included); the emulated line is about 10 % slower than 8N1`,
    });
    // At the real line's rate: the same cycles per update, 65 updates a second.
    const atLine = ((linkCycles / BURST) * ceiling) / F_CPU;
    const housekeepingShare = housekeeping / window.cycles;
    rows.push({
      metric: "CPU used by the link at the 115,200 baud line rate (8N1 update rate x measured cycles per update)",
      value: atLine,
      unit: "fraction",
      target: "<= 0.5 (half the CPU left for steppers)",
      met: atLine <= 0.5,
      note: `${Math.round(linkCycles / BURST).toLocaleString("en")} cycles per 40-value update, UART interrupts included; before the sketch drove UART0 itself and the library used a CRC table, direct port reads and one pass over a checked payload it was about 154,000 (0.63)`,
    });
    rows.push({
      metric: "CPU left for steppers at the line rate",
      value: 1 - atLine - housekeepingShare,
      unit: "fraction",
      target: ">= 0.5",
      met: 1 - atLine - housekeepingShare >= 0.5,
      note: `1 - link - the core's timer tick and other interrupts (${housekeepingShare.toFixed(3)}); in the burst itself, on the slower emulated line, ${leftForSteppers.toFixed(3)} was left (the loop's spare turns and the stepper interrupt)`,
    });

    const counted = await board.state();
    rows.push({ metric: "most the counting emulator fell behind the wall clock", value: counted.worstBehindMs, unit: "ms", note: "cycle figures are exact whether or not it kept up" });
  } finally {
    await board.stop();
  }

  // Round trip over the pty, wall time: a one-value update leaving the bench to the seen report
  // of its effect. On a board started without cycle counting, which runs as a test's board does.
  const plain = await EmulatedBoard.start("wide");
  try {
    await plain.waitFor((f) => f.message.type === "hello", { timeoutMs: 5000, what: "hello" });
    const homed = performance.now() + 5000;
    while (plain.seen.get(3)?.kind !== "pointer_angle" && performance.now() < homed) await new Promise((r) => setTimeout(r, 20));
    const start = plain.frames.length;
    await plain.waitForApplied(await plain.send({ type: "value_update", keyframeBegin: true, keyframeEnd: true, values: deltaFor(40, 0) }), start);
    const latencies: number[] = [];
    for (let round = 0; round < 300; round++) {
      const message: LinkMessage = { type: "value_update", keyframeBegin: false, keyframeEnd: false, values: deltaFor(1, round) };
      const from = plain.frames.length;
      const sent = performance.now();
      const sequence = await plain.send(message);
      const report = await plain.waitForApplied(sequence, from);
      latencies.push(report.at - sent);
      await new Promise((r) => setTimeout(r, 10));
    }
    latencies.sort((a, b) => a - b);
    const oneWire = encodeLinkFrame({ address: 0, sequence: 0, message: { type: "value_update", keyframeBegin: false, keyframeEnd: false, values: deltaFor(1, 1) } }).length;
    const state = await plain.state();
    rows.push({
      metric: "round trip: 1-value update sent -> its seen report back (p50)",
      value: percentile(latencies, 50),
      unit: "ms",
      note: `300 rounds over a pty into the emulated UART; line time alone is about ${(((oneWire + 12) * 11) / 115.2).toFixed(2)} ms (simavr sends 11 bits per byte)`,
    });
    rows.push({ metric: "round trip p99", value: percentile(latencies, 99), unit: "ms" });
    rows.push({
      metric: "most the emulator fell behind the wall clock during the round trips",
      value: state.worstBehindMs,
      unit: "ms",
      note: "0 means emulated time kept up; when it did not, the round trip says more about the machine's load than the board",
    });

    // Issue 5: a serial link at 115,200 baud sustaining 60 updates a second for a 40-element panel
    // with typical changes. Paced at 60 Hz for five seconds, as the player sends them; every update
    // must be applied (its own seen report back), none refused or lost, none left behind.
    const heartbeatCounts = async () => {
      const at = plain.frames.length;
      await plain.send({ type: "poll" });
      const beat = (await plain.waitFor((f) => f.message.type === "heartbeat", { from: at, what: "heartbeat" })).frame.message as unknown as Record<string, unknown>;
      return ["badCrc", "truncated", "oversized", "rejected", "dropped"].reduce((sum, key) => sum + Number(beat[key] ?? 0), 0);
    };
    const PACED_HZ = 60;
    const PACED = 300;
    const lostBefore = await heartbeatCounts();
    const pacedFrom = plain.frames.length;
    const sentAt: number[] = [];
    const sequences: number[] = [];
    const pacedStart = performance.now();
    for (let round = 1; round <= PACED; round++) {
      const wait = pacedStart + ((round - 1) * 1000) / PACED_HZ - performance.now();
      if (wait > 0) await new Promise((r) => setTimeout(r, wait));
      sentAt.push(performance.now());
      sequences.push(await plain.send({ type: "value_update", keyframeBegin: false, keyframeEnd: false, values: typicalDelta(round) }));
    }
    await plain.waitForApplied(sequences.at(-1)!, pacedFrom, 5000).catch(() => null);
    const lost = (await heartbeatCounts()) - lostBefore;
    // Each update's own report, in order (sequence numbers wrap at 256).
    const answeredAfter: number[] = [];
    let scan = pacedFrom;
    for (let i = 0; i < PACED; i++) {
      let found = -1;
      for (let k = scan; k < plain.frames.length; k++) {
        const m = plain.frames[k].frame.message;
        if (m.type === "seen_report" && m.appliedSequence === sequences[i]) {
          found = k;
          break;
        }
      }
      if (found < 0) continue;
      answeredAfter.push(plain.frames[found].at - sentAt[i]);
      scan = found + 1;
    }
    const lastAnswer = plain.frames[scan - 1]?.at ?? performance.now();
    const sustainedRate = answeredAfter.length / ((lastAnswer - pacedStart) / 1000);
    answeredAfter.sort((a, b) => a - b);
    const typicalBytes = encodeLinkFrame({ address: 0, sequence: 0, message: { type: "value_update", keyframeBegin: false, keyframeEnd: false, values: typicalDelta(1) } }).length;
    const pacedState = await plain.state();
    const keptUp = answeredAfter.length === PACED && lost === 0 && percentile(answeredAfter, 99) < 3 * (1000 / PACED_HZ);
    rows.push({
      metric: `typical 40-element updates (8 values, ${typicalBytes} wire bytes) at ${PACED_HZ}/s over the emulated 115,200 baud line, ${PACED / PACED_HZ} s`,
      value: sustainedRate,
      unit: "updates/s",
      baseline: PACED_HZ,
      ratio: sustainedRate / PACED_HZ,
      target: `sustains ${PACED_HZ} updates/s: every update applied, none lost, each answered within 3 update periods (p99)`,
      met: keptUp,
      note: `${answeredAfter.length} of ${PACED} applied with their own report, ${lost} lost or refused; send to its report p50 ${percentile(answeredAfter, 50).toFixed(1)} ms, p99 ${percentile(answeredAfter, 99).toFixed(1)} ms, max ${answeredAfter.at(-1)?.toFixed(1)} ms (wall time, pty included); the line is ${((typicalBytes * PACED_HZ * 100) / LINE).toFixed(0)} % busy with updates; the emulator fell behind the wall clock by at most ${pacedState.worstBehindMs} ms`,
    });
  } finally {
    await plain.stop();
  }
  return { topic: "firmware", rows };
}
