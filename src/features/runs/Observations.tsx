import { useEffect, useState } from "react";
import type { CheckpointView, ObservationAnswer, ObservationTarget } from "../../../shared/api/runs";
import type { Element } from "../../../shared/elements/kinds";
import { Button } from "../../components/ui";
import { ANSWER_WORDS, clock } from "./words";

/**
 * The question at an observation checkpoint: the player has paused and waits for what the
 * builder sees. Keys Y, N and S answer too.
 */
export function ObservationQuestion({ checkpoint, busy, onAnswer }: { checkpoint: CheckpointView; busy: boolean; onAnswer: (answer: ObservationAnswer) => void }) {
  useEffect(() => {
    const on = (e: KeyboardEvent) => {
      const t = e.target as HTMLElement | null;
      if (t && (t.tagName === "INPUT" || t.tagName === "SELECT" || t.tagName === "TEXTAREA")) return;
      const key = e.key.toLowerCase();
      const answer = key === "y" ? "yes" : key === "n" ? "no" : key === "s" ? "skip" : null;
      if (!answer || busy) return;
      // Stops the console's own "n" (next mismatch) while a question is open.
      e.stopImmediatePropagation();
      e.preventDefault();
      onAnswer(answer);
    };
    window.addEventListener("keydown", on, { capture: true });
    return () => window.removeEventListener("keydown", on, { capture: true });
  }, [busy, onAnswer]);
  return (
    <section role="alertdialog" aria-label="Observation" aria-describedby="observation-question" className="rounded-md border-2 border-amber bg-card px-4 py-3">
      <p className="text-xs uppercase text-ink-soft">❚❚ Paused at {clock(checkpoint.atMs)} to ask what you see</p>
      <p id="observation-question" className="text-xl font-semibold" data-testid="observation-question">
        {checkpoint.question}
      </p>
      <div className="mt-2 flex gap-3">
        <Button type="button" tone="primary" onClick={() => onAnswer("yes")} disabled={busy} aria-keyshortcuts="Y">
          Yes
        </Button>
        <Button type="button" tone="danger" onClick={() => onAnswer("no")} disabled={busy} aria-keyshortcuts="N">
          No
        </Button>
        <Button type="button" onClick={() => onAnswer("skip")} disabled={busy} aria-keyshortcuts="S">
          Skip
        </Button>
        <span className="self-center text-xs text-ink-soft">Keys: Y, N, S</span>
      </div>
    </section>
  );
}

/** Which elements are watched by eye (changeable until the run finishes), and every checkpoint with its answer. */
export function ObservationList({
  panels,
  observed,
  checkpoints,
  canChange,
  busy,
  onObserve,
}: {
  panels: { panelId: string; name: string; elements: readonly Element[] }[];
  observed: ObservationTarget[];
  checkpoints: CheckpointView[];
  canChange: boolean;
  busy: boolean;
  onObserve: (targets: ObservationTarget[]) => void;
}) {
  const [editing, setEditing] = useState(false);
  const [draft, setDraft] = useState<ObservationTarget[]>(observed);
  const key = (t: ObservationTarget) => `${t.panelId}/${t.elementId}`;
  const has = (t: ObservationTarget) => draft.some((d) => key(d) === key(t));
  const labelOf = (c: { panelId: string; elementId: string }) => panels.find((p) => p.panelId === c.panelId)?.elements.find((e) => e.id === c.elementId)?.label ?? c.elementId;
  return (
    <section aria-label="Watched by eye" className="flex flex-col gap-3">
      <p className="text-sm">
        {observed.length === 0 ? "No element is watched by eye." : `Watched by eye: ${observed.map(labelOf).join(", ")}.`}{" "}
        {canChange && !editing && (
          <button
            type="button"
            className="text-calm underline"
            onClick={() => {
              setDraft(observed);
              setEditing(true);
            }}
          >
            Choose elements
          </button>
        )}
      </p>
      {editing && (
        <div className="flex flex-col gap-2 rounded-md border border-rule px-3 py-2">
          {panels.map((p) => (
            <fieldset key={p.panelId} className="flex flex-wrap gap-x-5 gap-y-1">
              <legend className="text-xs font-semibold text-ink-soft">{p.name}</legend>
              {p.elements
                .filter((e) => !e.placeholder && e.kind !== "encoder")
                .map((e) => {
                  const t = { panelId: p.panelId, elementId: e.id };
                  return (
                    <label key={e.id} className="flex items-center gap-2 text-sm">
                      <input type="checkbox" checked={has(t)} onChange={(ev) => setDraft(ev.target.checked ? [...draft, t] : draft.filter((d) => key(d) !== key(t)))} />
                      {e.label}
                    </label>
                  );
                })}
            </fieldset>
          ))}
          <div className="flex gap-3">
            <Button
              type="button"
              tone="primary"
              disabled={busy}
              onClick={() => {
                onObserve(draft);
                setEditing(false);
              }}
            >
              Watch these
            </Button>
            <Button type="button" onClick={() => setEditing(false)}>
              Cancel
            </Button>
          </div>
        </div>
      )}
      {checkpoints.length > 0 && (
        <table className="w-full text-left text-sm" aria-label="Observation checkpoints">
          <thead className="text-ink-soft">
            <tr>
              <th scope="col" className="py-1 pr-3">At</th>
              <th scope="col" className="py-1 pr-3">Question</th>
              <th scope="col" className="py-1">Answer</th>
            </tr>
          </thead>
          <tbody>
            {checkpoints.map((c) => (
              <tr key={c.id} className="border-t border-rule/60" data-answer={c.answer ?? "none"}>
                <td className="py-1 pr-3 font-mono">{clock(c.atMs)}</td>
                <td className="py-1 pr-3">{c.question}</td>
                <td className="py-1 font-mono">{c.answer ? ANSWER_WORDS[c.answer] : "— not asked yet"}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </section>
  );
}
