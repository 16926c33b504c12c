import { eq } from "drizzle-orm";
import type { WebSocket } from "ws";
import { runChecks, type ChecksView, type CheckpointView, type InputWalkView, type ObservationAnswer, type ObservationTarget, type RUN_STATES, type RunChecks, type SetupCheckView, type SetupItem, type WatcherMessage } from "../../shared/api/runs";
import { seenFromLink, inputFromLink } from "../../shared/compare/from-link";
import { InputWalk, walkSteps, type WalkSnapshot } from "../../shared/compare/input-walk";
import { observationCheckpoints } from "../../shared/compare/observations";
import { setupCheck } from "../../shared/compare/setup-check";
import { BREAKER_POSITIONS } from "../../shared/link/protocol";
import type { InputEntry } from "../../shared/link/messages";
import { RunJudge, tolerancesOf } from "../../shared/compare/judge";
import type { ElementStatus, LinkGap, Mismatch, Tolerances } from "../../shared/compare/types";
import type { Element } from "../../shared/elements/kinds";
import { expectTimelinesInTurns } from "../../shared/expect/engine";
import { RecordingColumns } from "../../shared/expect/recording-columns";
import { nextTurn } from "../turns";
import type { ExpectedTimelines } from "../../shared/expect/types";
import type { LinkFrame } from "../../shared/link/messages";
import { panelChannels } from "../../shared/panel/schema";
import type { ChannelDefinition } from "../../shared/recording/channels";
import type { ChannelState, Frame } from "../../shared/recording/frames";
import type { FrameSource } from "../../shared/replay/frame-source";
import { SegmentFrameSource, type StoredSegment } from "../../shared/replay/segment-source";
import { decodeSegment, decodeSegmentInto } from "../../shared/recording/segments";
import { nativeInflate } from "../recordings/native-deflate";
import { Player } from "../../shared/replay/player";
import { performanceClock } from "../../shared/replay/virtual-clock";
import type { Database } from "../db/client";
import { run, seenLog, type RunPanelSnapshot, type StoredLinkStatus } from "../db/schema";
import { ReplayScheduler } from "./scheduler";
import { DirectLink, Rs485Port, SerialLink, type LinkEvents, type PanelLink } from "./links";
import { deflateSeenChunk, SeenChunkBuilder, type SeenRecord } from "./seen-log";
import { PanelValueMap } from "../../shared/link/panel-values";

type RunState = (typeof RUN_STATES)[number];
type RunRow = typeof run.$inferSelect;

/** A chunk of the seen log covers at most this much recording time (or this many reports). */
export const CHUNK_MS = 5000;
export const CHUNK_RECORDS = 20_000;

/** A recording's frames seen through a window: the run's segment ends where the recording does not. */
class WindowSource implements FrameSource {
  constructor(
    private readonly base: FrameSource,
    readonly durationMs: number,
  ) {}
  framesBetween(from: number, to: number) {
    return this.base.framesBetween(from, Math.min(to, this.durationMs));
  }
  stateAt(t: number) {
    return this.base.stateAt(t);
  }
  nextFrameAfter(t: number) {
    const f = this.base.nextFrameAfter(t);
    return f && f.t <= this.durationMs ? f : null;
  }
}

interface SessionPanel {
  snapshot: RunPanelSnapshot;
  elements: readonly Element[];
  byId: Map<string, Element>;
  map: PanelValueMap;
  timelines: ExpectedTimelines;
  link: PanelLink;
  judge: RunJudge;
  /** Reports since the panel's last stored chunk of the seen log. */
  chunk: SeenChunkBuilder;
  lastT: Map<string, number>;
  /** What each element last said it shows: carried into a new pass at a cut (panels report changes only). */
  lastShown: Map<string, SeenRecord["sample"]["shows"]>;
  advancedTo: number;
  status: StoredLinkStatus;
  /** Recording time when the link dropped (or the run started without it); null while connected. */
  downSince: number | null;
  liveMismatches: number;
  failing: Set<string>;
  /** Where each switch, lever, breaker or button last said it is: an input event wins over a seen report. */
  positions: Map<string, { position: string; via: "input" | "seen" }>;
}

/**
 * A control the session refuses in its present situation (409): the set-up check differs, the
 * input walk is asking, the player is playing. `differences` lists what the set-up check found.
 */
export class RunConflict extends Error {
  constructor(
    readonly code: "setup_mismatch" | "walk_running" | "conflict",
    message: string,
    readonly differences: SetupItem[] = [],
  ) {
    super(message);
  }
}

