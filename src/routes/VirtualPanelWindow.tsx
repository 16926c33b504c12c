import { HandButtons, type ButtonElement } from "../features/runs/HandButtons";
import { useEffect, useRef, useState } from "react";
import { Link, useOutletContext, useParams } from "react-router";
import type { WorkshopDetail } from "../../shared/api/workshops";
import type { Element } from "../../shared/elements/kinds";
import type { ExpectedState } from "../../shared/expect";
import type { Fault } from "../../shared/virtual/faults";
import type { HeldInput } from "../../shared/virtual/panel-device";
import { PanelDrawing } from "../components/PanelDrawing";
import { Card, ErrorNote, Loading, PageTitle } from "../components/ui";
import { usePanel } from "../features/panels/queries";
import { useAirframe } from "../features/recordings/queries";
import { useLiveRun } from "../features/runs/live";
import { useRunFollowing } from "../features/runs/bench-queries";
import { announceHosting, ELSEWHERE_EVERY_MS } from "../features/runs/virtual-elsewhere";
import { BrowserPanel, hostInBrowser, useDeviceFollowsRun, type BrowserLinkState } from "../features/runs/virtual-panel";
import { clock, FAULT_WORDS, StateTag } from "../features/runs/words";

const LINK_WORDS: Record<BrowserLinkState, string> = {
  connecting: "○ connecting to the bench",
  connected: "● connected to the bench",
  unplugged: "◌ unplugged (injected drop)",
  closed: "■ closed",
};

type InputElement = Extract<Element, { kind: "switch" | "lever" | "breaker" }>;
const isInput = (e: Element): e is InputElement => e.kind === "switch" || e.kind === "lever" || e.kind === "breaker";
const FOLLOW = "";

/**
 * One virtual panel of a run in a window of its own: this page is the panel. It joins the run's
 * virtual link, draws what its behaviours show (through the run's injected faults, picked up as
 * they change), and lets the builder move its switches, levers and breakers by hand, which sends
 * input events as a board would. The console, in another window, sees it on a BroadcastChannel
 * and draws these states rather than hosting a second copy.
 */
