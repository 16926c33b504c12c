import { Suspense, lazy, useEffect, useMemo, useState, type FormEvent } from "react";
import { Link, useNavigate, useOutletContext, useParams } from "react-router";
import type { RecordingChannelStats, RecordingDetail } from "../../shared/api/recordings";
import type { WorkshopDetail } from "../../shared/api/workshops";
import type { ChannelDefinition } from "../../shared/recording/channels";
import { Button, Card, ErrorNote, Loading } from "../components/ui";
import { ApiError } from "../lib/api";
import { ConfirmButton, Fact, RecordingStatus, RecordingsNav } from "../features/recordings/components";
import { formatBytes, formatCount, formatCreated, formatDuration, formatRate, formatValue, parseDuration } from "../features/recordings/format";
import {
  recordingDownloadUrl,
  recordingOriginalUrl,
  useAirframe,
  useDeleteRecording,
  useRecording,
  useRenameRecording,
  useSeries,
  useStateAt,
} from "../features/recordings/queries";
import { SOURCE_WORDS } from "../features/recordings/RecordingsTable";
import { MAX_PLOTTED, defaultPicks, plottable, type StripChannel } from "../features/recordings/series";

const SeriesStrips = lazy(() => import("../features/recordings/SeriesStrips"));

/** One recording: what it holds, its channels plotted over time, and every value at a chosen instant. */
export function RecordingPage() {
  const w = useOutletContext<WorkshopDetail>();
  const { recordingId = "" } = useParams();
  const canWrite = w.abilities.includes("bench.write");
  const recording = useRecording(w.id, recordingId);

  if (recording.isPending) return <Loading what="Opening the recording" />;
  if (recording.error) {
    const missing = recording.error instanceof ApiError && recording.error.status === 404;
    return (
      <div>
        <RecordingsNav workshopId={w.id} canWrite={canWrite} />
        <ErrorNote error={missing ? new Error("This recording does not exist (any more).") : recording.error} />
      </div>
    );
  }
  return (
    <div>
      <RecordingsNav workshopId={w.id} canWrite={canWrite} />
      <RecordingView workshopId={w.id} recording={recording.data} canWrite={canWrite} />
    </div>
  );
}

function RecordingView({ workshopId, recording: r, canWrite }: { workshopId: string; recording: RecordingDetail; canWrite: boolean }) {
  const airframe = useAirframe(workshopId, r.airframeId);
  const navigate = useNavigate();
  const remove = useDeleteRecording(workshopId);
  const rename = useRenameRecording(workshopId);
  const [renaming, setRenaming] = useState(false);
  const [newName, setNewName] = useState(r.name);

  // Enum indices in the series are positions in the catalogue's list of named values.
  const definitions = useMemo(() => new Map((airframe.data?.channels ?? []).map((c) => [c.name, c])), [airframe.data]);
  const channels: StripChannel[] = useMemo(() => r.channels.map((c) => stripOf(c, definitions.get(c.name))), [r.channels, definitions]);

  function submitRename(e: FormEvent) {
    e.preventDefault();
    if (!newName.trim()) return;
    rename.mutate({ recordingId: r.id, name: newName.trim() }, { onSuccess: () => setRenaming(false) });
  }

  return (
    <div className="flex flex-col gap-6">
      <header className="flex flex-wrap items-start justify-between gap-4">
        <div className="min-w-0">
          <p className="text-sm text-ink-soft">
            <Link to={`/w/${workshopId}/recordings`} className="underline">Recordings</Link> / {r.airframeName}
          </p>
          {renaming ? (
            <form onSubmit={submitRename} className="mt-1 flex flex-wrap items-center gap-2" aria-label="Rename recording">
              <input autoFocus aria-label="New name" value={newName} maxLength={120} onChange={(e) => setNewName(e.target.value)} className="w-80 rounded-md border border-rule bg-card px-3 py-1.5 text-lg" />
              <Button type="submit" tone="primary" disabled={rename.isPending || !newName.trim()}>Save name</Button>
              <Button type="button" onClick={() => setRenaming(false)}>Cancel</Button>
            </form>
          ) : (
            <h2 className="text-xl font-bold tracking-tight">{r.name}</h2>
          )}
          <p className="mt-1 text-sm">
            <RecordingStatus status={r.status} />
          </p>
        </div>
        <div className="flex flex-wrap items-center gap-2">
          <a href={recordingDownloadUrl(workshopId, r.id, "ppr")} download className="rounded-md border border-rule bg-card px-3 py-2 text-sm font-semibold text-ink no-underline hover:bg-paper">
            Download Panelproof file
          </a>
          <a href={recordingDownloadUrl(workshopId, r.id, "csv")} download className="rounded-md border border-rule bg-card px-3 py-2 text-sm font-semibold text-ink no-underline hover:bg-paper">
            Download CSV
          </a>
          {r.hasOriginal && (
            <a
              href={recordingOriginalUrl(workshopId, r.id)}
              download
              title="The file exactly as it was uploaded"
              className="rounded-md border border-rule bg-card px-3 py-2 text-sm font-semibold text-ink no-underline hover:bg-paper"
            >
              Download the uploaded original
            </a>
          )}
          {canWrite && !renaming && <Button onClick={() => { setNewName(r.name); setRenaming(true); }}>Rename</Button>}
          {canWrite && (
            <ConfirmButton
              label="Delete"
              question="Delete this recording and its stored file?"
              confirmLabel="Delete for good"
              busy={remove.isPending}
              onConfirm={() => remove.mutate(r.id, { onSuccess: () => navigate(`/w/${workshopId}/recordings`) })}
            />
          )}
        </div>
      </header>
      <ErrorNote error={rename.error ?? remove.error} />

      <dl className="grid grid-cols-2 gap-4 rounded-lg border border-rule bg-card p-4 sm:grid-cols-4 lg:grid-cols-8">
        <Fact term="Airframe">{r.airframeName}</Fact>
        <Fact term="Source">{SOURCE_WORDS[r.source]}</Fact>
        <Fact term="Duration">{formatDuration(r.durationMs)}</Fact>
        <Fact term="Frames">{formatCount(r.frameCount)}</Fact>
        <Fact term="Frame rate">{formatRate(r.frameRate)}</Fact>
        <Fact term="Channels">{r.channelCount}</Fact>
        <Fact term="Size">{formatBytes(r.sizeBytes)}</Fact>
        <Fact term="Created">
          {formatCreated(r.createdAt)}
          {r.createdBy ? <span className="block text-xs text-ink-soft">by {r.createdBy}</span> : null}
        </Fact>
      </dl>
      {r.notes && <p className="text-sm text-ink-soft">{r.notes}</p>}

      {r.status === "ready" ? (
        <Explorer workshopId={workshopId} recording={r} channels={channels} />
      ) : r.status === "importing" ? (
        <Loading what="Still importing; the plot opens when the last frame is stored" />
      ) : (
        <ErrorNote error={new Error("This recording failed to import; there is nothing to plot.")} />
      )}
    </div>
  );
}