/** Where an input event says an element now rests, in the words the checks use; null for what has no position. */
export function inputPositionOf(elements: readonly Element[], entry: InputEntry): { elementId: string; position: string } | null {
  const el = elements[entry.element];
  if (!el) return null;
  if (entry.kind === "position") {
    if (el.kind === "switch" || el.kind === "lever") return el.positions[entry.position] === undefined ? null : { elementId: el.id, position: el.positions[entry.position] };
    if (el.kind === "breaker") return BREAKER_POSITIONS[entry.position] === undefined ? null : { elementId: el.id, position: BREAKER_POSITIONS[entry.position] };
  }
  if (entry.kind === "button" && el.kind === "button") return { elementId: el.id, position: entry.pressed ? "pressed" : "released" };
  return null;
}

export interface SessionDeps {
  db: Database;
  /** This process, as written in run.held_by. */
  processId: string;
  broadcast(runId: string, message: WatcherMessage): void;
  /** Judges the stored seen log and writes results (server/bench/store.ts). */
  judge(runId: string): Promise<void>;
  onClosed(runId: string): void;
  /** The stored verdicts of a panel's elements, told to watchers when the run is judged. */
  elementStatuses(runId: string, panelId: string): Promise<{ elementId: string; status: ElementStatus }[]>;
}

/**
 * One running run in this process: the recording's stored segments (frames read from them as the
 * player goes), expected timelines per panel, a
 * player on the virtual clock woken by the replay scheduler, a link per panel, and a live judge
 * per panel fed with what the links report. Reports are stamped on arrival with the bench's
 * monotonic clock, read through the virtual clock as recording time. The raw reports go to the
 * seen log in chunks; the run's final results are judged from that log (the same code as rejudge).
 */
export class RunSession {
  readonly runId: string;
  private readonly panels: SessionPanel[] = [];
  /** The panels in the order frames go out: those sharing a value map next to each other. */
  private readonly sendOrder: SessionPanel[];
  private readonly player: Player;
  private readonly scheduler: ReplayScheduler;
  private readonly fromMs: number;
  private readonly endMs: number;
  private readonly ports = new Map<string, Rs485Port>();
  private epoch: number;
  private chunk = 0;
  private cuts: { epoch: number; atMs: number }[];
  private lastSent: number | null = null;
  private writes: Promise<void> = Promise.resolve();
  private persistTimer: NodeJS.Timeout;
  private state: RunState = "ready";
  private closing = false;
  private lastPlayerBroadcast = 0;
  private readonly tolerance: Partial<Tolerances>;
  /** Set-up check overrides, input walk, observation checkpoints: run.checks. */
  private checks: RunChecks;
  /** The set-up check asks before the first play of a session only. */
  private hasPlayed = false;
  private walk: InputWalk | null = null;
  private checkpointTimer: NodeJS.Timeout | null = null;
  /** The player paused itself at an observation checkpoint: an answer plays on. */
  private pausedForCheckpoint = false;
  private lastSetupKey = "";

  private constructor(
    private readonly deps: SessionDeps,
    row: RunRow,
    segments: readonly StoredSegment[],
    durationMs: number,
    channels: ChannelDefinition[],
    nextChunk: number,
    /** Every panel's expected timelines over the whole recording, in row.panels' order. */
    expected: readonly ExpectedTimelines[],
  ) {
    this.runId = row.id;
    this.fromMs = row.segment?.fromMs ?? 0;
    this.endMs = Math.min(row.segment?.toMs ?? durationMs, durationMs);
    this.tolerance = row.tolerance;
    this.cuts = [...row.cuts];
    this.epoch = this.cuts.reduce((m, c) => Math.max(m, c.epoch), 0);
    this.chunk = nextChunk;
    // Frames are read from the stored segments as the player reaches them (decoded with Node's own
    // zlib), never held all at once.
    const base = new SegmentFrameSource(segments, durationMs, 4, (payload) => decodeSegment(payload, nativeInflate));
    const source = new WindowSource(base, this.endMs);
    // Panels that read the same channels share one map, so a frame's values (and their encoding,
    // DirectLink.update) are made once for all of them: a shop testing several of one kit.
    const maps = new Map<string, PanelValueMap>();
    const mapFor = (names: string[]) => {
      const key = names.join("\n");
      let map = maps.get(key);
      if (!map) maps.set(key, (map = new PanelValueMap(names, channels)));
      return map;
    };
    for (const [index, snapshot] of row.panels.entries()) {
      const def = snapshot.definition;
      const timelines: ExpectedTimelines = { ...expected[index], startMs: this.fromMs, endMs: this.endMs };
      const byId = new Map(def.elements.map((el) => [el.id, el]));
      const stored = row.linkStatus.find((l) => l.panelId === snapshot.panelId);
      const linkInput = row.links.find((l) => l.panelId === snapshot.panelId)!;
      const status: StoredLinkStatus = stored ? { ...stored, gaps: [...stored.gaps], faults: { ...stored.faults } } : { panelId: snapshot.panelId, kind: linkInput.kind, faults: {}, gaps: [] };
      const panel: SessionPanel = {
        snapshot,
        elements: def.elements,
        byId,
        map: mapFor(panelChannels(def)),
        timelines,
        link: null as unknown as PanelLink,
        judge: new RunJudge(timelines, (id) => tolerancesOf(byId.get(id), this.tolerance)),
        chunk: new SeenChunkBuilder(),
        lastT: new Map(),
        lastShown: new Map(),
        advancedTo: this.fromMs,
        status,
        downSince: null,
        liveMismatches: 0,
        failing: new Set(),
        positions: new Map(),
      };
      panel.link = this.makeLink(panel, linkInput);
      this.panels.push(panel);
    }
    // Panels sharing a map side by side, so each frame's values are made once per map.
    const firstOfMap = new Map<PanelValueMap, number>();
    this.panels.forEach((p, i) => firstOfMap.set(p.map, firstOfMap.get(p.map) ?? i));
    this.sendOrder = [...this.panels].sort((a, b) => firstOfMap.get(a.map)! - firstOfMap.get(b.map)!);
    this.checks = runChecks.parse(row.checks ?? {});
    this.checks.asking = null; // a question left open by an earlier session is asked again when play crosses it
    this.planCheckpoints();
    this.player = new Player(source, performanceClock, {
      frame: (frame) => this.sendFrame(frame),
      keyframe: (t, state) => this.sendKeyframe(t, state),
    });
    this.player.setSpeed(row.speed);
    this.scheduler = new ReplayScheduler(this.player, () => this.afterTick());
    const start = Math.max(this.fromMs, Math.min(row.positionMs, this.endMs));
    if (start > 0) this.player.seek(start);
    this.state = start > 0 ? "paused" : "ready";
    // Until a link has connected, its panel has no data (from where this session starts).
    for (const p of this.panels) p.downSince = start;
    this.persistTimer = setInterval(() => this.persist(), 1000);
  }

