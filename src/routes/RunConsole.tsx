import { useQueryClient } from "@tanstack/react-query";
import { useCallback, useEffect, useRef, useState } from "react";
import { Link, useOutletContext, useParams } from "react-router";
import type { ChecksView, ObservationAnswer, RunLinkInput } from "../../shared/api/runs";
import type { WorkshopDetail } from "../../shared/api/workshops";
import type { Fault } from "../../shared/virtual/faults";
import { Button, Card, ErrorNote, Loading, PageTitle } from "../components/ui";
import { usePanel } from "../features/panels/queries";
import { FaultPicker } from "../features/runs/FaultPicker";
import { InputWalkCard } from "../features/runs/InputWalkCard";
import { useLiveRun } from "../features/runs/live";
import { MismatchTable } from "../features/runs/MismatchTable";
import { ObservationList, ObservationQuestion } from "../features/runs/Observations";
import { PanelLive } from "../features/runs/PanelLive";
import { runKeys, useControlRun, useLinkFaults, useMismatches, useRun, useRunChecks, useRunPanels, type ControlAction } from "../features/runs/queries";
import { SetupCheck } from "../features/runs/SetupCheck";
import { clock, StateTag } from "../features/runs/words";
import { ApiError } from "../lib/api";

/** Speeds the player offers (its range is 0.1x to 16x). */
const SPEEDS = [0.1, 0.25, 0.5, 1, 2, 4, 8, 16];
const DONE = ["finished", "failed"];

/** "1:05.2", "65.2" or "65" as recording milliseconds; null when it is none of these. */
export function parseClock(text: string): number | null {
  const t = text.trim();
  const m = /^(?:(\d+):)?(\d+(?:\.\d+)?)$/.exec(t);
  if (!m) return null;
  const minutes = m[1] ? Number(m[1]) : 0;
  const seconds = Number(m[2]);
  if (m[1] && seconds >= 60) return null;
  return Math.round((minutes * 60 + seconds) * 1000);
}

/**
 * The run console: transport (play, pause, step, seek by slider or typed time, speed 0.1x to
 * 16x, a looped segment; keys: space, arrows, N for the next mismatch), the checks beside the
 * replay (set-up check, input walk, questions at observation checkpoints), each panel drawn as
 * it shows now with failing elements marked, a virtual panel's faults changeable while it plays,
 * and the mismatch table (a click seeks there).
 */
