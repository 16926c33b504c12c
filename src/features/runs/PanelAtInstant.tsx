import { memo, useMemo } from "react";
import type { RunExpectedPanel } from "../../../shared/api/run-reports";
import { expectedAt } from "../../../shared/expect/lookup";
import type { ExpectedState } from "../../../shared/expect/types";
import { PanelDrawing, arrange } from "../../components/PanelDrawing";
import { clock } from "./words";
import { FailMark } from "./FailMark";

export interface InstantMismatch {
  elementId: string;
  startMs: number;
  endMs: number;
  expected: string;
  seen: string;
}

/**
 * One panel of the run at one instant of the report: drawn with what every element should show
 * then (expectedAt of the run's expected timelines), and every element in a mismatch at that
 * instant framed, crossed and labelled (shape and words as well as colour).
 */
export const PanelAtInstant = memo(function PanelAtInstant({ panel, atMs, mismatches }: { panel: RunExpectedPanel; atMs: number; mismatches: readonly InstantMismatch[] }) {
  const states = useMemo(() => {
    const out: Record<string, ExpectedState> = {};
    for (const tl of panel.timelines.elements) out[tl.id] = expectedAt(tl, atMs);
    return out;
  }, [panel.timelines, atMs]);
  const failingNow = useMemo(() => mismatches.filter((m) => m.startMs <= atMs && atMs < m.endMs), [mismatches, atMs]);
  const failingIds = new Set(failingNow.map((m) => m.elementId));
  const a = useMemo(() => arrange(panel.definition), [panel.definition]);
  const pad = a.cell * 0.7;
  const vb = `${-pad} ${-pad} ${a.width + pad * 2} ${a.height + pad * 2}`;
  const labels = useMemo(() => new Map(panel.definition.elements.map((e) => [e.id, e.label])), [panel.definition]);

  return (
    <section className="flex flex-col gap-2" aria-label={`${panel.name} at ${clock(atMs)}`}>
      <h3 className="font-semibold">
        {panel.name} <span className="font-mono text-sm font-normal text-ink-soft">at {clock(atMs)}, as it should show</span>
      </h3>
      <div className="relative">
        <PanelDrawing panel={panel.definition} states={states} title={`${panel.name}: expected at ${clock(atMs)}`} className="block" />
        <svg viewBox={vb} className="pointer-events-none absolute inset-0 h-full w-full" aria-hidden="true">
          {a.items.map((item) => {
            const bad = item.elements.filter((e) => failingIds.has(e.id));
            if (bad.length === 0) return null;
            return (
              <FailMark key={item.elements[0].id} cell={a.cell} x={item.x} y={item.y} labels={bad.map((e) => e.label)} prefix="✕" testId={`instant-fail-${bad.map((e) => e.id).join("-")}`} />
            );
          })}
        </svg>
      </div>
      <ul className="flex flex-col gap-1 text-sm" aria-label={`Mismatches of ${panel.name} at this instant`}>
        {failingNow.length === 0 ? (
          <li className="text-ink-soft">No element of this panel is in a mismatch at this instant.</li>
        ) : (
          failingNow.slice(0, 20).map((m) => (
            <li key={`${m.elementId}-${m.startMs}`} data-testid={`instant-mismatch-${m.elementId}`}>
              <span className="font-mono font-bold text-bad">✕</span> <strong>{labels.get(m.elementId) ?? m.elementId}</strong>: expected {m.expected}, seen {m.seen}{" "}
              <span className="font-mono text-xs text-ink-soft">
                ({clock(m.startMs)}–{clock(m.endMs)})
              </span>
            </li>
          ))
        )}
      </ul>
    </section>
  );
});