  /** Loads what the run needs (the recording's segments, as stored) and opens its links. */
  static async open(deps: SessionDeps, row: RunRow, loaded: { segments: StoredSegment[]; durationMs: number; channels: ChannelDefinition[] }): Promise<RunSession> {
    const chunks = await deps.db.select({ chunk: seenLog.chunk }).from(seenLog).where(eq(seenLog.runId, row.id));
    const next = chunks.reduce((m, c) => Math.max(m, c.chunk + 1), 0);
    // The segments once into columns of the channels the run's panels bind, then each panel from
    // them in turns, so other runs on this server keep their timing (docs/behaviours.md, "Speed").
    const columns = new RecordingColumns(row.panels.flatMap((p) => panelChannels(p.definition)));
    for (let i = 0; i < loaded.segments.length; i++) {
      decodeSegmentInto(loaded.segments[i].payload, columns, nativeInflate);
      if (i % 32 === 31) await nextTurn();
    }
    // The recording lasts at least to its last frame, whatever its row says.
    const durationMs = Math.max(loaded.durationMs, columns.lastT);
    const expected: ExpectedTimelines[] = [];
    for (const p of row.panels) expected.push(await expectTimelinesInTurns(p.definition, columns, { endMs: durationMs, turn: nextTurn }));
    const session = new RunSession(deps, row, loaded.segments, durationMs, loaded.channels, next, expected);
    await session.openLinks();
    return session;
  }

  private makeLink(panel: SessionPanel, input: RunRow["links"][number]): PanelLink {
    const events: LinkEvents = {
      frame: (frame, arrival) => this.onFrame(panel, frame, arrival),
      fault: (reason, detail) => this.countFault(panel, reason, detail),
      up: () => this.linkUp(panel),
      down: () => this.linkDown(panel),
    };
    switch (input.kind) {
      case "virtual":
      case "network":
        return new DirectLink(input.kind, input.panelId, events);
      case "serial":
        return new SerialLink(input.panelId, input.path, input.baud, events);
      case "rs485": {
        let port = this.ports.get(input.path);
        if (!port) {
          port = new Rs485Port(input.path, input.baud);
          this.ports.set(input.path, port);
        }
        return port.device(input.panelId, input.address, events);
      }
    }
  }

  private async openLinks() {
    for (const p of this.panels) if (p.link instanceof SerialLink) await p.link.open();
    for (const port of this.ports.values()) {
      await port.open((message) => {
        for (const p of this.panels) if (p.link.kind === "rs485") this.countFault(p, "cannot_open", message);
      });
    }
  }

  // ---- time ------------------------------------------------------------------------------

  /** Recording time now, on the virtual clock, within the run's window. */
  private recordingNow(): number {
    return Math.max(this.fromMs, Math.min(this.endMs, this.player.clock.now()));
  }

  // ---- out to the panels -----------------------------------------------------------------

  private sendFrame(frame: Frame) {
    this.lastSent = frame.t;
    let map: PanelValueMap | null = null;
    let values: ReturnType<PanelValueMap["valuesOf"]> = [];
    for (const p of this.sendOrder) {
      if (p.map !== map) {
        map = p.map;
        values = map.valuesOf(frame.v);
      }
      if (values.length) p.link.update(values, false);
    }
  }

