import { useEffect, useState } from "react";
import type { ExpectedState } from "../../../shared/expect";

/**
 * A virtual panel can live in its own window (a second screen beside the console, or a tablet
 * propped where the panel will go). That window says so on a BroadcastChannel several times a
 * second, with what it draws; the console then leaves the link to it and draws those states
 * instead of hosting a second copy of the panel (the bench would take the newer connection and
 * drop the older, and the two would fight).
 */
const CHANNEL = "panelproof.virtual-panels";
/** Silence for this long means the window closed or froze: the console may host again. */
export const ELSEWHERE_STALE_MS = 1500;
export const ELSEWHERE_EVERY_MS = 200;

export type ElsewhereLinkState = "connecting" | "connected" | "unplugged" | "closed";

interface HostingMessage {
  type: "hosting";
  runId: string;
  panelId: string;
  linkState: ElsewhereLinkState | null;
  states: Record<string, ExpectedState>;
}
interface GoneMessage {
  type: "gone";
  runId: string;
  panelId: string;
}
type Message = HostingMessage | GoneMessage;

function channel(): BroadcastChannel | null {
  return typeof BroadcastChannel === "undefined" ? null : new BroadcastChannel(CHANNEL);
}

/** For the panel's own window: announce hosting with what it shows; `gone` when it closes. */
export function announceHosting(runId: string, panelId: string) {
  const bc = channel();
  return {
    post(states: Record<string, ExpectedState>, linkState: ElsewhereLinkState | null) {
      bc?.postMessage({ type: "hosting", runId, panelId, linkState, states } satisfies Message);
    },
    close() {
      bc?.postMessage({ type: "gone", runId, panelId } satisfies Message);
      bc?.close();
    },
  };
}

/** For the console: what another window hosting this panel shows, or null if none does. */
export function useVirtualPanelElsewhere(runId: string, panelId: string): { states: Record<string, ExpectedState>; linkState: ElsewhereLinkState | null } | null {
  const [last, setLast] = useState<{ at: number; states: Record<string, ExpectedState>; linkState: ElsewhereLinkState | null } | null>(null);
  useEffect(() => {
    const bc = channel();
    if (!bc) return;
    bc.onmessage = (e: MessageEvent<Message>) => {
      const m = e.data;
      if (!m || m.runId !== runId || m.panelId !== panelId) return;
      if (m.type === "gone") setLast(null);
      else if (m.type === "hosting") setLast({ at: Date.now(), states: m.states, linkState: m.linkState });
    };
    const timer = setInterval(() => setLast((l) => (l && Date.now() - l.at > ELSEWHERE_STALE_MS ? null : l)), ELSEWHERE_EVERY_MS);
    return () => {
      clearInterval(timer);
      bc.close();
    };
  }, [runId, panelId]);
  return last ? { states: last.states, linkState: last.linkState } : null;
}
