import { HandButtons, type ButtonElement } from "./HandButtons";
import { useEffect, useMemo, useRef, useState } from "react";
import type { Element } from "../../../shared/elements/kinds";
import type { ExpectedState } from "../../../shared/expect";
import type { Fault } from "../../../shared/virtual/faults";
import type { HeldInput } from "../../../shared/virtual/panel-device";
import { PanelDrawing, arrange } from "../../components/PanelDrawing";
import { photoUrl, usePanel } from "../panels/queries";
import { PanelPhotoMarks } from "./PanelPhotoMarks";
import { useAirframe } from "../recordings/queries";
import { elementKey } from "./live";
import { BrowserPanel, hostInBrowser, useDeviceFollowsRun, type BrowserLinkState } from "./virtual-panel";
import { FailMark } from "./FailMark";
import { useVirtualPanelElsewhere } from "./virtual-elsewhere";
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
  observed = [],
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
  /** Elements watched by eye: marked on the list under the drawing. */
  observed?: string[];
}) {
  const panel = usePanel(workshopId, panelId);
  const airframe = useAirframe(workshopId, panel.data?.airframeId ?? null);
  const definition = panel.data?.definition;
  const [device, setDevice] = useState<BrowserPanel | null>(null);
  const [linkState, setLinkState] = useState<BrowserLinkState | null>(null);
  const [closeReason, setCloseReason] = useState<string | null>(null);
  const [states, setStates] = useState<Record<string, ExpectedState> | undefined>(undefined);
  const [held, setHeld] = useState<Record<string, HeldInput>>({});
  // The panel as drawn, or the builder's photo of the real one with markers (when it has both).
  const [view, setView] = useState<"drawing" | "photo">("drawing");
  const virtual = kind === "virtual";
  // Another window of this browser may play the panel (its own window beside the console): then it holds the link.
  const elsewhere = useVirtualPanelElsewhere(runId, panelId);
  const hostHere = virtual && !finished && !elsewhere;
  const initialFaults = useRef(faults);
  initialFaults.current = faults;

  useEffect(() => {
    if (!hostHere || !definition || !airframe.data) return;
    const d = new BrowserPanel(definition, airframe.data.channels, initialFaults.current);
    setDevice(d);
    setHeld({});
    const stop = hostInBrowser(d, runId, panelId, (s, reason) => {
      setLinkState(s);
      if (reason) setCloseReason(reason);
    });
    const timer = setInterval(() => setStates(d.shown()), 100);
    return () => {
      clearInterval(timer);
      stop();
      setDevice(null);
    };
  }, [hostHere, definition, airframe.data, runId, panelId]);

  useDeviceFollowsRun(device, faults, speed);

  /** The builder's hand on this browser's panel: the input rests there and the link says so. */
  const move = (el: Element, to: HeldInput | null) => {
    if (!device) return;
    if (to) device.moveInput(el.id, to);
    else device.releaseInput(el.id);
    setHeld(Object.fromEntries(device.heldInputs()));
  };

  const arrangement = useMemo(() => (definition ? arrange(definition) : null), [definition]);
  if (!definition || !arrangement) return <p className="text-sm text-ink-soft">Reading the panel…</p>;

  const failing = definition.elements.filter((e) => statuses[elementKey(panelId, e.id)] === "fail");
  const photoMarkers = definition.photo?.photoKey ? definition.photo.markers : null;
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
          {virtual && elsewhere && " · played in its own window"}
          {virtual && !elsewhere && linkState && ` · this browser: ${LINK_WORDS[linkState]}`}
          {virtual && closeReason && linkState === "closed" && ` (${closeReason})`}
        </span>
        {virtual && !finished && !elsewhere && (
          <a href={`/w/${workshopId}/runs/${runId}/panels/${panelId}/virtual`} target="_blank" rel="opener" className="text-xs text-calm underline">
            Open in its own window
          </a>
        )}
      </header>
      {virtual && (
        <p className="text-xs text-ink-soft" aria-label="Injected faults">
          {faults.length === 0
            ? "No injected fault known in this browser: the virtual panel plays healthy."
            : `Injected: ${faults.map((f) => `▲ ${FAULT_WORDS[f.kind]}${"element" in f ? ` on ${f.element}` : ` ${f.fromMs}–${f.toMs} ms`}`).join(" · ")}`}
        </p>
      )}
      {photoMarkers && (
        <div className="flex gap-1 text-xs" role="radiogroup" aria-label={`Show ${definition.name} as`}>
          {(["drawing", "photo"] as const).map((v) => (
            <button
              key={v}
              type="button"
              role="radio"
              aria-checked={view === v}
              onClick={() => setView(v)}
              className={`rounded-md border px-2.5 py-1 font-semibold ${view === v ? "border-bezel bg-bezel text-dial" : "border-rule bg-card"}`}
            >
              {v === "drawing" ? "Drawing" : "Photo with markers"}
            </button>
          ))}
        </div>
      )}
      {photoMarkers && view === "photo" && panel.data ? (
        <PanelPhotoMarks
          src={photoUrl(workshopId, panelId, panel.data.updatedAt)}
          name={panel.data.name}
          elements={definition.elements}
          markers={photoMarkers}
          failing={new Set(failing.map((e) => e.id))}
        />
      ) : (
      <div className="relative">
        <PanelDrawing panel={definition} states={elsewhere ? elsewhere.states : virtual ? states : undefined} title={`${definition.name} as it shows now`} className="block" />
        <svg viewBox={vb} className="pointer-events-none absolute inset-0 h-full w-full" aria-hidden="true">
          {a.items.map((item) => {
            const bad = item.elements.filter((e) => statuses[elementKey(panelId, e.id)] === "fail");
            if (bad.length === 0) return null;
            return (
              <FailMark key={item.elements[0].id} cell={a.cell} x={item.x} y={item.y} labels={bad.map((e) => e.label)} prefix="✕ FAIL" testId={`fail-mark-${bad.map((e) => e.id).join("-")}`} />
            );
          })}
        </svg>
      </div>
      )}
      {device && <HandControls elements={definition.elements} held={held} states={states} onMove={move} />}
      {device && <HandButtons buttons={definition.elements.filter((e): e is ButtonElement => e.kind === "button" && !e.placeholder)} onPress={(el, pressed) => device.pressButton(el.id, pressed)} />}
      {observed.length > 0 && (
        <p className="text-xs text-ink-soft" data-testid={`observed-${panelId}`}>
          ◉ Watched by eye: {definition.elements.filter((e) => observed.includes(e.id)).map((e) => e.label).join(", ")}
        </p>
      )}
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

/**
 * The virtual panel's inputs under the builder's hand: each switch, lever and breaker follows the
 * recording until moved here; then it rests where it was put and the link sends an input event,
 * as a real board does (for the set-up check and the input walk).
 */
function HandControls({
  elements,
  held,
  states,
  onMove,
}: {
  elements: readonly Element[];
  held: Record<string, HeldInput>;
  states: Record<string, ExpectedState> | undefined;
  onMove: (el: Element, to: HeldInput | null) => void;
}) {
  const inputs = elements.filter((e) => !e.placeholder && (e.kind === "switch" || e.kind === "lever" || e.kind === "breaker"));
  if (inputs.length === 0) return null;
  return (
    <fieldset className="flex flex-wrap items-end gap-4 rounded-md border border-rule px-3 py-2" aria-label="Inputs of this browser's panel">
      <legend className="px-1 text-xs font-semibold text-ink-soft">Your hand on this browser's panel</legend>
      {inputs.map((el) => {
        const h = held[el.id];
        const options = el.kind === "breaker" ? ["in", "pulled"] : el.kind === "switch" || el.kind === "lever" ? el.positions : [];
        const current = h ? h.position : el.kind === "breaker" ? (states?.[el.id]?.breaker ?? "") : (states?.[el.id]?.position ?? "");
        return (
          <label key={el.id} className="flex flex-col gap-1 text-xs font-semibold">
            {el.label}
            <select
              aria-label={`Move ${el.label}`}
              value={h ? h.position : ""}
              onChange={(e) => {
                const v = e.target.value;
                if (!v) onMove(el, null);
                else onMove(el, el.kind === "breaker" ? { kind: "breaker", position: v as "in" | "pulled" } : { kind: "position", position: v });
              }}
              className="rounded-md border border-rule bg-card px-2 py-1 font-normal"
            >
              <option value="">follows the recording{current && !h ? ` (${current})` : ""}</option>
              {options.map((p) => (
                <option key={p} value={p}>
                  {el.kind === "breaker" ? (p === "in" ? "pushed in" : "pulled") : p} (by hand)
                </option>
              ))}
            </select>
          </label>
        );
      })}
    </fieldset>
  );
}
