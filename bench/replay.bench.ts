import type { AddressInfo } from "node:net";
import { PerformanceObserver } from "node:perf_hooks";
import { quantileSorted } from "simple-statistics";
import { WebSocket, WebSocketServer } from "ws";
import { encodeLinkFrame } from "../shared/link/codec";
import type { ChannelValue } from "../shared/link/messages";
import { packValueUpdates } from "../shared/link/pack";
import type { Frame } from "../shared/recording/frames";
import { ArrayFrameSource } from "../shared/replay/frame-source";
import { Player } from "../shared/replay/player";
import { performanceClock } from "../shared/replay/virtual-clock";
import { ReplayScheduler } from "../server/bench/scheduler";
import { RunJudge } from "../shared/compare/judge";
import type { Tolerances } from "../shared/compare/types";
import type { ExpectedTimelines } from "../shared/expect/types";
import { LinkStreamDecoder } from "../shared/link/stream";
import type { BenchReport, BenchRow } from "./harness";

const CHANNELS = 500;
const RATE_HZ = 60;
const LINKS = 20;
// Panels on every link answer each update and the bench judges the answers live (the comparator in the loop).
// Each speed plays this long (15 s: 900 frames at 1x). A p99 over 360 frames (6 s) is the fourth
// worst frame, one pause of this VM away from another figure; over 900 it is the ninth.
const WALL_SECONDS = Number(process.env.BENCH_REPLAY_SECONDS ?? 15);

/** A recording where about a tenth of 500 channels change each 60 Hz frame (a busy cockpit). */
function makeFrames(durationMs: number): Frame[] {
  const frames: Frame[] = [];
  let seed = 12345;
  const rnd = () => ((seed = (seed * 1103515245 + 12345) & 0x7fffffff) / 0x7fffffff);
  for (let i = 0; i * (1000 / RATE_HZ) <= durationMs; i++) {
    const v: Frame["v"] = {};
    for (let c = 0; c < CHANNELS; c++) if (i === 0 || rnd() < 0.1) v[`ch.${c}`] = Math.round(rnd() * 10000) / 10;
    frames.push({ t: Math.round(i * (1000 / RATE_HZ)), v });
  }
  return frames;
}

function toWire(frame: Frame, index: Map<string, number>, sequence: number): Buffer[] {
  const values: ChannelValue[] = [];
  for (const [name, value] of Object.entries(frame.v)) values.push({ channel: index.get(name)!, kind: "float", value: Math.fround(value as number) });
  return packValueUpdates(values, { keyframe: false }).map((message) => Buffer.from(encodeLinkFrame({ address: 0, sequence: sequence & 0xff, message })));
}

/** Elements per emulated panel, and how many of them a panel reports after each update. */
const PANEL_ELEMENTS = 40;
const REPORTED_PER_UPDATE = 8;

/** What every link's panel should show: 40 lamps, lit from the start (the judges' work, not the behaviours'). */
function panelTimelines(): ExpectedTimelines {
  return {
    panelId: "bench",
    startMs: 0,
    endMs: 3_600_000,
    elements: Array.from({ length: PANEL_ELEMENTS }, (_, i) => ({ id: `lamp-${i}`, kind: "lamp" as const, label: `Lamp ${i}`, placeholder: false, tracks: { lamp: [{ t: 0, shows: { state: "on" as const, level: 255 } }] } })),
  };
}

/** A panel's answer to an update: a seen report of a few elements (rotating), pre-encoded as a board would send it. */
function seenReports(): Buffer[] {
  const out: Buffer[] = [];
  for (let k = 0; k < PANEL_ELEMENTS / REPORTED_PER_UPDATE; k++) {
    const seen = Array.from({ length: REPORTED_PER_UPDATE }, (_, j) => ({ element: k * REPORTED_PER_UPDATE + j, kind: "lamp_state" as const, state: "on" as const }));
    out.push(Buffer.from(encodeLinkFrame({ address: 0, sequence: k, message: { type: "seen_report", appliedSequence: null, seen } })));
  }
  return out;
}

/**
 * 20 WebSocket clients on a local server. With `judging`, each client is a panel that answers
 * every update with a seen report, and the bench decodes each answer and feeds a live judge per
 * link, advanced at every frame it sends: the comparator runs in the loop, as in a run.
 */
