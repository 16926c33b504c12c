import { Suspense, lazy, useEffect, useMemo, useRef, useState, type FormEvent } from "react";
import { Link, useNavigate, useOutletContext } from "react-router";
import type { WorkshopDetail } from "../../shared/api/workshops";
import { ScenarioError, generateScenario, type GeneratedRecording, type ScenarioIssue } from "../../shared/recording/scenario";
import { Button, Card, ErrorNote, Field, Loading, Select } from "../components/ui";
import { RecordingsNav } from "../features/recordings/components";
import { EXAMPLE_SCENARIO } from "../features/recordings/example-scenario";
import { formatCount, formatDuration } from "../features/recordings/format";
import { findPlace, scanJsonPlaces, type TextPlace } from "../features/recordings/json-lines";
import { useAirframes, useSaveScenario } from "../features/recordings/queries";
import { MAX_PLOTTED, defaultPicks, framesToSeries, plottable, toStripChannel } from "../features/recordings/series";

const SeriesStrips = lazy(() => import("../features/recordings/SeriesStrips"));

type Outcome =
  | { ok: true; generated: GeneratedRecording; ms: number }
  | { ok: false; issues: (ScenarioIssue & { place: TextPlace | null })[] };

/** Generation runs here in the browser with the same code the server uses (shared/recording/scenario). */
function generate(text: string): Outcome {
  const started = performance.now();
  try {
    return { ok: true, generated: generateScenario(text), ms: performance.now() - started };
  } catch (error) {
    const { places, malformedAt } = scanJsonPlaces(text);
    if (error instanceof ScenarioError) {
      return {
        ok: false,
        issues: error.issues.map((issue) => ({
          ...issue,
          place: issue.message.startsWith("malformed JSON") ? malformedAt : findPlace(places, issue.path),
        })),
      };
    }
    return { ok: false, issues: [{ path: "", message: (error as Error).message, place: null }] };
  }
}

const storageKey = (workshopId: string) => `panelproof.scenario-draft.${workshopId}`;

/** Write a scenario; see its channels as you type; keep it as a recording. */
export function ScenarioEditor() {
  const w = useOutletContext<WorkshopDetail>();
  const canWrite = w.abilities.includes("bench.write");
  const [text, setText] = useState(() => localStorage.getItem(storageKey(w.id)) ?? EXAMPLE_SCENARIO);
  const [settled, setSettled] = useState(text);
  const area = useRef<HTMLTextAreaElement>(null);
  const gutter = useRef<HTMLDivElement>(null);

  // Debounced: generate once the typing pauses, and keep the draft across reloads.
  useEffect(() => {
    const timer = setTimeout(() => {
      setSettled(text);
      localStorage.setItem(storageKey(w.id), text);
    }, 350);
    return () => clearTimeout(timer);
  }, [text, w.id]);

  const outcome = useMemo(() => generate(settled), [settled]);
  const lastGood = useRef<GeneratedRecording | null>(null);
  if (outcome.ok) lastGood.current = outcome.generated;
  const shown = outcome.ok ? outcome.generated : lastGood.current;

  const lineCount = text.split("\n").length;
  const badLines = new Set(outcome.ok ? [] : outcome.issues.flatMap((i) => (i.place ? [i.place.line] : [])));

  function goTo(place: TextPlace) {
    const el = area.current;
    if (!el) return;
    const lines = text.split("\n");
    const start = lines.slice(0, place.line - 1).reduce((n, l) => n + l.length + 1, 0);
    el.focus();
    el.setSelectionRange(start, start + (lines[place.line - 1]?.length ?? 0));
    const lineHeight = parseFloat(getComputedStyle(el).lineHeight) || 20;
    el.scrollTop = Math.max(0, (place.line - 4) * lineHeight);
  }

  return (
    <div>
      <RecordingsNav workshopId={w.id} canWrite={canWrite} />
      <div className="mb-5">
        <h2 className="text-xl font-bold tracking-tight">Compose a scenario</h2>
        <p className="text-sm text-ink-soft">
          A scenario scripts timed steps per channel (set, hold, ramp, pulse, oscillate, noise, repeat) and generates the same recording every time.
          The rules are in docs/scenario-format.md.
        </p>
      </div>
      <div className="grid gap-6 lg:grid-cols-[minmax(0,28rem)_1fr]">
        <div className="flex min-w-0 flex-col gap-3">
          <div className="flex items-center justify-between text-sm">
            <label htmlFor="scenario-text" className="font-semibold">
              Scenario (JSON)
            </label>
            <Button
              className="px-2 py-1 text-xs"
              onClick={() => {
                setText(EXAMPLE_SCENARIO);
              }}
            >
              Start again from the example
            </Button>
          </div>
          <div className="flex h-[34rem] overflow-hidden rounded-md border border-bezel/60 bg-card focus-within:outline-2 focus-within:outline-amber-bright">
            <div
              ref={gutter}
              aria-hidden="true"
              className="w-12 shrink-0 overflow-hidden border-r border-rule bg-paper py-2 text-right font-mono text-xs leading-5 text-ink-soft select-none"
            >
              {Array.from({ length: lineCount }, (_, i) => (
                <div key={i} className={`pr-2 ${badLines.has(i + 1) ? "bg-bad/10 font-semibold text-bad" : ""}`}>
                  {badLines.has(i + 1) ? "▲ " : ""}
                  {i + 1}
                </div>
              ))}
            </div>
            <textarea
              id="scenario-text"
              ref={area}
              value={text}
              spellCheck={false}
              autoCapitalize="off"
              autoCorrect="off"
              wrap="off"
              onChange={(e) => setText(e.target.value)}
              onScroll={(e) => {
                if (gutter.current) gutter.current.scrollTop = e.currentTarget.scrollTop;
              }}
              className="h-full flex-1 resize-none bg-transparent px-3 py-2 font-mono text-xs leading-5 text-ink outline-none"
            />
          </div>
          <Problems outcome={outcome} pending={settled !== text} onGoTo={goTo} />
        </div>
        <div className="flex min-w-0 flex-col gap-6">
          {shown ? <GeneratedPlot generated={shown} stale={!outcome.ok} /> : <Card title="Generated channels"><p className="text-sm text-ink-soft">Fix the scenario to see its channels.</p></Card>}
          {canWrite && <SaveForm workshopId={w.id} outcome={outcome} text={settled} />}
        </div>
      </div>
    </div>
  );
}

