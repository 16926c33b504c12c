import { useState } from "react";
import type { InputWalkView } from "../../../shared/api/runs";
import { Button } from "../../components/ui";
import { WALK_WORDS } from "./words";

/**
 * The input walk: asks for every input position in turn and waits for the panel's input event.
 * The prompt in large type while it asks; each step's result in words when done.
 */
export function InputWalkCard({
  walk,
  canStart,
  busy,
  onStart,
  onSkip,
  onCancel,
}: {
  walk: InputWalkView | null;
  canStart: boolean;
  busy: boolean;
  onStart: (timeoutSec: number) => void;
  onSkip: () => void;
  onCancel: () => void;
}) {
  const [timeout, setTimeoutSec] = useState("20");
  const running = walk?.state === "running";
  const asked = running ? walk.steps[walk.current] : null;
  const seconds = Number(timeout);
  const validTimeout = Number.isFinite(seconds) && seconds >= 1 && seconds <= 600;
  return (
    <section aria-label="Input walk" className="flex flex-col gap-3">
      {asked ? (
        <div className="rounded-md border-2 border-calm px-4 py-3" role="status" aria-live="polite">
          <p className="text-xs uppercase text-ink-soft">
            Step {walk!.current + 1} of {walk!.steps.length} · waiting up to {walk!.timeoutSec} s
          </p>
          <p className="text-xl font-semibold" data-testid="walk-prompt">
            {asked.prompt}
          </p>
          <div className="mt-2 flex gap-3">
            <Button type="button" onClick={onSkip} disabled={busy}>
              Skip this one
            </Button>
            <Button type="button" tone="danger" onClick={onCancel} disabled={busy}>
              Stop the walk
            </Button>
          </div>
        </div>
      ) : (
        <div className="flex flex-wrap items-end gap-3">
          <label className="flex flex-col gap-1 text-sm font-semibold">
            Wait per step (s)
            <input
              type="number"
              min={1}
              max={600}
              value={timeout}
              onChange={(e) => setTimeoutSec(e.target.value)}
              aria-invalid={!validTimeout}
              className="w-24 rounded-md border border-rule bg-card px-2 py-1.5 font-normal"
            />
          </label>
          <Button type="button" onClick={() => onStart(seconds)} disabled={!canStart || busy || !validTimeout}>
            {walk ? "Walk the inputs again" : "Walk the inputs"}
          </Button>
          {!validTimeout && <span className="text-sm text-bad">✕ between 1 and 600 seconds</span>}
          {!canStart && <span className="text-sm text-ink-soft">Pause the run to walk its inputs.</span>}
        </div>
      )}
      {walk && walk.steps.length === 0 && <p className="text-sm text-ink-soft">The run's panels have no switch, lever, breaker or button to walk.</p>}
      {walk && walk.steps.length > 0 && (
        <table className="w-full text-left text-sm" aria-label="Input walk results">
          <thead className="text-ink-soft">
            <tr>
              <th scope="col" className="py-1 pr-3">Asked</th>
              <th scope="col" className="py-1 pr-3">Result</th>
              <th scope="col" className="py-1">Took</th>
            </tr>
          </thead>
          <tbody>
            {walk.steps.map((s, i) => (
              <tr key={i} className="border-t border-rule/60" data-result={s.result ?? "waiting"}>
                <td className="py-1 pr-3">{s.prompt}</td>
                <td className="py-1 pr-3 font-mono">
                  {s.result ? WALK_WORDS[s.result] : i === walk.current && running ? "… asking" : walk.state === "cancelled" ? "— not asked" : "…"}
                  {s.seen && ` (panel said ${s.seen})`}
                </td>
                <td className="py-1 font-mono">{s.tookMs === null ? "" : `${(s.tookMs / 1000).toFixed(1)} s`}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </section>
  );
}