  private sendKeyframe(t: number, state: ChannelState) {
    if (this.lastSent !== null && t < this.lastSent) this.cut(t);
    else if (this.lastSent !== null && t > this.lastSent + 1) {
      // A forward seek skipped [lastSent, t): nothing was played there, so nothing was seen.
      for (const p of this.panels) this.addGap(p, { fromMs: this.lastSent, toMs: t });
    }
    this.lastSent = t;
    for (const p of this.panels) p.link.update(p.map.valuesOf(state, true), true);
    // A seek or a loop restart moved the clock: the next checkpoint is due at another wall time.
    queueMicrotask(() => this.armCheckpoint());
  }

  /**
   * The keyframe a (re)connected link needs: every value at the current instant. The gap
   * without data ends when the panel reports again, not when the line comes back.
   */
  private linkUp(panel: SessionPanel) {
    const { state } = this.player.keyframeForLateJoiner();
    panel.link.update(panel.map.valuesOf(state, true), true);
    this.broadcastLink(panel);
  }

  private closeGap(panel: SessionPanel) {
    if (panel.downSince === null) return;
    const now = this.recordingNow();
    if (now > panel.downSince) this.addGap(panel, { fromMs: panel.downSince, toMs: now });
    panel.downSince = null;
    this.broadcastLink(panel);
  }

  private linkDown(panel: SessionPanel) {
    if (panel.downSince === null) panel.downSince = this.recordingNow();
    this.broadcastLink(panel);
  }

  private addGap(panel: SessionPanel, gap: LinkGap) {
    if (!(gap.toMs > gap.fromMs)) return;
    panel.status.gaps.push({ fromMs: gap.fromMs, toMs: gap.toMs });
    panel.judge.addGap(panel.elements.map((e) => e.id), gap);
  }

  // ---- in from the panels ----------------------------------------------------------------

  private countFault(panel: SessionPanel, reason: string, _detail: string) {
    panel.status.faults[reason] = (panel.status.faults[reason] ?? 0) + 1;
  }

  private onFrame(panel: SessionPanel, frame: LinkFrame, _arrival: number) {
    // Arrival on the bench's monotonic clock, read as recording time by the virtual clock.
    const t = this.recordingNow();
    const m = frame.message;
    if (m.type === "seen_report" && panel.link.connected) this.closeGap(panel);
    switch (m.type) {
      case "seen_report":
        for (const entry of m.seen) {
          const r = seenFromLink(panel.elements, entry, t);
          if (r.ok) {
            this.record(panel, r.elementId, r.sample);
            const shows = r.sample.shows;
            if (shows.track === "position") this.notePosition(panel, r.elementId, shows.position, "seen");
            if (shows.track === "breaker") this.notePosition(panel, r.elementId, shows.breaker, "seen");
          } else this.countFault(panel, r.reason, r.detail);
        }
        break;
      case "input_event":
        for (const entry of m.inputs) {
          const moved = inputPositionOf(panel.elements, entry);
          if (moved) this.notePosition(panel, moved.elementId, moved.position, "input");
          // While the input walk asks, inputs answer it: the hand is following prompts, not the recording.
          if (this.walk?.state === "running") {
            if (moved) this.walk.input({ panelId: panel.snapshot.panelId, elementId: moved.elementId, position: moved.position });
            continue;
          }
          const r = inputFromLink(panel.elements, entry, t);
          if (r.ok) this.record(panel, r.elementId, r.sample);
          else if (r.reason !== "wrong_kind") this.countFault(panel, r.reason, r.detail);
        }
        break;
      case "hello":
        if (m.panel !== panel.snapshot.definition.id) this.countFault(panel, "other_panel", `the device says it is panel "${m.panel}"`);
        break;
      case "error":
        this.countFault(panel, `device_${m.code}`, m.text);
        break;
      default:
        break;
    }
  }

  private record(panel: SessionPanel, elementId: string, sample: SeenRecord["sample"]) {
    const t = Math.max(sample.t, panel.lastT.get(elementId) ?? -Infinity, panel.advancedTo);
    panel.lastT.set(elementId, t);
    panel.lastShown.set(elementId, sample.shows);
    const s = { t, shows: sample.shows };
    panel.chunk.add(elementId, s);
    panel.judge.addSeen(elementId, s);
    if (panel.chunk.count >= CHUNK_RECORDS || t - panel.chunk.fromMs >= CHUNK_MS) this.flushPanel(panel);
  }

  /** Stores what the panel reported since its last chunk: deflated off the event loop, written in order. */
  private flushPanel(panel: SessionPanel) {
    const chunk = panel.chunk;
    if (chunk.count === 0) return;
    panel.chunk = new SeenChunkBuilder();
    const row = {
      runId: this.runId,
      panelId: panel.snapshot.panelId,
      chunk: this.chunk++,
      epoch: this.epoch,
      fromMs: chunk.fromMs,
      toMs: chunk.toMs,
      count: chunk.count,
    };
    const payload = deflateSeenChunk(chunk);
    // Handled where it is awaited, in order; marked here so a failure cannot count as unhandled meanwhile.
    payload.catch(() => {});
    this.chain(async () => {
      await this.deps.db.insert(seenLog).values({ ...row, payload: await payload });
    });
  }