function Problems({ outcome, pending, onGoTo }: { outcome: Outcome; pending: boolean; onGoTo: (place: TextPlace) => void }) {
  if (outcome.ok) {
    return (
      <p role="status" className="text-sm text-good">
        <span aria-hidden="true" className="mr-1 font-mono">●</span>
        {pending ? "Reading…" : `Valid: ${formatCount(outcome.generated.frames.length)} frames over ${formatDuration(outcome.generated.header.durationMs ?? 0)}, generated in ${Math.max(1, Math.round(outcome.ms))} ms.`}
      </p>
    );
  }
  return (
    <div role="alert" className="rounded-md border border-bad/40 bg-bad/5 p-3 text-sm">
      <p className="font-semibold text-bad">
        <span aria-hidden="true" className="mr-1 font-mono">▲</span>
        {outcome.issues.length === 1 ? "1 problem" : `${outcome.issues.length} problems`}; the plot shows the last version without problems.
      </p>
      <ul className="mt-2 flex flex-col gap-1.5" aria-label="Scenario problems">
        {outcome.issues.map((issue, i) => (
          <li key={i} className="flex flex-wrap items-baseline gap-x-2">
            {issue.place ? (
              <button type="button" onClick={() => onGoTo(issue.place!)} className="font-mono text-xs font-semibold text-bad underline">
                line {issue.place.line}
              </button>
            ) : (
              <span className="font-mono text-xs text-bad">—</span>
            )}
            <code className="font-mono text-xs text-ink">{issue.path || "(the whole scenario)"}</code>
            <span className="text-ink">{issue.message}</span>
          </li>
        ))}
      </ul>
    </div>
  );
}