async function withClients<T>(
  work: (send: (bytes: Buffer) => void, received: () => number, judges: { advance(t: number): void; reports(): number; announced(): number } | null) => Promise<T>,
  judging = false,
  answering = judging,
): Promise<T> {
  const server = new WebSocketServer({ port: 0, host: "127.0.0.1" });
  await new Promise((r) => server.once("listening", r));
  const port = (server.address() as AddressInfo).port;
  let count = 0;
  let reports = 0;
  let benchNow = 0;
  const tol: Tolerances = { degrees: 2, level: 24, period: 0.2, lagBudgetMs: 300 };
  const linkJudges: RunJudge[] = [];
  const announcedOf = new Map<RunJudge, number>();
  let announced = 0;
  if (judging) {
    server.on("connection", (socket) => {
      const judge = new RunJudge(panelTimelines(), () => tol);
      linkJudges.push(judge);
      announcedOf.set(judge, 0);
      const decoder = new LinkStreamDecoder({ acceptFrom: "device" });
      socket.on("message", (data) => {
        const b = data as Buffer;
        for (const event of decoder.push(new Uint8Array(b.buffer, b.byteOffset, b.length))) {
          if (!event.ok || event.frame.message.type !== "seen_report") continue;
          for (const entry of event.frame.message.seen) {
            if (entry.kind !== "lamp_state") continue;
            judge.addSeen(`lamp-${entry.element}`, { t: benchNow, shows: { track: "lamp", lamp: entry.state === "off" ? { state: "off" } : { state: "on", level: 255 } } });
            reports++;
          }
        }
      });
    });
  }
  const answers = seenReports();
  const clients = await Promise.all(
    Array.from({ length: LINKS }, () => new Promise<WebSocket>((resolve) => {
      const ws = new WebSocket(`ws://127.0.0.1:${port}`);
      let next = 0;
      ws.on("message", () => {
        count++;
        if (answering) ws.send(answers[next++ % answers.length]);
      });
      ws.once("open", () => resolve(ws));
    })),
  );
  while (server.clients.size < LINKS) await new Promise((r) => setTimeout(r, 5));
  const send = (bytes: Buffer) => {
    for (const c of server.clients) c.send(bytes);
  };
  const judges = judging
    ? {
        // What a run does after each frame (RunSession.afterTick): advance every link's judge,
        // then read what settled and what is failing for the watchers.
        advance(t: number) {
          benchNow = t;
          for (const j of linkJudges) {
            j.advance(t);
            announced += j.liveMismatches().length - announcedOf.get(j)!;
            announcedOf.set(j, j.liveMismatches().length);
            announced += j.newlyFailing(t).length;
          }
        },
        reports: () => reports,
        announced: () => announced,
      }
    : null;
  try {
    return await work(send, () => count, judges);
  } finally {
    clients.forEach((c) => c.terminate());
    await new Promise((r) => server.close(r));
  }
}

/**
 * Replays `frames` at `speed` on the real scheduler into 20 links and measures each frame's
 * lateness. `bare`: the floor of the same measurement on this machine: the frames' bytes encoded
 * beforehand, the panels not answering, nothing judged; only the scheduler and the sockets.
 */
async function replayAt(speed: number, frames: Frame[], index: Map<string, number>, bare = false) {
  const preEncoded = bare ? frames.map((f, i) => toWire(f, index, i)) : null;
  return withClients(async (send, received, judges) => {
    const lateness: number[] = [];
    // When each frame fell due and went out, and each garbage collection: what makes a frame late.
    const windows: [number, number][] = [];
    const collections: [number, number][] = [];
    const gcWatch = new PerformanceObserver((list) => list.getEntries().forEach((e) => collections.push([e.startTime, e.startTime + e.duration])));
    gcWatch.observe({ entryTypes: ["gc"] });
    let sequence = 0;
    let messages = 0;
    const player = new Player(new ArrayFrameSource(frames), performanceClock, {
      frame(frame, info) {
        const due = performance.now() - info.latenessMs;
        const wire = preEncoded ? preEncoded[sequence++] : toWire(frame, index, sequence++);
        for (const bytes of wire) {
          send(bytes);
          messages++;
        }
        // Lateness as a link sees it: from when the frame fell due to when its bytes were handed to the sockets.
        const sent = performance.now();
        lateness.push(sent - due);
        windows.push([due, sent]);
        judges?.advance(frame.t);
      },
      keyframe() {},
    });
    player.setSpeed(speed);
    const scheduler = new ReplayScheduler(player);
    const cpu0 = process.cpuUsage();
    const t0 = performance.now();
    player.play();
    scheduler.kick();
    while (player.state === "playing") await new Promise((r) => setTimeout(r, 50));
    const wallMs = performance.now() - t0;
    const cpu = process.cpuUsage(cpu0);
    scheduler.stop();
    const expected = messages * LINKS;
    const deadline = performance.now() + 5000;
    while (received() < expected && performance.now() < deadline) await new Promise((r) => setTimeout(r, 10));
    gcWatch.disconnect();
    const late = windows.filter(([due, sent]) => sent - due > 2);
    const lateWithCollection = late.filter(([due, sent]) => collections.some(([from, to]) => from < sent && to > due - 2)).length;
    lateness.sort((a, b) => a - b);
    return {
      late: late.length,
      lateWithCollection,
      collections: collections.length,
      collectionMs: collections.reduce((sum, [from, to]) => sum + to - from, 0),
      p50: quantileSorted(lateness, 0.5),
      p99: quantileSorted(lateness, 0.99),
      max: lateness[lateness.length - 1],
      cpuShare: (cpu.user + cpu.system) / 1000 / wallMs,
      delivered: received() / Math.max(1, expected),
      frames: lateness.length,
      judged: judges?.reports() ?? 0,
      announced: judges?.announced() ?? 0,
    };
  }, !bare);
}