export function RunConsole() {
  const w = useOutletContext<WorkshopDetail>();
  const { runId = "" } = useParams();
  const canDrive = w.abilities.includes("bench.write");
  const qc = useQueryClient();
  const detail = useRun(w.id, runId);
  const stored = useMismatches(w.id, runId);
  const live = useLiveRun(runId, detail.data, stored.data);
  const control = useControlRun(w.id, runId);
  const checksMutation = useRunChecks(w.id, runId);
  const faultsMutation = useLinkFaults(w.id, runId);
  const [dragMs, setDragMs] = useState<number | null>(null);
  const [typedTime, setTypedTime] = useState("");
  const [typedError, setTypedError] = useState<string | null>(null);
  const [loopFrom, setLoopFrom] = useState("");
  const [loopTo, setLoopTo] = useState("");
  const [loopError, setLoopError] = useState<string | null>(null);

  const player = live.player;
  const state = player?.state ?? detail.data?.state ?? "idle";
  const finished = DONE.includes(state);
  const positionMs = player?.positionMs ?? 0;
  const durationMs = player?.durationMs ?? detail.data?.durationMs ?? 0;
  const speed = player?.speed ?? detail.data?.speed ?? 1;
  const loop = player?.loop ?? null;
  const playing = state === "playing";
  const checks: ChecksView | null = live.checks ?? detail.data?.checks ?? null;
  const asking = checks?.asking ? (checks.checkpoints.find((c) => c.id === checks.asking) ?? null) : null;
  const walkRunning = checks?.walk?.state === "running";

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
  const nextMismatch = () => live.mismatches.find((m) => m.startMs > positionMs + 1) ?? null;
  const answer = useCallback((a: ObservationAnswer) => asking && checksMutation.mutate({ action: "answer", checkpointId: asking.id, answer: a }), [asking, checksMutation]);

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
      const next = nextMismatch();
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
  const settings: RunLinkInput[] = run.settings ?? [];
  const labels: Record<string, string> = Object.fromEntries(run.elements.map((e) => [e.elementId, e.label]));
  const failCount = Object.values(live.statuses).filter((s) => s === "fail").length;
  const setupBlocked = control.error instanceof ApiError && control.error.code === "setup_mismatch";

  const goTo = () => {
    const ms = parseClock(typedTime);
    if (ms === null) return setTypedError("Type a time like 1:05.2 or 65.2 (seconds).");
    if (ms > durationMs) return setTypedError(`The run ends at ${clock(durationMs)}.`);
    setTypedError(null);
    send({ action: "seek", toMs: ms });
  };
  const setLoop = () => {
    const from = parseClock(loopFrom);
    const to = parseClock(loopTo);
    if (from === null || to === null) return setLoopError("Type both ends like 0:12.0 or 12 (seconds).");
    if (to <= from) return setLoopError("The loop must end after it starts.");
    if (to > durationMs) return setLoopError(`The run ends at ${clock(durationMs)}.`);
    setLoopError(null);
    send({ action: "loop", loop: { fromMs: from, toMs: to } });
  };

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
      {asking && canDrive && !finished && <ObservationQuestion checkpoint={asking} busy={checksMutation.isPending} onAnswer={answer} />}
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
        {checks?.setup && <SetupCheck setup={checks.setup} canDrive={canDrive && !finished} blocked={setupBlocked} onOverride={() => send({ action: "play", override: true })} />}
        <div className="mt-3 flex flex-wrap items-center gap-3">
          {playing ? (
            <Button type="button" tone="primary" onClick={() => send({ action: "pause" })} disabled={!canDrive} aria-keyshortcuts="Space">
              ❚❚ Pause
            </Button>
          ) : (
            <Button type="button" tone="primary" onClick={() => send({ action: "play" })} disabled={!canDrive || finished || walkRunning} aria-keyshortcuts="Space">
              ▶ Play
            </Button>
          )}
          <Button type="button" onClick={() => send({ action: "step" })} disabled={!canDrive || finished || playing} aria-keyshortcuts="ArrowRight">
            Step ▸
          </Button>
          <Button
            type="button"
            onClick={() => {
              const next = nextMismatch();
              if (next) send({ action: "seek", toMs: Math.round(next.startMs) });
            }}
            disabled={!canDrive || finished || live.mismatches.length === 0}
            aria-keyshortcuts="N"
          >
            Next mismatch (N)
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
        {canDrive && !finished && (
          <div className="mt-3 flex flex-wrap items-end gap-6">
            <form
              className="flex items-end gap-2"
              onSubmit={(e) => {
                e.preventDefault();
                goTo();
              }}
            >
              <label className="flex flex-col gap-1 text-sm font-semibold">
                Go to (m:ss.t or seconds)
                <input value={typedTime} onChange={(e) => setTypedTime(e.target.value)} placeholder="0:12.5" aria-invalid={typedError !== null} className="w-28 rounded-md border border-rule bg-card px-2 py-1.5 font-mono font-normal" />
              </label>
              <Button type="submit">Go</Button>
            </form>
            <form
              className="flex items-end gap-2"
              onSubmit={(e) => {
                e.preventDefault();
                setLoop();
              }}
              aria-label="Loop a segment"
            >
              <label className="flex flex-col gap-1 text-sm font-semibold">
                Loop from
                <input value={loopFrom} onChange={(e) => setLoopFrom(e.target.value)} placeholder="0:02.0" aria-invalid={loopError !== null} className="w-24 rounded-md border border-rule bg-card px-2 py-1.5 font-mono font-normal" />
              </label>
              <label className="flex flex-col gap-1 text-sm font-semibold">
                to
                <input value={loopTo} onChange={(e) => setLoopTo(e.target.value)} placeholder="0:06.0" aria-invalid={loopError !== null} className="w-24 rounded-md border border-rule bg-card px-2 py-1.5 font-mono font-normal" />
              </label>
              <Button type="submit">Loop</Button>
              {loop && (
                <Button type="button" onClick={() => send({ action: "loop", loop: null })}>
                  Stop looping
                </Button>
              )}
            </form>
          </div>
        )}
        {loop && (
          <p className="mt-2 font-mono text-sm" role="status" data-testid="loop">
            ↻ looping {clock(loop.fromMs)} – {clock(loop.toMs)}
          </p>
        )}
        {(typedError || loopError) && <p className="mt-2 text-sm text-bad">✕ {typedError ?? loopError}</p>}
        <p className="mt-2 text-xs text-ink-soft">Keys: space plays or pauses, → steps one frame, ← goes back a second, N goes to the next mismatch; at a question, Y, N or S answers.</p>
        <ErrorNote error={(setupBlocked ? null : control.error) ?? checksMutation.error ?? faultsMutation.error ?? (live.error ? new Error(live.error) : null)} />
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
            const setting = settings.find((s) => s.panelId === panelId);
            const faults: Fault[] = setting?.kind === "virtual" ? setting.faults : [];
            const status = live.links[panelId];
            return (
              <div key={panelId} className="flex flex-col gap-3">
                <PanelLive
                  workshopId={w.id}
                  runId={runId}
                  panelId={panelId}
                  kind={setting?.kind ?? status?.kind ?? "virtual"}
                  faults={faults}
                  speed={speed}
                  finished={finished || !canDrive || !setting}
                  statuses={live.statuses}
                  connected={status?.connected ?? false}
                  observed={(checks?.observed ?? []).filter((o) => o.panelId === panelId).map((o) => o.elementId)}
                />
                {setting?.kind === "virtual" && canDrive && !finished && (
                  <LiveFaults workshopId={w.id} panelId={panelId} faults={faults} busy={faultsMutation.isPending} onChange={(next) => faultsMutation.mutate({ panelId, faults: next })} />
                )}
              </div>
            );
          })}
        </div>
      </Card>
      {canDrive && (
        <Card title="Input walk">
          <InputWalkCard
            walk={checks?.walk ?? null}
            canStart={!finished && !playing}
            busy={checksMutation.isPending}
            onStart={(timeoutSec) => checksMutation.mutate({ action: "walk_start", timeoutSec })}
            onSkip={() => checksMutation.mutate({ action: "walk_skip" })}
            onCancel={() => checksMutation.mutate({ action: "walk_cancel" })}
          />
        </Card>
      )}
      <Card title="Watched by eye">
        <ObservationPanels
          workshopId={w.id}
          panelIds={run.panelIds}
          checks={checks}
          canChange={canDrive && !finished}
          busy={checksMutation.isPending}
          onObserve={(elements) => checksMutation.mutate({ action: "observe", elements })}
        />
      </Card>
      <Card title="Mismatches">
        <MismatchTable mismatches={live.mismatches} labels={labels} onSeek={canDrive && !finished ? (ms) => send({ action: "seek", toMs: Math.round(ms) }) : undefined} />
      </Card>
    </div>
  );
}

