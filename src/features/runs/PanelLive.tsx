import { useEffect, useMemo, useState } from "react";
import type { ExpectedState } from "../../../shared/expect";
import type { Fault } from "../../../shared/virtual/faults";
import { PanelDrawing, arrange } from "../../components/PanelDrawing";
import { usePanel } from "../panels/queries";
import { useAirframe } from "../recordings/queries";
import { elementKey } from "./live";
import { BrowserPanel, hostInBrowser, type BrowserLinkState } from "./virtual-panel";
import { FAULT_WORDS, StatusTag } from "./words";

const LINK_WORDS: Record<BrowserLinkState, string> = {
  connecting: "○ connecting",
  connected: "● connected",
  unplugged: "◌ unplugged (injected drop)",
  closed: "■ closed",
};

/**
 * One panel of the run: drawn as the panel shows it (for a virtual link, this browser is the
 * panel), with every failing element marked by a frame, a cross and its label, not colour alone.
 */
export function PanelLive({
  workshopId,
  runId,
  panelId,
  kind,
  faults,
  speed,
  finished,
  statuses,
  connected,
}: {
  workshopId: string;
  runId: string;
  panelId: string;
  kind: string;
  faults: Fault[];
  speed: number;
  finished: boolean;
  statuses: Record<string, string>;
  connected: boolean;
}) {
  const panel = usePanel(workshopId, panelId);
  const airframe = useAirframe(workshopId, panel.data?.airframeId ?? null);
  const definition = panel.data?.definition;
  const [device, setDevice] = useState<BrowserPanel | null>(null);
  const [linkState, setLinkState] = useState<BrowserLinkState | null>(null);
  const [closeReason, setCloseReason] = useState<string | null>(null);
  const [states, setStates] = useState<Record<string, ExpectedState> | undefined>(undefined);
  const virtual = kind === "virtual";
  const faultKey = JSON.stringify(faults);

  useEffect(() => {
    if (!virtual || finished || !definition || !airframe.data) return;
    const d = new BrowserPanel(definition, airframe.data.channels, JSON.parse(faultKey) as Fault[]);
    setDevice(d);
    const stop = hostInBrowser(d, runId, panelId, (s, reason) => {
      setLinkState(s);
      if (reason) setCloseReason(reason);
    });
    const timer = setInterval(() => setStates(d.shown()), 100);
    return () => {
      clearInterval(timer);
      stop();
    };
  }, [virtual, finished, definition, airframe.data, runId, panelId, faultKey]);

  useEffect(() => {
    if (device) device.speed = speed;
  }, [device, speed]);

  const arrangement = useMemo(() => (definition ? arrange(definition) : null), [definition]);
  if (!definition || !arrangement) return <p className="text-sm text-ink-soft">Reading the panel…</p>;

  const failing = definition.elements.filter((e) => statuses[elementKey(panelId, e.id)] === "fail");
  const a = arrangement;
  if (definition.elements.length === 0 && !definition.layout) Object.assign(a, { width: 240, height: 50, cell: 44 });
  const pad = a.cell * 0.7;
  const vb = `${-pad} ${-pad} ${a.width + pad * 2} ${a.height + pad * 2}`;

  return (
    <section className="flex flex-col gap-2" aria-label={`Panel ${definition.name}`}>
      <header className="flex flex-wrap items-baseline gap-3">
        <h3 className="font-semibold">{panel.data?.name ?? definition.name}</h3>
        <span className="font-mono text-xs" data-testid={`link-${panelId}`}>
          {kind} link: {connected ? "● connected" : "○ not connected"}
          {virtual && linkState && ` · this browser: ${LINK_WORDS[linkState]}`}
          {virtual && closeReason && linkState === "closed" && ` (${closeReason})`}
        </span>
      </header>
      {virtual && (
        <p className="text-xs text-ink-soft" aria-label="Injected faults">
          {faults.length === 0
            ? "No injected fault known in this browser: the virtual panel plays healthy."
            : `Injected: ${faults.map((f) => `▲ ${FAULT_WORDS[f.kind]}${"element" in f ? ` on ${f.element}` : ` ${f.fromMs}–${f.toMs} ms`}`).join(" · ")}`}
        </p>
      )}
      <div className="relative">
        <PanelDrawing panel={definition} states={virtual ? states : undefined} title={`${definition.name} as it shows now`} className="block" />
        <svg viewBox={vb} className="pointer-events-none absolute inset-0 h-full w-full" aria-hidden="true">
          {a.items.map((item) => {
            const bad = item.elements.filter((e) => statuses[elementKey(panelId, e.id)] === "fail");
            if (bad.length === 0) return null;
            const c = a.cell;
            return (
              <g key={item.elements[0].id} transform={`translate(${item.x} ${item.y})`} data-testid={`fail-mark-${bad.map((e) => e.id).join("-")}`}>
                <rect x={-c * 0.6} y={-c * 0.6} width={c * 1.2} height={c * 1.25} fill="none" stroke="#c4473c" strokeWidth={c * 0.05} strokeDasharray={`${c * 0.12} ${c * 0.06}`} />
                <path d={`M ${c * 0.42} ${-c * 0.6} l ${c * 0.18} 0 l 0 ${c * 0.18} z`} fill="#c4473c" />
                <text x={0} y={-c * 0.66} textAnchor="middle" fontSize={c * 0.16} fontWeight={700} fill="#fbfaf6" stroke="#c4473c" strokeWidth={c * 0.05} paintOrder="stroke" fontFamily="ui-monospace, monospace">
                  ✕ FAIL {bad.map((e) => e.label).join(", ")}
                </text>
              </g>
            );
          })}
        </svg>
      </div>
      <ul className="flex flex-wrap gap-2 text-sm" aria-label={`Failing elements of ${definition.name}`}>
        {failing.length === 0 ? (
          <li className="text-ink-soft">No element has failed so far.</li>
        ) : (
          failing.map((e) => (
            <li key={e.id} className="flex items-center gap-1" data-testid={`failing-${e.id}`}>
              <StatusTag status="fail" /> {e.label}
            </li>
          ))
        )}
      </ul>
    </section>
  );
}