function GeneratedPlot({ generated, stale }: { generated: GeneratedRecording; stale: boolean }) {
  const channels = useMemo(() => generated.header.channels.map(toStripChannel), [generated]);
  const [picked, setPicked] = useState<string[] | null>(null);
  const available = new Set(channels.filter(plottable).map((c) => c.name));
  const names = (picked ?? defaultPicks(channels, MAX_PLOTTED)).filter((n) => available.has(n));
  const series = useMemo(() => framesToSeries(generated.frames, generated.header.channels, names), [generated, names.join(",")]); // eslint-disable-line react-hooks/exhaustive-deps
  const duration = Math.max(1, generated.header.durationMs ?? series.toMs);
  const [zoom, setZoom] = useState<{ fromMs: number; toMs: number } | null>(null);
  const [cursorMs, setCursorMs] = useState<number | null>(null);
  const range = zoom && zoom.toMs <= duration ? zoom : { fromMs: 0, toMs: duration };
  const byName = new Map(channels.map((c) => [c.name, c]));

  function toggle(name: string) {
    const now = names;
    setPicked(now.includes(name) ? now.filter((n) => n !== name) : now.length >= MAX_PLOTTED ? now : [...now, name]);
  }

  return (
    <Card
      title="Generated channels"
      aside={
        <span className="flex items-center gap-3 text-sm">
          <span className="font-mono text-ink-soft">
            {formatDuration(range.fromMs)} – {formatDuration(range.toMs)}
          </span>
          {zoom && (
            <Button className="px-2 py-1 text-xs" onClick={() => setZoom(null)}>
              Show all of it
            </Button>
          )}
        </span>
      }
    >
      <div className={stale ? "opacity-50" : ""}>
        <fieldset className="mb-3">
          <legend className="mb-1 text-xs font-semibold tracking-wide text-ink-soft uppercase">Plotted ({names.length} of at most {MAX_PLOTTED})</legend>
          <div className="flex flex-wrap gap-x-4 gap-y-1 text-sm">
            {channels.map((c) => (
              <label key={c.name} className={`flex items-center gap-1.5 font-mono text-xs ${plottable(c) ? "" : "text-ink-soft"}`}>
                <input
                  type="checkbox"
                  checked={names.includes(c.name)}
                  disabled={!plottable(c) || (!names.includes(c.name) && names.length >= MAX_PLOTTED)}
                  onChange={() => toggle(c.name)}
                />
                {c.name}
              </label>
            ))}
          </div>
        </fieldset>
        {names.length === 0 ? (
          <p className="text-sm text-ink-soft">Tick a channel to plot it.</p>
        ) : (
          <Suspense fallback={<Loading what="Loading the plot" />}>
            <SeriesStrips
              channels={names.map((n) => byName.get(n)!).filter(Boolean)}
              series={series.series}
              range={range}
              cursorMs={cursorMs}
              onCursor={setCursorMs}
              onZoom={setZoom}
              compact
            />
          </Suspense>
        )}
      </div>
    </Card>
  );
}

function SaveForm({ workshopId, outcome, text }: { workshopId: string; outcome: Outcome; text: string }) {
  const airframes = useAirframes(workshopId);
  const save = useSaveScenario(workshopId);
  const navigate = useNavigate();
  const [name, setName] = useState("");
  const [airframeId, setAirframeId] = useState("");
  const scenarioName = outcome.ok ? outcome.generated.scenario.name : "";
  const scenarioAirframe = outcome.ok ? outcome.generated.scenario.airframe : "";
  const matching = airframes.data?.find((a) => a.name === scenarioAirframe);
  const chosen = airframeId || matching?.id || "";

  function submit(e: FormEvent) {
    e.preventDefault();
    if (!outcome.ok || !chosen) return;
    // The text as written (it parsed, or outcome would not be ok): the server generates from it again.
    const scenario: unknown = JSON.parse(text);
    save.mutate(
      { name: (name || scenarioName).trim(), airframeId: chosen, scenario },
      { onSuccess: (recording) => navigate(`/w/${workshopId}/recordings/${recording.id}`) },
    );
  }

  return (
    <Card title="Save as recording">
      {airframes.data && airframes.data.length === 0 ? (
        <p className="text-sm">
          A recording belongs to an airframe.{" "}
          <Link to={`/w/${workshopId}/recordings/airframes`} className="font-semibold underline">
            Create an airframe
          </Link>{" "}
          first.
        </p>
      ) : (
        <form onSubmit={submit} aria-label="Save as recording" className="grid items-end gap-4 md:grid-cols-2">
          <Field label="Recording name" value={name} placeholder={scenarioName} maxLength={120} onChange={(e) => setName(e.target.value)} />
          <Select label="Airframe" value={chosen} onChange={(e) => setAirframeId(e.target.value)}>
            <option value="">Choose…</option>
            {(airframes.data ?? []).map((a) => (
              <option key={a.id} value={a.id}>
                {a.name}
              </option>
            ))}
          </Select>
          <div className="flex flex-col gap-2 md:col-span-2">
            <div>
              <Button type="submit" tone="primary" disabled={!outcome.ok || !chosen || save.isPending}>
                {save.isPending ? "Saving…" : "Save as recording"}
              </Button>
            </div>
            {!outcome.ok && <p className="text-sm text-ink-soft">Fix the problems listed under the text first.</p>}
            <ErrorNote error={save.error} />
          </div>
        </form>
      )}
    </Card>
  );
}
