import { useEffect } from "react";
import type { ChannelDefinition } from "../../../shared/recording/channels";
import type { Panel } from "../../../shared/panel/schema";
import type { Fault } from "../../../shared/virtual/faults";
import { VirtualPanelDevice } from "../../../shared/virtual/panel-device";

/**
 * The browser as a panel with no hardware: the shared virtual panel
 * (shared/virtual/panel-device.ts) on the page's clock, put on the run's panel socket by
 * `hostInBrowser`.
 */
const TICK_MS = 20;

export class BrowserPanel extends VirtualPanelDevice {
  constructor(panel: Panel, definitions: readonly ChannelDefinition[], faults: readonly Fault[]) {
    super({ panel, channels: definitions, faults, deviceId: "00000000b0b0b0b0" });
  }
}

export type BrowserLinkState = "connecting" | "connected" | "unplugged" | "closed";

/** Puts a BrowserPanel on the run's panel socket; reconnects after a disconnect fault ends. */
export function hostInBrowser(device: BrowserPanel, runId: string, panelId: string, onState: (s: BrowserLinkState, reason?: string) => void) {
  const url = `${location.protocol === "https:" ? "wss" : "ws"}://${location.host}/ws/bench/runs/${encodeURIComponent(runId)}/panels/${encodeURIComponent(panelId)}`;
  let ws: WebSocket | null = null;
  let stopped = false;
  let unplugged = false;
  const connect = () => {
    const socket = new WebSocket(url);
    ws = socket;
    socket.binaryType = "arraybuffer";
    onState("connecting");
    socket.onopen = () => {
      onState("connected");
      for (const bytes of device.powerUp()) socket.send(bytes);
    };
    socket.onmessage = (e) => {
      if (!(e.data instanceof ArrayBuffer) || device.disconnectedNow()) return;
      for (const out of device.receiveBytes(new Uint8Array(e.data))) if (socket.readyState === WebSocket.OPEN) socket.send(out);
    };
    socket.onclose = (e) => {
      if (ws === socket) ws = null;
      if (!unplugged && !stopped) {
        stopped = true;
        onState("closed", e.reason || `closed (${e.code})`);
      }
    };
  };
  const timer = setInterval(() => {
    if (stopped) return;
    const down = device.disconnectedNow();
    if (down && ws && !unplugged) {
      unplugged = true;
      ws.close();
      ws = null;
      onState("unplugged");
    } else if (!down && unplugged && !ws) {
      unplugged = false;
      connect();
    }
    if (down || !ws || ws.readyState !== WebSocket.OPEN) return;
    for (const bytes of device.takeOutgoing()) ws.send(bytes);
    const periodic = device.periodic();
    if (periodic) ws.send(periodic);
  }, TICK_MS);
  connect();
  return () => {
    stopped = true;
    clearInterval(timer);
    ws?.close(1000, "virtual panel closed");
  };
}

/**
 * Keeps a hosted virtual panel in step with the run while it plays: injected faults (compared by
 * their JSON, so a fresh array of the same faults changes nothing) and the replay speed. The
 * panel keeps its link through both.
 */
export function useDeviceFollowsRun(device: VirtualPanelDevice | null, faults: readonly Fault[], speed: number) {
  const faultKey = JSON.stringify(faults);
  useEffect(() => {
    device?.setFaults(JSON.parse(faultKey) as Fault[]);
  }, [device, faultKey]);
  useEffect(() => {
    if (device) device.speed = speed;
  }, [device, speed]);
}
