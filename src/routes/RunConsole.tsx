import { useQueryClient } from "@tanstack/react-query";
import { useEffect, useRef, useState } from "react";
import { Link, useOutletContext, useParams } from "react-router";
import type { WorkshopDetail } from "../../shared/api/workshops";
import type { Fault } from "../../shared/virtual/faults";
import { Button, Card, ErrorNote, Loading, PageTitle } from "../components/ui";
import { useLiveRun } from "../features/runs/live";
import { MismatchTable } from "../features/runs/MismatchTable";
import { PanelLive } from "../features/runs/PanelLive";
import { runKeys, useControlRun, useMismatches, useRun, useRunReport, type ControlAction } from "../features/runs/queries";
import { rememberedRunFaults } from "../features/runs/virtual-panel";
import { clock, StateTag } from "../features/runs/words";

const SPEEDS = [0.5, 1, 2, 4, 8, 16];
const DONE = ["finished", "failed"];

/**
 * The run console: transport (play, pause, step, seek, speed; keys: space, arrows, "n" for the
 * next mismatch), the live state from the watcher socket, each panel drawn as it shows now with
 * failing elements marked, and the mismatch table (a click seeks there).
 */
export function RunConsole() {
  const w = useOutletContext<WorkshopDetail>();
  const { runId = "" } = useParams();
  const canDrive = w.abilities.includes("bench.write");
  const qc = useQueryClient();
  const detail = useRun(w.id, runId);
  const stored = useMismatches(w.id, runId);
  const report = useRunReport(w.id, runId);
  const live = useLiveRun(runId, detail.data, stored.data);
  const control = useControlRun(w.id, runId);
  const [dragMs, setDragMs] = useState<number | null>(null);

  const player = live.player;
  const state = player?.state ?? detail.data?.state ?? "idle";
  const finished = DONE.includes(state);
  const positionMs = player?.positionMs ?? 0;
  const durationMs = player?.durationMs ?? detail.data?.durationMs ?? 0;
  const speed = player?.speed ?? detail.data?.speed ?? 1;
  const playing = state === "playing";

  // Final results come from the stored log: read them again once the run has finished.
  const wasFinished = useRef(false);
  useEffect(() => {
    if (finished && !wasFinished.current) {
      wasFinished.current = true;
      void qc.invalidateQueries({ queryKey: runKeys.detail(w.id, runId) });
      void qc.invalidateQueries({ queryKey: runKeys.mismatches(w.id, runId) });
      void qc.invalidateQueries({ queryKey: runKeys.report(w.id, runId) });
      void qc.invalidateQueries({ queryKey: runKeys.all(w.id) });
    }
  }, [finished, qc, w.id, runId]);

  const send = (a: ControlAction) => {
    if (!canDrive || finished) return;
    control.mutate(a);
  };

  const keyRef = useRef<(e: KeyboardEvent) => void>(() => undefined);
  keyRef.current = (e: KeyboardEvent) => {
    const target = e.target as HTMLElement | null;
    if (target && (target.tagName === "INPUT" || target.tagName === "SELECT" || target.tagName === "TEXTAREA")) return;
    if (e.key === " ") {
      // A focused button or link takes space itself.
      if (target && (target.tagName === "BUTTON" || target.tagName === "A")) return;
      e.preventDefault();
      send({ action: playing ? "pause" : "play" });
    } else if (e.key === "ArrowRight") {
      e.preventDefault();
      send({ action: "step" });
    } else if (e.key === "ArrowLeft") {
      e.preventDefault();
      send({ action: "seek", toMs: Math.max(0, Math.round(positionMs - 1000)) });
    } else if (e.key === "n" || e.key === "N") {
      const next = live.mismatches.find((m) => m.startMs > positionMs + 1);
      if (next) send({ action: "seek", toMs: Math.round(next.startMs) });
    }
  };
  useEffect(() => {
    const on = (e: KeyboardEvent) => keyRef.current(e);
    window.addEventListener("keydown", on);
    return () => window.removeEventListener("keydown", on);
  }, []);

  if (detail.isPending) return <Loading what="Opening the run" />;
  if (detail.error) return <ErrorNote error={detail.error} />;
  const run = detail.data;
  const linkInputs = report.data?.panels ?? [];
  const labels: Record<string, string> = Object.fromEntries(run.elements.map((e) => [e.elementId, e.label]));
  const failCount = Object.values(live.statuses).filter((s) => s === "fail").length;

  return (
    <div className="flex flex-col gap-5">
      <PageTitle sub={`${run.recordingName} · ${run.panelIds.length} ${run.panelIds.length === 1 ? "panel" : "panels"}`}>{run.name}</PageTitle>
      <p className="flex gap-4">
        <Link to={`/w/${w.id}/runs`} className="text-calm underline">
          ← All runs
        </Link>
        <Link to={`/w/${w.id}/runs/${runId}/report`} className="text-calm underline">
          Report
        </Link>
      </p>
      <Card
        title="Transport"
        aside={
          <span className="flex items-center gap-3" role="status" aria-label="Run state">
            <StateTag state={state} />
            <span className="font-mono text-sm" data-testid="position">
              {clock(dragMs ?? positionMs)} / {clock(durationMs)}
            </span>
            <span className="font-mono text-sm">{failCount === 0 ? "● no failure" : `✕ ${failCount} failing`}</span>
          </span>
        }
      >
        <div className="flex flex-wrap items-center gap-3">
          {playing ? (
            <Button type="button" tone="primary" onClick={() => send({ action: "pause" })} disabled={!canDrive} aria-keyshortcuts="Space">
              ❚❚ Pause
            </Button>
          ) : (
            <Button type="button" tone="primary" onClick={() => send({ action: "play" })} disabled={!canDrive || finished} aria-keyshortcuts="Space">
              ▶ Play
            </Button>
          )}
          <Button type="button" onClick={() => send({ action: "step" })} disabled={!canDrive || finished} aria-keyshortcuts="ArrowRight">
            Step ▸
          </Button>
          <Button
            type="button"
            onClick={() => {
              const next = live.mismatches.find((m) => m.startMs > positionMs + 1);
              if (next) send({ action: "seek", toMs: Math.round(next.startMs) });
            }}
            disabled={!canDrive || finished || live.mismatches.length === 0}
            aria-keyshortcuts="N"
          >
            Next mismatch
          </Button>
          <label className="flex items-center gap-2 text-sm font-semibold">
            Speed
            <select
              value={String(speed)}
              onChange={(e) => send({ action: "speed", speed: Number(e.target.value) })}
              disabled={!canDrive || finished}
              className="rounded-md border border-rule bg-card px-2 py-1.5 font-normal"
            >
              {[...new Set([...SPEEDS, speed])].sort((a, b) => a - b).map((s) => (
                <option key={s} value={s}>
                  {s}×
                </option>
              ))}
            </select>
          </label>
          {canDrive && !finished && (
            <Button type="button" tone="danger" onClick={() => send({ action: "stop" })}>
              ■ Stop and judge
            </Button>
          )}
        </div>
        <label className="mt-4 flex flex-col gap-1 text-sm font-semibold">
          Position
          <input
            type="range"
            min={0}
            max={Math.max(1, durationMs)}
            step={100}
            value={dragMs ?? positionMs}
            disabled={!canDrive || finished}
            onChange={(e) => setDragMs(Number(e.target.value))}
            onPointerUp={() => {
              if (dragMs !== null) send({ action: "seek", toMs: Math.round(dragMs) });
              setDragMs(null);
            }}
            onKeyUp={() => {
              if (dragMs !== null) send({ action: "seek", toMs: Math.round(dragMs) });
              setDragMs(null);
            }}
            className="w-full"
          />
        </label>
        <p className="mt-2 text-xs text-ink-soft">Keys: space plays or pauses, → steps, ← goes back a second, N goes to the next mismatch.</p>
        <ErrorNote error={control.error ?? (live.error ? new Error(live.error) : null)} />
        {finished && (
          <p className="mt-3 text-sm" role="status">
            ■ The run has {state === "failed" ? "failed" : "finished"}.{" "}
            <Link to={`/w/${w.id}/runs/${runId}/report`} className="text-calm underline">
              Open the report
            </Link>
          </p>
        )}
      </Card>
      <Card title="Panels">
        <div className="flex flex-col gap-6">
          {run.panelIds.map((panelId) => {
            const input = linkInputs.find((p) => p.panelId === panelId)?.link as { kind: string; faults?: unknown } | undefined;
            // The injected faults: from the report if it ever carries them as a list, else as set up in this browser.
            const faults: Fault[] = Array.isArray(input?.faults) ? (input.faults as Fault[]) : (rememberedRunFaults(runId, panelId) ?? []);
            const status = live.links[panelId];
            return (
              <PanelLive
                key={panelId}
                workshopId={w.id}
                runId={runId}
                panelId={panelId}
                kind={input?.kind ?? status?.kind ?? "virtual"}
                faults={faults}
                speed={speed}
                finished={finished || !canDrive || !input}
                statuses={live.statuses}
                connected={status?.connected ?? false}
              />
            );
          })}
        </div>
      </Card>
      <Card title="Mismatches">
        <MismatchTable mismatches={live.mismatches} labels={labels} onSeek={canDrive && !finished ? (ms) => send({ action: "seek", toMs: Math.round(ms) }) : undefined} />
      </Card>
    </div>
  );
}