  private chain(work: () => Promise<void>) {
    this.writes = this.writes.then(work).catch((error) => console.error(`[run ${this.runId}] write failed:`, error));
  }

  /** A backward seek or loop restart: reports of this pass from `atMs` on stop counting. */
  private cut(atMs: number) {
    for (const p of this.panels) this.flushPanel(p);
    this.epoch++;
    this.cuts.push({ epoch: this.epoch, atMs });
    for (const p of this.panels) {
      p.status.gaps = p.status.gaps.flatMap((g) => (g.fromMs >= atMs ? [] : [{ fromMs: g.fromMs, toMs: Math.min(g.toMs, atMs) }]));
      p.judge = new RunJudge(p.timelines, (id) => tolerancesOf(p.byId.get(id), this.tolerance));
      for (const g of p.status.gaps) p.judge.addGap(p.elements.map((e) => e.id), g);
      p.lastT.clear();
      p.advancedTo = this.fromMs;
      p.liveMismatches = 0;
      p.failing.clear();
      if (p.downSince !== null) p.downSince = atMs;
      // A panel reports what changes, not what stays: what a lamp, readout, breaker or switch
      // showed when the pass was cut, it still shows at the cut instant until it says otherwise
      // (after the keyframe). Not a needle's angle: it is judged against a window with no grace
      // at the pass's start, and a needle reports again as soon as it moves.
      if (p.downSince === null) for (const [elementId, shows] of [...p.lastShown]) if (shows.track !== "angle") this.record(p, elementId, { t: atMs, shows });
    }
  }

  // ---- checks beside the replay: set-up check, input walk, observations ------------------

  private notePosition(panel: SessionPanel, elementId: string, position: string, via: "input" | "seen") {
    const known = panel.positions.get(elementId);
    if (via === "seen" && known?.via === "input") return;
    if (known?.position === position && known.via === via) return;
    panel.positions.set(elementId, { position, via });
    // Before the first play the console shows the set-up check live.
    if (!this.hasPlayed) this.broadcastChecksIfSetupChanged();
  }

  /** The set-up check now: switches, levers and breakers against the recording where play starts. */
  setupView(): SetupCheckView {
    const atMs = this.position();
    const differences: SetupItem[] = [];
    const unreported: SetupItem[] = [];
    for (const p of this.panels) {
      const c = setupCheck(p.elements, p.timelines, atMs, (id) => p.positions.get(id)?.position ?? null);
      differences.push(...c.differences.map((d) => ({ panelId: p.snapshot.panelId, ...d })));
      unreported.push(...c.unreported.map((d) => ({ panelId: p.snapshot.panelId, ...d })));
    }
    return { atMs, applies: !this.hasPlayed, differences, unreported };
  }

  checksView(): ChecksView {
    return { ...structuredClone(this.checks), setup: this.setupView() };
  }

  private broadcastChecks() {
    this.deps.broadcast(this.runId, { type: "checks", checks: this.checksView() });
  }

  private broadcastChecksIfSetupChanged() {
    const setup = this.setupView();
    const key = JSON.stringify([setup.differences, setup.unreported.length, setup.applies]);
    if (key === this.lastSetupKey) return;
    this.lastSetupKey = key;
    this.broadcastChecks();
  }

  private persistChecks() {
    if (this.closing) return;
    const checks = structuredClone(this.checks);
    this.chain(() => this.deps.db.update(run).set({ checks }).where(eq(run.id, this.runId)).then(() => undefined));
  }

  /** Checkpoints for the observed elements, chosen again; answers already given are kept. */
  private planCheckpoints() {
    const plans = observationCheckpoints(
      this.panels.map((p) => ({ panelId: p.snapshot.panelId, elements: p.elements, timelines: p.timelines })),
      this.checks.observed,
      { fromMs: this.fromMs, endMs: this.endMs },
    );
    const old = new Map(this.checks.checkpoints.map((c) => [c.id, c]));
    this.checks.checkpoints = plans.map((c): CheckpointView => ({ ...c, answer: old.get(c.id)?.answer ?? null, answeredAt: old.get(c.id)?.answeredAt ?? null }));
    if (this.checks.asking && !old.has(this.checks.asking)) this.checks.asking = null;
  }