export function VirtualPanelWindow() {
  const w = useOutletContext<WorkshopDetail>();
  const { runId = "", panelId = "" } = useParams();
  const canDrive = w.abilities.includes("bench.write");
  const detail = useRunFollowing(w.id, runId);
  const live = useLiveRun(runId, detail.data, undefined);
  const panel = usePanel(w.id, panelId);
  const airframe = useAirframe(w.id, panel.data?.airframeId ?? null);
  const definition = panel.data?.definition;
  const [device, setDevice] = useState<BrowserPanel | null>(null);
  const [linkState, setLinkState] = useState<BrowserLinkState | null>(null);
  const [closeReason, setCloseReason] = useState<string | null>(null);
  const [states, setStates] = useState<Record<string, ExpectedState>>({});
  const [held, setHeld] = useState<Record<string, string>>({});
  const linkStateRef = useRef<BrowserLinkState | null>(null);

  const run = detail.data;
  const finished = run ? run.state === "finished" || run.state === "failed" : false;
  const setting = run?.settings?.find((s) => s.panelId === panelId);
  const isVirtualLink = run ? run.panelIds.includes(panelId) && (setting ? setting.kind === "virtual" : true) : false;
  const faults: Fault[] = setting && setting.kind === "virtual" ? setting.faults : [];
  const speed = live.player?.speed ?? run?.speed ?? 1;

  useEffect(() => {
    if (!canDrive || !isVirtualLink || finished || !definition || !airframe.data) return;
    const d = new BrowserPanel(definition, airframe.data.channels, []);
    setDevice(d);
    const announce = announceHosting(runId, panelId);
    const stop = hostInBrowser(d, runId, panelId, (s, reason) => {
      linkStateRef.current = s;
      setLinkState(s);
      if (reason) setCloseReason(reason);
    });
    const timer = setInterval(() => {
      const shown = d.shown();
      setStates(shown);
      announce.post(shown, linkStateRef.current);
    }, ELSEWHERE_EVERY_MS);
    const goodbye = () => announce.close();
    window.addEventListener("pagehide", goodbye);
    return () => {
      window.removeEventListener("pagehide", goodbye);
      clearInterval(timer);
      stop();
      announce.close();
      setDevice(null);
    };
  }, [canDrive, isVirtualLink, finished, definition, airframe.data, runId, panelId]);

  useDeviceFollowsRun(device, faults, speed);

  if (detail.isPending || panel.isPending) return <Loading what="Opening the virtual panel" />;
  if (detail.error || panel.error) return <ErrorNote error={detail.error ?? panel.error} />;
  if (!run || !definition) return <Loading what="Opening the virtual panel" />;

  const inputs = definition.elements.filter(isInput);
  const buttons = definition.elements.filter((e): e is ButtonElement => e.kind === "button" && !e.placeholder);
  const move = (el: InputElement, value: string) => {
    if (!device) return;
    if (value === FOLLOW) device.releaseInput(el.id);
    else device.moveInput(el.id, (el.kind === "breaker" ? { kind: "breaker", position: value } : { kind: "position", position: value }) as HeldInput);
    setHeld((h) => ({ ...h, [el.id]: value }));
    setStates(device.shown());
  };

  let refusal: string | null = null;
  if (!canDrive) refusal = "Only builders can put a virtual panel on the bench.";
  else if (!run.panelIds.includes(panelId)) refusal = "This panel is not part of the run.";
  else if (!isVirtualLink) refusal = `This panel is on a ${setting?.kind} link in this run: the board itself is the panel.`;
  else if (finished) refusal = "The run has finished: the virtual panel is off the bench.";

  return (
    <div className="flex flex-col gap-5">
      <PageTitle sub={`Run “${run.name}” · this window is the panel`}>Virtual panel: {panel.data?.name ?? definition.name}</PageTitle>
      <p className="flex gap-4">
        <Link to={`/w/${w.id}/runs/${runId}`} className="text-calm underline">
          ← Run console
        </Link>
      </p>
      <Card
        title="On the bench"
        aside={
          <span className="flex items-center gap-3" role="status" aria-label="Run state">
            <StateTag state={live.player?.state ?? run.state} />
            <span className="font-mono text-sm">
              {clock(live.player?.positionMs ?? run.positionMs)} / {clock(run.durationMs)} · {speed}×
            </span>
          </span>
        }
      >
        {refusal ? (
          <p className="text-sm" role="alert">
            {refusal}
          </p>
        ) : (
          <div className="flex flex-col gap-3">
            <p className="font-mono text-sm" data-testid="virtual-link-state">
              {linkState ? LINK_WORDS[linkState] : "○ waiting"}
              {closeReason && linkState === "closed" && ` (${closeReason})`}
            </p>
            <p className="text-xs text-ink-soft" aria-label="Injected faults">
              {faults.length === 0
                ? "No injected fault: this panel plays healthy."
                : `Injected: ${faults.map((f) => `▲ ${FAULT_WORDS[f.kind]}${"element" in f ? ` on ${f.element}` : ` ${f.fromMs}–${f.toMs} ms`}`).join(" · ")}`}
            </p>
            <PanelDrawing panel={definition} states={device ? states : undefined} title={`${definition.name} as this virtual panel shows it`} />
          </div>
        )}
      </Card>
      {!refusal && inputs.length + buttons.length > 0 && (
        <Card title="Inputs by hand">
          <p className="mb-3 text-sm text-ink-soft">
            Inputs follow the recording, as if someone moved them on cue. Put one somewhere by hand and it stays there, and the panel reports the move as a board would.
          </p>
          <HandButtons buttons={buttons} onPress={(el, pressed) => device?.pressButton(el.id, pressed)} disabled={!device} />
          <div className="mt-3 grid gap-3 sm:grid-cols-2 lg:grid-cols-3">
            {inputs.map((el) => (
              <label key={el.id} className="flex flex-col gap-1 text-sm font-semibold">
                {el.label}
                <select
                  value={held[el.id] ?? FOLLOW}
                  onChange={(e) => move(el, e.target.value)}
                  disabled={!device}
                  className="rounded-md border border-rule bg-card px-2 py-1.5 font-normal"
                  data-testid={`hand-${el.id}`}
                >
                  <option value={FOLLOW}>follows the recording{states[el.id] ? ` (${states[el.id].position ?? states[el.id].breaker})` : ""}</option>
                  {(el.kind === "breaker" ? ["in", "pulled"] : el.positions).map((p) => (
                    <option key={p} value={p}>
                      {p} by hand
                    </option>
                  ))}
                </select>
              </label>
            ))}
          </div>
        </Card>
      )}
    </div>
  );
}
