import { useMemo, useState } from "react";
import type { PanelDetail } from "../../../shared/api/panels";
import { expectedAt } from "../../../shared/expect/lookup";
import type { ExpectedState } from "../../../shared/expect/types";
import { PanelDrawing, stateWords } from "../../components/PanelDrawing";
import { Card, ErrorNote, Loading, Select } from "../../components/ui";
import { useRecordings } from "../recordings/queries";
import { formatMs, Mark } from "./components";
import { useExpected } from "./queries";

/**
 * Preview: a recording of the panel's airframe, a time slider, and the virtual panel showing what
 * every element should show at that instant (expectedAt on the timelines the server computed with
 * shared/expect), with what the recording never reaches listed beside it.
 */
export function PreviewTab({ workshopId, panel }: { workshopId: string; panel: PanelDetail }) {
  const recordings = useRecordings(workshopId, false);
  const mine = (recordings.data ?? []).filter((r) => r.airframeId === panel.airframeId);
  const [recordingId, setRecordingId] = useState<string | null>(null);
  const chosen = recordingId ?? mine[0]?.id ?? null;
  const expected = useExpected(workshopId, panel.id, chosen, panel.updatedAt);
  const [t, setT] = useState(0);
  const view = expected.data && expected.data.recordingId === chosen ? expected.data : undefined;
  const duration = view?.durationMs ?? 0;
  const at = Math.min(t, duration);

  const states = useMemo(() => {
    if (!view) return undefined;
    const out: Record<string, ExpectedState> = {};
    for (const timeline of view.timelines.elements) out[timeline.id] = expectedAt(timeline, at);
    return out;
  }, [view, at]);

  if (recordings.isPending) return <Loading what="Loading recordings" />;
  if (mine.length === 0) {
    return (
      <Card>
        <p className="font-semibold">No recording of {panel.airframeName} yet.</p>
        <p className="text-sm text-ink-soft">Upload, capture or compose one under Recordings; the preview plays recordings of the panel's own airframe.</p>
      </Card>
    );
  }
  const coverage = view?.coverage;
  const judged = panel.definition.elements.filter((e) => !e.placeholder);
  const gaps = coverage ? coverage.elements.filter((e) => !e.placeholder && e.messages.length > 0) : [];

  return (
    <div className="flex flex-col gap-5">
      <div className="grid gap-4 sm:grid-cols-[minmax(0,2fr)_minmax(0,3fr)] sm:items-end">
        <Select label="Recording" value={chosen ?? ""} onChange={(e) => setRecordingId(e.target.value)}>
          {mine.map((r) => (
            <option key={r.id} value={r.id}>
              {r.name} ({formatMs(r.durationMs)})
            </option>
          ))}
        </Select>
        <div className="flex flex-col gap-1">
          <label htmlFor="preview-time" className="text-sm font-semibold">
            Instant: <span className="font-mono" data-testid="preview-time">{formatMs(at)}</span>
            <span className="font-normal text-ink-soft"> of {formatMs(duration)}</span>
          </label>
          <input
            id="preview-time"
            type="range"
            min={0}
            max={Math.max(duration, 1)}
            step={duration <= 600_000 ? 100 : 1000}
            value={at}
            onChange={(e) => setT(Number(e.target.value))}
            disabled={!view}
            className="w-full accent-amber"
          />
        </div>
      </div>
      {expected.isFetching && !view && <Loading what="Working out what every element should show" />}
      {expected.error && <ErrorNote error={expected.error} />}
      {view && states && (
        <div className="grid gap-5 xl:grid-cols-[minmax(0,3fr)_minmax(18rem,2fr)]">
          <div className="flex flex-col gap-3">
            <PanelDrawing panel={panel.definition} states={states} title={`${panel.name}: expected at ${formatMs(at)}`} />
            <div className="overflow-x-auto rounded-lg border border-rule bg-card">
              <table className="w-full text-left text-sm" aria-label="Expected states">
                <thead className="border-b border-rule bg-paper text-xs tracking-wide text-ink-soft uppercase">
                  <tr>
                    <th className="px-3 py-2 font-semibold">Element</th>
                    <th className="px-3 py-2 font-semibold">Should show at {formatMs(at)}</th>
                  </tr>
                </thead>
                <tbody>
                  {panel.definition.elements.map((el) => (
                    <tr key={el.id} className="border-b border-rule/60 last:border-0" data-testid={`expected-${el.id}`}>
                      <td className="px-3 py-1.5">
                        {el.label}
                        {el.placeholder && <span className="ml-1 text-xs text-ink-soft">(placeholder, not judged)</span>}
                      </td>
                      <td className="px-3 py-1.5 font-mono text-xs">{stateWords(el, states[el.id]) ?? states[el.id]?.text ?? "—"}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          </div>
          <Card title="What this recording never reaches">
            {gaps.length === 0 ? (
              <Mark glyph="●" word={`Every state of the ${judged.length} judged elements is reached`} tone="text-good" />
            ) : (
              <>
                <p className="mb-2 text-sm text-ink-soft">
                  {gaps.length} of {judged.length} judged elements have states this recording never shows. A run with it cannot test them; compose a scenario that reaches them.
                </p>
                <ul className="flex flex-col gap-1.5" data-testid="coverage-gaps">
                  {gaps.flatMap((g) =>
                    g.messages.map((m) => (
                      <li key={m} className="flex items-baseline gap-2 text-sm">
                        <span aria-hidden="true" className="font-mono text-amber">
                          ◇
                        </span>
                        <span>{m}</span>
                      </li>
                    )),
                  )}
                </ul>
              </>
            )}
            <p className="mt-3 text-xs text-ink-soft">
              {view.frameCount.toLocaleString()} frames over {formatMs(view.durationMs)}. Placeholders are listed but never judged.
            </p>
          </Card>
        </div>
      )}
    </div>
  );
}