function stripOf(stats: RecordingChannelStats, definition: ChannelDefinition | undefined): StripChannel {
  let values: string[] | undefined;
  if (stats.kind === "enum") {
    if (definition?.kind === "enum") values = definition.values;
    else values = (stats.distinct ?? []).map(String);
  }
  return { name: stats.name, kind: stats.kind, unit: stats.unit ?? (definition && "unit" in definition ? definition.unit ?? null : null), values };
}

function Explorer({ workshopId, recording: r, channels }: { workshopId: string; recording: RecordingDetail; channels: StripChannel[] }) {
  const [picked, setPicked] = useState<string[]>(() => defaultPicks(channels));
  const [zoom, setZoom] = useState<{ fromMs: number; toMs: number } | null>(null);
  const [cursorMs, setCursorMs] = useState<number | null>(null);
  const [pinnedMs, setPinnedMs] = useState<number | null>(0);
  const series = useSeries(workshopId, r.id, picked, zoom, true);
  const full = { fromMs: 0, toMs: Math.max(1, r.durationMs) };
  const range = zoom ?? full;
  const byName = new Map(channels.map((c) => [c.name, c]));
  const stats = new Map(r.channels.map((c) => [c.name, c]));

  function toggle(name: string) {
    setPicked((old) => (old.includes(name) ? old.filter((n) => n !== name) : old.length >= MAX_PLOTTED ? old : [...old, name]));
  }

  return (
    <div className="grid gap-6 xl:grid-cols-[1fr_20rem]">
      <div className="flex min-w-0 flex-col gap-6">
        <Card
          title="Plot"
          aside={
            <span className="flex items-center gap-3 text-sm">
              <span className="font-mono text-ink-soft">
                {formatDuration(range.fromMs)} – {formatDuration(range.toMs)}
              </span>
              {zoom && (
                <Button className="px-2 py-1 text-xs" onClick={() => setZoom(null)}>
                  Show the whole recording
                </Button>
              )}
            </span>
          }
        >
          {picked.length === 0 ? (
            <p className="text-sm text-ink-soft">Tick up to {MAX_PLOTTED} channels in the list below to plot them.</p>
          ) : (
            <>
              <ErrorNote error={series.error} />
              <Suspense fallback={<Loading what="Loading the plot" />}>
                <SeriesStrips
                  channels={picked.map((n) => byName.get(n)).filter((c): c is StripChannel => !!c)}
                  series={series.data?.series ?? {}}
                  range={range}
                  cursorMs={cursorMs}
                  onCursor={setCursorMs}
                  onZoom={setZoom}
                  onPin={setPinnedMs}
                  pinnedMs={pinnedMs}
                />
              </Suspense>
            </>
          )}
        </Card>
        <Card title="Channels" aside={<span className="text-sm text-ink-soft">{picked.length} of {MAX_PLOTTED} plotted</span>}>
          <div className="overflow-x-auto">
            <table className="w-full text-left text-sm" aria-label="Channels of this recording">
              <thead className="border-b border-rule text-ink-soft">
                <tr>
                  <th className="py-2 pr-2 font-semibold">Plot</th>
                  <th className="py-2 pr-3 font-semibold">Channel</th>
                  <th className="py-2 pr-3 font-semibold">Kind</th>
                  <th className="py-2 pr-3 font-semibold">Unit</th>
                  <th className="py-2 pr-3 text-right font-semibold">Changes</th>
                  <th className="py-2 font-semibold">Range or values seen (enums: times set)</th>
                </tr>
              </thead>
              <tbody>
                {r.channels.map((c) => {
                  const can = plottable(c);
                  const on = picked.includes(c.name);
                  return (
                    <tr key={c.name} className="border-b border-rule/60 last:border-0">
                      <td className="py-1.5 pr-2">
                        <input
                          type="checkbox"
                          aria-label={`Plot ${c.name}`}
                          checked={on}
                          disabled={!can || (!on && picked.length >= MAX_PLOTTED)}
                          title={!can ? "Text is read in the values at cursor, not plotted" : undefined}
                          onChange={() => toggle(c.name)}
                        />
                      </td>
                      <td className="py-1.5 pr-3 font-mono">{c.name}</td>
                      <td className="py-1.5 pr-3">{c.kind}</td>
                      <td className="py-1.5 pr-3">{c.unit ?? "–"}</td>
                      <td className="py-1.5 pr-3 text-right font-mono">{formatCount(c.changes)}</td>
                      <td className="py-1.5 font-mono text-xs">{describeRange(c)}</td>
                    </tr>
                  );
                })}
              </tbody>
            </table>
          </div>
        </Card>
      </div>
      <ValuesAtInstant workshopId={workshopId} recording={r} pinnedMs={pinnedMs} onPin={setPinnedMs} stats={stats} />
    </div>
  );
}