  /** Marks the elements watched by eye (replacing the list). */
  observe(targets: ObservationTarget[]) {
    targets.forEach((t, i) => {
      const p = this.panels.find((x) => x.snapshot.panelId === t.panelId);
      if (!p) throw new RangeError(`body.elements.${i}.panelId: this panel is not part of the run`);
      const el = p.byId.get(t.elementId);
      if (!el) throw new RangeError(`body.elements.${i}.elementId: the panel has no element "${t.elementId}"`);
      if (el.placeholder || el.kind === "encoder") throw new RangeError(`body.elements.${i}.elementId: ${el.label} shows nothing to observe`);
    });
    const seen = new Set<string>();
    this.checks.observed = targets.filter((t) => !seen.has(`${t.panelId}/${t.elementId}`) && !!seen.add(`${t.panelId}/${t.elementId}`));
    this.planCheckpoints();
    this.persistChecks();
    this.broadcastChecks();
    this.armCheckpoint();
  }

  /** Records the builder's answer; when the player paused for this question, play goes on. */
  answer(checkpointId: string, answer: ObservationAnswer) {
    const c = this.checks.checkpoints.find((x) => x.id === checkpointId);
    if (!c) throw new RangeError(`body.checkpointId: no checkpoint "${checkpointId}" in this run`);
    c.answer = answer;
    c.answeredAt = new Date().toISOString();
    const wasAsked = this.checks.asking === checkpointId;
    if (wasAsked) this.checks.asking = null;
    this.persistChecks();
    this.broadcastChecks();
    if (wasAsked && this.pausedForCheckpoint && this.state === "paused") {
      this.pausedForCheckpoint = false;
      this.play();
    }
  }

  private clearCheckpointTimer() {
    if (this.checkpointTimer) clearTimeout(this.checkpointTimer);
    this.checkpointTimer = null;
  }

  /** Sets a timer for the next unanswered checkpoint ahead of the position, while playing. */
  private armCheckpoint() {
    this.clearCheckpointTimer();
    if (this.state !== "playing" || this.closing) return;
    const now = this.recordingNow();
    const next = this.checks.checkpoints.find((c) => c.answer === null && c.atMs >= now);
    if (!next) return;
    const delay = Math.max(0, this.player.clock.wallDelayUntil(next.atMs));
    if (!Number.isFinite(delay)) return;
    this.checkpointTimer = setTimeout(() => this.reachCheckpoint(next.id), delay);
  }

  private reachCheckpoint(id: string) {
    this.checkpointTimer = null;
    if (this.state !== "playing" || this.closing) return;
    const c = this.checks.checkpoints.find((x) => x.id === id);
    if (!c || c.answer !== null) return this.armCheckpoint();
    // Timers may fire a millisecond early (they round); the question belongs at its instant, never before.
    if (this.recordingNow() < c.atMs) {
      const wait = Math.max(1, Math.ceil(this.player.clock.wallDelayUntil(c.atMs)));
      this.checkpointTimer = setTimeout(() => this.reachCheckpoint(id), wait);
      return;
    }
    this.pause();
    this.pausedForCheckpoint = true;
    this.checks.asking = c.id;
    this.persistChecks();
    this.broadcastChecks();
  }

  /** Starts the input walk over every input position of the run's panels (never while playing). */
  startWalk(timeoutSec: number) {
    if (this.state === "playing") throw new RunConflict("conflict", "Pause the run first: the input walk asks for inputs the recording would also move.");
    if (this.walk?.state === "running") throw new RunConflict("walk_running", "The input walk is already asking.");
    const steps = walkSteps(
      this.panels.map((p) => ({ panelId: p.snapshot.panelId, elements: p.elements })),
      (panelId, elementId) => this.panels.find((p) => p.snapshot.panelId === panelId)?.positions.get(elementId)?.position,
    );
    const startedAt = new Date().toISOString();
    const view = (snap: WalkSnapshot): InputWalkView => ({
      state: snap.state,
      timeoutSec,
      startedAt,
      finishedAt: snap.state === "running" ? null : new Date().toISOString(),
      current: snap.current,
      steps: snap.steps,
    });
    this.walk = new InputWalk(steps, {
      timeoutMs: timeoutSec * 1000,
      onChange: (snap) => {
        this.checks.walk = view(snap);
        this.persistChecks();
        this.broadcastChecks();
      },
    });
  }

  skipWalkStep() {
    if (this.walk?.state !== "running") throw new RunConflict("conflict", "No input walk is asking.");
    this.walk.skip();
  }

  cancelWalk() {
    if (this.walk?.state !== "running") throw new RunConflict("conflict", "No input walk is asking.");
    this.walk.cancel();
  }

  // ---- live judging and watchers -------------------------------------------------------

  private afterTick() {
    const now = this.recordingNow();
    for (const p of this.panels) {
      const to = Math.min(now, p.downSince ?? Infinity);
      if (to > p.advancedTo) {
        p.judge.advance(to);
        p.advancedTo = to;
      }
      const live = p.judge.liveMismatches();
      for (let i = p.liveMismatches; i < live.length; i++) this.announceMismatch(p, live[i]);
      p.liveMismatches = live.length;
      // A mismatch still open (a lamp stuck dark to the end) marks its element at once.
      const failing = p.judge.newlyFailing(p.advancedTo);
      for (let i = 0; i < failing.length; i++) this.announceFailing(p, failing[i]);
    }
    const wall = performance.now();
    if (wall - this.lastPlayerBroadcast > 250) this.broadcastPlayer();
    if (this.player.state === "finished") void this.finish("finished");
  }