/**
 * The most messages per second this machine pushes to the same 20 sockets, with the bytes
 * pre-encoded; the clients answer as in the replay path, and nobody reads the answers.
 */
async function bareBroadcastRate(wire: Buffer[]) {
  return withClients(async (send, received) => {
    const t0 = performance.now();
    for (const bytes of wire) send(bytes);
    const expected = wire.length * LINKS;
    while (received() < expected) await new Promise((r) => setImmediate(r));
    return wire.length / ((performance.now() - t0) / 1000);
  }, false, true);
}

/**
 * The whole replay path (player, coalescing, link encoding, sockets, panels answering, live
 * judging) as fast as it goes: a virtual wall clock jumped to each next frame.
 */
async function replayPathRate(frames: Frame[], index: Map<string, number>) {
  return withClients(async (send, received, judges) => {
    let messages = 0;
    let sequence = 0;
    const wall = { t: 0, now() { return this.t; } };
    const player = new Player(new ArrayFrameSource(frames), wall, {
      frame(frame) {
        for (const bytes of toWire(frame, index, sequence++)) {
          send(bytes);
          messages++;
        }
        judges?.advance(frame.t);
      },
      keyframe() {},
    });
    const t0 = performance.now();
    player.play();
    while (player.state === "playing") {
      wall.t += Math.max(0, player.wallDelayToNextFrame());
      player.tick();
    }
    while (received() < messages * LINKS) await new Promise((r) => setImmediate(r));
    return messages / ((performance.now() - t0) / 1000);
  }, true);
}

export async function run(): Promise<BenchReport> {
  const index = new Map(Array.from({ length: CHANNELS }, (_, c) => [`ch.${c}`, c] as const));
  const rows: BenchRow[] = [];
  for (const speed of [1, 8]) {
    const frames = makeFrames(WALL_SECONDS * 1000 * speed);
    const r = await replayAt(speed, frames, index);
    // The floor on this machine, in the same run: the scheduler and the sockets alone.
    const floor = speed === 1 ? await replayAt(speed, frames, index, true) : null;
    rows.push(
      { metric: `lateness p50 at ${speed}x (${CHANNELS} channels, ${RATE_HZ} Hz, ${LINKS} WebSocket links)`, value: r.p50, unit: "ms" },
      {
        metric: `lateness p99 at ${speed}x`,
        value: r.p99,
        unit: "ms",
        ...(floor ? { baseline: floor.p99, ratio: r.p99 / floor.p99 } : {}),
        target: speed === 1 ? "< 4 ms" : undefined,
        met: speed === 1 ? r.p99 < 4 : undefined,
        note: floor ? `baseline: the same frames' bytes encoded beforehand, sent on the same scheduler to the same 20 sockets with no panel answering and nothing judged (p50 ${floor.p50.toFixed(2)} ms, max ${floor.max.toFixed(2)} ms, ${floor.late} frames over 2 ms late)` : undefined,
      },
      { metric: `lateness max at ${speed}x`, value: r.max, unit: "ms", note: `${r.late} frames over 2 ms late, ${r.lateWithCollection} of them with a garbage collection in or just before their send; ${r.collections} collections, ${r.collectionMs.toFixed(0)} ms in all` },
      { metric: `CPU used at ${speed}x`, value: r.cpuShare * 100, unit: "% of one core", note: `${r.frames} sends, ${(r.delivered * 100).toFixed(1)}% delivered, ${r.judged.toLocaleString("en")} seen reports judged live, ${r.announced} mismatches or failing elements announced` },
    );
  }
  const frames = makeFrames(20_000);
  const wire = frames.flatMap((f, i) => toWire(f, index, i));
  const bare = await bareBroadcastRate(wire);
  const path = await replayPathRate(frames, index);
  rows.push({
    metric: "replay path throughput (player + encoding + sockets + panels answering + live judging)",
    value: path,
    unit: "messages/s",
    baseline: bare,
    ratio: path / bare,
    target: ">= 0.7 of a bare ws broadcast of the same bytes",
    met: path / bare >= 0.7,
  });
  return { topic: "replay", rows };
}