function describeRange(c: RecordingChannelStats): string {
  // Enums: every named value with how many times the recording sets it (×0: never, worth knowing before a test).
  if (c.kind === "enum" && c.valueCounts) return c.valueCounts.map((v) => `${v.value} ×${formatCount(v.count)}`).join(", ");
  if (c.kind === "number") return c.min === null || c.max === null ? "never set" : `${formatValue(c.min)} to ${formatValue(c.max)}${c.unit ? ` ${c.unit}` : ""}`;
  if (!c.distinct || c.distinct.length === 0) return "never set";
  return c.distinct.map((v) => (typeof v === "boolean" ? String(v) : c.kind === "text" ? JSON.stringify(v) : v)).join(", ");
}

/** Every channel's value at one instant, read from the server (one segment). */
function ValuesAtInstant({
  workshopId,
  recording: r,
  pinnedMs,
  onPin,
  stats,
}: {
  workshopId: string;
  recording: RecordingDetail;
  pinnedMs: number | null;
  onPin: (ms: number) => void;
  stats: Map<string, RecordingChannelStats>;
}) {
  const state = useStateAt(workshopId, r.id, pinnedMs);
  const [text, setText] = useState(formatDuration(pinnedMs ?? 0));
  const [bad, setBad] = useState(false);
  useEffect(() => setText(formatDuration(pinnedMs ?? 0)), [pinnedMs]);

  function submit(e: FormEvent) {
    e.preventDefault();
    const ms = parseDuration(text);
    setBad(ms === null);
    if (ms !== null) onPin(Math.min(ms, r.durationMs));
  }

  const names = r.channels.map((c) => c.name);
  return (
    <Card title="Values at cursor">
      <form onSubmit={submit} className="mb-3 flex items-end gap-2" aria-label="Read every channel at an instant">
        <label className="flex flex-col gap-1 text-sm font-semibold">
          Instant (mm:ss.s)
          <input
            value={text}
            onChange={(e) => setText(e.target.value)}
            aria-invalid={bad || undefined}
            className={`w-32 rounded-md border bg-card px-2 py-1.5 font-mono font-normal ${bad ? "border-bad" : "border-rule"}`}
          />
        </label>
        <Button type="submit" className="py-1.5">Read</Button>
      </form>
      {bad && <p className="mb-2 text-sm text-bad">✕ Write the instant as seconds or mm:ss.s, e.g. 01:23.5.</p>}
      <p className="mb-2 text-xs text-ink-soft">Click the plot to read every channel at that instant.</p>
      <ErrorNote error={state.error} />
      <table className="w-full text-sm" aria-label="Every channel at the chosen instant">
        <caption className="mb-1 text-left font-mono text-xs text-ink-soft">
          at {formatDuration(state.data?.t ?? pinnedMs ?? 0)}
          {state.isFetching ? " · reading…" : ""}
        </caption>
        <tbody>
          {names.map((n) => {
            const value = state.data?.values[n];
            const c = stats.get(n);
            return (
              <tr key={n} className="border-b border-rule/50 last:border-0">
                <th scope="row" className="py-1 pr-2 text-left font-mono text-xs font-normal text-ink-soft">{n}</th>
                <td className="py-1 text-right font-mono" data-testid={`value-at-${n}`}>
                  {value === undefined ? "–" : formatValue(value, c?.kind)}
                  {value !== undefined && c?.unit ? <span className="ml-1 text-xs text-ink-soft">{c.unit}</span> : null}
                </td>
              </tr>
            );
          })}
        </tbody>
      </table>
    </Card>
  );
}