  private announceMismatch(p: SessionPanel, m: Mismatch) {
    this.deps.broadcast(this.runId, {
      type: "mismatch",
      mismatch: { panelId: p.snapshot.panelId, elementId: m.elementId, track: m.track, kind: m.kind, startMs: m.startMs, endMs: m.endMs, worstError: m.worstError, expected: m.expected, seen: m.seen, atMs: m.atMs },
    });
    this.announceFailing(p, m.elementId);
  }

  private announceFailing(p: SessionPanel, elementId: string) {
    if (p.failing.has(elementId)) return;
    p.failing.add(elementId);
    this.deps.broadcast(this.runId, { type: "element", panelId: p.snapshot.panelId, elementId, status: "fail" });
  }

  private broadcastPlayer() {
    this.lastPlayerBroadcast = performance.now();
    this.deps.broadcast(this.runId, { type: "player", state: this.state, positionMs: this.position(), speed: this.player.clock.speed, durationMs: this.endMs, loop: this.loop });
  }

  private broadcastLink(p: SessionPanel) {
    this.deps.broadcast(this.runId, { type: "link", link: this.linkView(p) });
  }

  private linkView(p: SessionPanel) {
    const gaps = [...p.status.gaps];
    if (p.downSince !== null && this.state !== "ready") gaps.push({ fromMs: p.downSince, toMs: this.recordingNow() });
    return { panelId: p.snapshot.panelId, kind: p.status.kind, connected: p.link.connected, faults: { ...p.status.faults }, gaps };
  }

  // ---- control ---------------------------------------------------------------------------

  position() {
    return Math.round(this.recordingNow());
  }

  view() {
    return { state: this.state, positionMs: this.position(), speed: this.player.clock.speed, durationMs: this.endMs, loop: this.loop, links: this.panels.map((p) => this.linkView(p)) };
  }

  /** Attaches a panel's WebSocket (virtual or network link); false when the run has no such link. */
  attachSocket(panelId: string, ws: WebSocket, kind: "virtual" | "network"): boolean {
    const p = this.panels.find((x) => x.snapshot.panelId === panelId);
    if (!p || !(p.link instanceof DirectLink) || p.link.kind !== kind) return false;
    p.link.attachSocket(ws);
    return true;
  }

  linkKindOf(panelId: string) {
    return this.panels.find((x) => x.snapshot.panelId === panelId)?.link.kind ?? null;
  }

  private syncState() {
    const s = this.player.state;
    // The player reaching its end is not the run finishing: that is finish(), once the results
    // are judged and stored. Until then the run still reads as playing, so nobody reads a
    // "finished" run without its results.
    if (s === "finished") {
      if (this.state !== "finished") this.state = "playing";
      return;
    }
    this.state = s === "idle" || s === "loading" ? "ready" : s;
  }

  /**
   * Plays. Before the first play of a session the set-up check must agree (or `override`,
   * which is kept in run.checks with what differed); never while the input walk asks.
   */
  play(options: { override?: boolean; by?: string | null } = {}) {
    if (this.state === "playing") return;
    if (this.walk?.state === "running") throw new RunConflict("walk_running", "The input walk is still asking: finish or cancel it before playing.");
    if (!this.hasPlayed) {
      const setup = this.setupView();
      if (setup.differences.length > 0) {
        if (!options.override) {
          throw new RunConflict("setup_mismatch", `Set-up check: ${setup.differences.map((d) => d.sentence).join("; ")}. Set them as the recording starts, or play anyway with override.`, setup.differences);
        }
        this.checks.setupOverrides.push({ at: new Date().toISOString(), by: options.by ?? null, atMs: setup.atMs, differences: setup.differences });
        this.persistChecks();
      }
    }
    this.hasPlayed = true;
    // Playing on while a question is open leaves it unanswered.
    this.pausedForCheckpoint = false;
    if (this.checks.asking) {
      this.checks.asking = null;
      this.persistChecks();
    }
    const wasReady = this.state === "ready";
    // Links not connected at the start have no data from the start.
    if (wasReady) for (const p of this.panels) if (p.downSince !== null) p.downSince = this.recordingNow();
    this.player.play();
    this.syncState();
    this.scheduler.kick();
    this.persist();
    this.broadcastPlayer();
    this.armCheckpoint();
    this.broadcastChecks();
  }

  pause() {
    this.clearCheckpointTimer();
    this.pausedForCheckpoint = false;
    this.player.pause();
    this.syncState();
    this.afterTick();
    for (const p of this.panels) this.flushPanel(p);
    this.persist();
    this.broadcastPlayer();
  }

