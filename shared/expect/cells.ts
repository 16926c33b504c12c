import { createActor, initialTransition, transition, type AnyStateMachine, type SimulatedClock, type StateValue } from "xstate";

/** The part of a machine snapshot the engine reads. */
export interface CellSnapshot {
  value: StateValue;
  context: unknown;
}

/** An event the engine sends to a behaviour: a type plus a condition's value, an index or a name. */
export interface CellEvent {
  type: string;
  on?: boolean;
  index?: number;
  name?: string;
}

/** One element's behaviour machine as the engine drives it: send an event, read the snapshot. */
export interface MachineCell {
  readonly snapshot: CellSnapshot;
  send(event: CellEvent): void;
  stop(): void;
}

/**
 * A running xstate actor on a (simulated) clock. Needed for machines with delayed transitions
 * (a spring-loaded switch's hold), and used for every machine by the stepwise engine, the
 * straightforward reference the fast path is tested against.
 */
export function actorCell(machine: AnyStateMachine, clock: SimulatedClock, input?: unknown): MachineCell {
  const actor = createActor(machine, { clock, input }).start();
  return {
    get snapshot() {
      return actor.getSnapshot() as CellSnapshot;
    },
    send: (event) => actor.send(event as never),
    stop: () => actor.stop(),
  };
}

/**
 * Transition tables learnt from xstate itself, one per machine and input, shared by every element
 * with that machine and input. A machine without delays, children or side effects (all behaviours
 * except the spring-loaded switch) is a pure function of (state value, context, event), so its
 * reachable snapshots form a small closed set: each (snapshot, event) pair is asked of xstate's
 * pure `transition` once, and afterwards costs two map lookups instead of a macrostep (about 10 µs
 * per event, which dominated panels with many lamps). Snapshots are canonicalised by their value
 * and context, so "off" reached twice is one row.
 */
export class MemoTables {
  private readonly tables = new Map<AnyStateMachine, Map<string, MemoTable>>();

  cell(machine: AnyStateMachine, input?: unknown): MachineCell {
    let byInput = this.tables.get(machine);
    if (!byInput) this.tables.set(machine, (byInput = new Map()));
    const key = JSON.stringify(input ?? null);
    let table = byInput.get(key);
    if (!table) byInput.set(key, (table = new MemoTable(machine, input)));
    return new MemoCell(table);
  }
}

class MemoTable {
  readonly initial: CellSnapshot;
  /** Representative snapshot by canonical key (value and context as JSON). */
  private readonly representatives = new Map<string, CellSnapshot>();
  /** Next snapshot by representative snapshot, then by event key. */
  private readonly rows = new Map<CellSnapshot, Map<string, CellSnapshot>>();

  constructor(
    private readonly machine: AnyStateMachine,
    input: unknown,
  ) {
    this.initial = this.canonical(initialTransition(machine, input as never)[0] as CellSnapshot);
  }

  next(from: CellSnapshot, event: CellEvent): CellSnapshot {
    let row = this.rows.get(from);
    if (!row) this.rows.set(from, (row = new Map()));
    const key = `${event.type}|${event.index ?? ""}|${event.on ?? ""}|${event.name ?? ""}`;
    let to = row.get(key);
    if (to === undefined) {
      to = this.canonical(transition(this.machine, from as never, event as never)[0] as CellSnapshot);
      row.set(key, to);
    }
    return to;
  }

  private canonical(snapshot: CellSnapshot): CellSnapshot {
    const key = JSON.stringify([snapshot.value, snapshot.context]);
    const known = this.representatives.get(key);
    if (known) return known;
    this.representatives.set(key, snapshot);
    return snapshot;
  }
}

class MemoCell implements MachineCell {
  snapshot: CellSnapshot;

  constructor(private readonly table: MemoTable) {
    this.snapshot = table.initial;
  }

  send(event: CellEvent): void {
    this.snapshot = this.table.next(this.snapshot, event);
  }

  stop(): void {}
}
