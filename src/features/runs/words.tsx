import type { ReactNode } from "react";

/** Status of an element or a run in words and a mark of its own shape; colour only repeats it. */
const STATUS: Record<string, { word: string; mark: string; tone: string }> = {
  pass: { word: "pass", mark: "●", tone: "text-good border-good/50" },
  fail: { word: "FAIL", mark: "✕", tone: "text-bad border-bad/60 font-bold" },
  untested: { word: "untested", mark: "○", tone: "text-ink-soft border-rule" },
  no_data: { word: "no data", mark: "◌", tone: "text-amber border-amber/60" },
  placeholder: { word: "placeholder", mark: "□", tone: "text-ink-soft border-rule" },
};

export function StatusTag({ status }: { status: string }) {
  const s = STATUS[status] ?? { word: status, mark: "·", tone: "text-ink border-rule" };
  return (
    <span className={`inline-flex items-center gap-1 rounded-sm border px-1.5 py-0.5 font-mono text-[11px] tracking-wide uppercase ${s.tone}`} data-status={status}>
      <span aria-hidden="true">{s.mark}</span>
      {s.word}
    </span>
  );
}

export const STATE_WORDS: Record<string, string> = {
  idle: "not started",
  ready: "ready",
  playing: "playing",
  paused: "paused",
  seeking: "moving",
  finished: "finished",
  failed: "failed",
  interrupted: "interrupted",
};

export function StateTag({ state }: { state: string }) {
  const mark = state === "playing" ? "▶" : state === "paused" ? "❚❚" : state === "finished" ? "■" : state === "failed" || state === "interrupted" ? "▲" : "○";
  return (
    <span className="inline-flex items-center gap-1 font-mono text-xs uppercase" data-state={state}>
      <span aria-hidden="true">{mark}</span>
      {STATE_WORDS[state] ?? state}
    </span>
  );
}

export const MISMATCH_WORDS: Record<string, string> = {
  wrong_value: "wrong value",
  late: "late",
  unexpected_input: "unexpected input",
  observed: "observed (answered no)",
};

/** Input walk results in words, each with a mark of its own shape. */
export const WALK_WORDS: Record<string, string> = {
  pass: "● pass",
  wrong_position: "✕ wrong position",
  timeout: "◌ no answer in time",
  skipped: "○ skipped",
};

export const ANSWER_WORDS: Record<string, string> = { yes: "● yes", no: "✕ no", skip: "○ skipped" };

export const FAULT_WORDS: Record<string, string> = {
  lamp_stuck: "lamp stuck",
  lamp_inverted: "lamp inverted",
  pointer_offset: "needle offset",
  pointer_scale: "needle scale wrong",
  pointer_slow: "needle too slow",
  missed_steps: "missed steps",
  digit_dropped: "digit dark",
  breaker_stuck: "breaker stuck",
  added_lag: "added lag",
  disconnect: "link drops",
};

/** Recording time as m:ss.t */
export function clock(ms: number): string {
  const total = Math.max(0, ms) / 1000;
  const m = Math.floor(total / 60);
  const s = total - m * 60;
  return `${m}:${s.toFixed(1).padStart(4, "0")}`;
}

export const ms = (v: number | null | undefined) => (v === null || v === undefined ? "—" : `${Math.round(v)} ms`);

export function Empty({ children }: { children: ReactNode }) {
  return <p className="rounded-lg border border-dashed border-rule px-4 py-8 text-center text-ink-soft">{children}</p>;
}