  step() {
    this.player.step();
    this.syncState();
    this.afterTick();
    this.broadcastPlayer();
  }

  seek(toMs: number) {
    this.player.seek(Math.max(this.fromMs, Math.min(this.endMs, toMs)));
    this.syncState();
    this.scheduler.kick();
    this.persist();
    this.broadcastPlayer();
    this.armCheckpoint();
    // Before the first play, the set-up check compares with the new instant.
    if (!this.hasPlayed) this.broadcastChecksIfSetupChanged();
  }

  setSpeed(speed: number) {
    this.player.setSpeed(speed);
    this.scheduler.kick();
    this.persist();
    this.broadcastPlayer();
    this.armCheckpoint();
  }

  /** The loop as set (null: none), to show in the console. */
  get loop() {
    return this.player.snapshot.loop;
  }

  setLoop(loop: { fromMs: number; toMs: number } | null) {
    if (loop && (loop.fromMs < this.fromMs || loop.toMs > this.endMs)) throw new RangeError(`the loop must lie within the run (${this.fromMs} to ${this.endMs} ms)`);
    this.player.setLoop(loop);
    this.scheduler.kick();
    this.broadcastPlayer();
  }

  /** Ends the run now ("stop") or at the end ("finished"): judged up to where it got. */
  async finish(_why: "finished" | "stopped"): Promise<void> {
    if (this.closing) return;
    this.stopChecks();
    this.closing = true;
    const end = this.position();
    this.scheduler.stop();
    this.player.pause();
    clearInterval(this.persistTimer);
    for (const p of this.panels) {
      if (p.downSince !== null) {
        this.addGap(p, { fromMs: p.downSince, toMs: end });
        p.downSince = null;
      }
      this.flushPanel(p);
    }
    await this.closeLinks();
    const endMs = end;
    const linkStatus = this.panels.map((p) => p.status);
    this.chain(async () => {
      await this.deps.db.update(run).set({ positionMs: endMs, durationMs: this.endMs, linkStatus, cuts: this.cuts, aliveAt: new Date() }).where(eq(run.id, this.runId));
      // Judged from the stored log up to where the run got (a stop judges what was played),
      // before the run reads as finished, so a finished run always has its results.
      await this.deps.judge(this.runId);
      await this.deps.db.update(run).set({ state: "finished", finishedAt: new Date(), heldBy: null }).where(eq(run.id, this.runId));
    });
    await this.writes;
    this.state = "finished";
    this.broadcastPlayer();
    for (const p of this.panels) {
      const rows = await this.deps.elementStatuses(this.runId, p.snapshot.panelId);
      for (const r of rows) this.deps.broadcast(this.runId, { type: "element", panelId: p.snapshot.panelId, elementId: r.elementId, status: r.status });
    }
    this.deps.onClosed(this.runId);
  }

  /** The process is going away: keep what arrived, mark the run interrupted (play resumes it). */
  async interrupt(): Promise<void> {
    if (this.closing) return;
    this.stopChecks();
    this.closing = true;
    this.scheduler.stop();
    this.player.pause();
    clearInterval(this.persistTimer);
    const at = this.position();
    for (const p of this.panels) {
      if (p.downSince !== null && at > p.downSince) this.addGap(p, { fromMs: p.downSince, toMs: at });
      this.flushPanel(p);
    }
    this.state = "interrupted";
    await this.closeLinks();
    this.chain(() =>
      this.deps.db
        .update(run)
        .set({ state: "interrupted", positionMs: at, linkStatus: this.panels.map((p) => p.status), cuts: this.cuts, heldBy: null })
        .where(eq(run.id, this.runId))
        .then(() => undefined),
    );
    await this.writes;
    this.broadcastPlayer();
    this.deps.onClosed(this.runId);
  }

  /** The session is closing: no more questions; an open walk ends cancelled (and is saved so). */
  private stopChecks() {
    this.clearCheckpointTimer();
    if (this.walk?.state === "running") this.walk.cancel();
    this.checks.asking = null;
    this.persistChecks();
  }

  private async closeLinks() {
    for (const p of this.panels) await p.link.close();
    for (const port of this.ports.values()) await port.close();
  }

  /** Saves state, position, link status and the alive stamp (every second and on control). */
  private persist() {
    if (this.closing) return;
    const values = {
      state: this.state,
      positionMs: this.position(),
      speed: this.player.clock.speed,
      linkStatus: this.panels.map((p) => ({ ...p.status, gaps: this.linkView(p).gaps })),
      cuts: [...this.cuts],
      heldBy: this.deps.processId,
      aliveAt: new Date(),
    };
    this.chain(() => this.deps.db.update(run).set(values).where(eq(run.id, this.runId)).then(() => undefined));
  }

  /** Waits for queued writes (tests and shutdown). */
  settle() {
    return this.writes;
  }
}
