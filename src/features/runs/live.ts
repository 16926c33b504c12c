import { useEffect, useRef, useState } from "react";
import { watcherMessage, type ChecksView, type MismatchView, type RunDetail, type WatcherMessage } from "../../../shared/api/runs";

export type LiveMismatch = Omit<MismatchView, "id"> & { id?: string };
type Player = Extract<WatcherMessage, { type: "player" }>;
type LinkStatus = Extract<WatcherMessage, { type: "link" }>["link"];

export interface LiveRun {
  player: Player | null;
  statuses: Record<string, string>;
  links: Record<string, LinkStatus>;
  mismatches: LiveMismatch[];
  /** Set-up check, input walk, observation checkpoints: as the last watcher message (or the detail) told. */
  checks: ChecksView | null;
  error: string | null;
  socket: "connecting" | "open" | "closed";
}

export const elementKey = (panelId: string, elementId: string) => `${panelId}/${elementId}`;
const mismatchKey = (m: LiveMismatch) => `${m.panelId}/${m.elementId}/${m.track}/${m.kind}/${m.startMs}`;

/** Merges mismatches by element, track, kind and start: a live update replaces the earlier copy. */
export function mergeMismatches(into: LiveMismatch[], more: LiveMismatch[]): LiveMismatch[] {
  const byKey = new Map(into.map((m) => [mismatchKey(m), m]));
  for (const m of more) byKey.set(mismatchKey(m), { ...byKey.get(mismatchKey(m)), ...m });
  return [...byKey.values()].sort((a, b) => a.startMs - b.startMs);
}

/**
 * The watcher socket /ws/runs/:runId: every message validated with the zod schema, folded
 * into the player state, element statuses, link states and mismatches.
 */
export function useLiveRun(runId: string, detail: RunDetail | undefined, stored: MismatchView[] | undefined): LiveRun {
  const [live, setLive] = useState<LiveRun>({ player: null, statuses: {}, links: {}, mismatches: [], checks: null, error: null, socket: "connecting" });
  const seeded = useRef(false);

  useEffect(() => {
    if (!detail) return;
    const final = detail.state === "finished" || detail.state === "failed";
    if (seeded.current && !final) return;
    seeded.current = true;
    if (final) {
      // The stored judgement is the last word once the run has finished.
      setLive((l) => ({ ...l, statuses: { ...l.statuses, ...Object.fromEntries(detail.elements.map((e) => [elementKey(e.panelId, e.elementId), e.status])) } }));
      return;
    }
    setLive((l) => ({
      ...l,
      checks: l.checks ?? detail.checks ?? null,
      player: l.player ?? { type: "player", state: detail.state, positionMs: detail.positionMs, speed: detail.speed, durationMs: detail.durationMs },
      statuses: { ...Object.fromEntries(detail.elements.map((e) => [elementKey(e.panelId, e.elementId), e.status])), ...l.statuses },
      links: { ...Object.fromEntries(detail.links.map((k) => [k.panelId, k])), ...l.links },
    }));
  }, [detail]);

  useEffect(() => {
    // Once the run has finished, the stored mismatches (judged from the seen log) replace the live ones.
    if (stored) setLive((l) => ({ ...l, mismatches: l.player && (l.player.state === "finished" || l.player.state === "failed") ? mergeMismatches([], stored) : mergeMismatches(stored, l.mismatches) }));
  }, [stored]);

  useEffect(() => {
    const url = `${location.protocol === "https:" ? "wss" : "ws"}://${location.host}/ws/runs/${encodeURIComponent(runId)}`;
    const ws = new WebSocket(url);
    ws.onopen = () => setLive((l) => ({ ...l, socket: "open" }));
    ws.onclose = (e) => setLive((l) => ({ ...l, socket: "closed", error: e.code >= 4000 && e.code !== 4000 ? e.reason || `closed (${e.code})` : l.error }));
    ws.onmessage = (e) => {
      let parsed: ReturnType<typeof watcherMessage.safeParse>;
      try {
        parsed = watcherMessage.safeParse(JSON.parse(String(e.data)));
      } catch {
        return;
      }
      if (!parsed.success) return;
      const m = parsed.data;
      setLive((l) => {
        switch (m.type) {
          case "player":
            return { ...l, player: m };
          case "element":
            return { ...l, statuses: { ...l.statuses, [elementKey(m.panelId, m.elementId)]: m.status } };
          case "link":
            return { ...l, links: { ...l.links, [m.link.panelId]: m.link } };
          case "mismatch":
            return { ...l, mismatches: mergeMismatches(l.mismatches, [m.mismatch]) };
          case "error":
            return { ...l, error: m.message };
          case "checks":
            return { ...l, checks: m.checks };
        }
      });
    };
    return () => ws.close();
  }, [runId]);

  return live;
}