/** A virtual panel's injected faults, changed while the run plays (the run keeps them; this browser's panel applies them at once). */
function LiveFaults({ workshopId, panelId, faults, busy, onChange }: { workshopId: string; panelId: string; faults: Fault[]; busy: boolean; onChange: (faults: Fault[]) => void }) {
  const panel = usePanel(workshopId, panelId);
  const [open, setOpen] = useState(false);
  return (
    <details open={open} onToggle={(e) => setOpen((e.target as HTMLDetailsElement).open)} className="rounded-md border border-rule px-3 py-2">
      <summary className="cursor-pointer text-sm font-semibold">Injected faults ({faults.length}): change them while it plays</summary>
      {open && <div className="mt-2">{panel.data ? <FaultPicker elements={panel.data.definition.elements} faults={faults} onChange={onChange} disabled={busy} /> : <p className="text-sm text-ink-soft">Reading the panel…</p>}</div>}
    </details>
  );
}

/** The observation list with the elements of the run's panels. */
function ObservationPanels({
  workshopId,
  panelIds,
  checks,
  canChange,
  busy,
  onObserve,
}: {
  workshopId: string;
  panelIds: string[];
  checks: ChecksView | null;
  canChange: boolean;
  busy: boolean;
  onObserve: (targets: { panelId: string; elementId: string }[]) => void;
}) {
  const read = useRunPanels(workshopId, panelIds);
  const panels = panelIds.flatMap((panelId, i) => {
    const d = read[i]?.data;
    return d ? [{ panelId, name: d.name, elements: d.definition.elements }] : [];
  });
  return <ObservationList panels={panels} observed={checks?.observed ?? []} checkpoints={checks?.checkpoints ?? []} canChange={canChange} busy={busy} onObserve={onObserve} />;
}
