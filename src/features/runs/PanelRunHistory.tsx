import { useState } from "react";
import { Link } from "react-router";
import { ErrorNote, Loading } from "../../components/ui";
import { usePanelRunHistory } from "./report-queries";
import { Empty, StateTag, StatusTag } from "./words";

export const formatPercent = (rate: number | null) => (rate === null ? "—" : `${Math.round(rate * 100)}%`);

/**
 * A panel's runs, newest first, with this panel's pass rate in each (passed among judged
 * elements); tick two runs of the same recording to compare them.
 */
export function PanelRunHistory({ workshopId, panelId }: { workshopId: string; panelId: string }) {
  const history = usePanelRunHistory(workshopId, panelId);
  const [picked, setPicked] = useState<string[]>([]);
  if (history.isPending) return <Loading what="Reading this panel's runs" />;
  if (history.error) return <ErrorNote error={history.error} />;
  const rows = history.data;
  if (rows.length === 0) return <Empty>No run of this panel yet.</Empty>;
  const chosen = rows.filter((r) => picked.includes(r.id));
  const sameRecording = chosen.length === 2 && chosen[0].recordingId === chosen[1].recordingId;
  const toggle = (id: string, on: boolean) => setPicked((old) => (on ? [...old.filter((x) => x !== id), id].slice(-2) : old.filter((x) => x !== id)));

  return (
    <div className="flex flex-col gap-3">
      <div className="flex flex-wrap items-center gap-3 text-sm">
        <span className="text-ink-soft">Tick two runs of the same recording to compare them.</span>
        {sameRecording ? (
          <Link to={`/w/${workshopId}/runs/${chosen[0].id}/compare/${chosen[1].id}`} className="rounded-md border border-bezel bg-bezel px-3 py-1.5 font-semibold text-dial">
            Compare the two ticked runs
          </Link>
        ) : (
          chosen.length === 2 && <span role="alert">▲ These two runs replayed different recordings; only runs of the same recording compare.</span>
        )}
      </div>
      <div className="overflow-x-auto rounded-lg border border-rule bg-card">
        <table className="w-full text-left text-sm" aria-label="Runs of this panel">
          <thead className="border-b border-rule bg-paper/60 text-ink-soft">
            <tr>
              <th className="px-3 py-2">
                <span className="sr-only">Pick</span>
              </th>
              <th className="px-3 py-2">Run</th>
              <th className="px-3 py-2">Recording</th>
              <th className="px-3 py-2">State</th>
              <th className="px-3 py-2 text-right">Pass rate</th>
              <th className="px-3 py-2">This panel's elements</th>
              <th className="px-3 py-2">Created</th>
            </tr>
          </thead>
          <tbody>
            {rows.map((r) => (
              <tr key={r.id} className="border-b border-rule/60 last:border-0" data-testid={`history-${r.id}`}>
                <td className="px-3 py-2">
                  <input type="checkbox" aria-label={`Pick ${r.name} to compare`} checked={picked.includes(r.id)} onChange={(e) => toggle(r.id, e.target.checked)} />
                </td>
                <td className="px-3 py-2">
                  <Link to={`/w/${workshopId}/runs/${r.id}/report`} className="font-semibold text-calm underline">
                    {r.name}
                  </Link>
                </td>
                <td className="px-3 py-2">{r.recordingName}</td>
                <td className="px-3 py-2">
                  <StateTag state={r.state} />
                </td>
                <td className="px-3 py-2 text-right" data-testid="pass-rate">
                  <span className="mr-2 inline-block h-2 w-16 overflow-hidden rounded-sm border border-rule align-middle" aria-hidden="true">
                    <span className="block h-full bg-good" style={{ width: `${Math.round((r.passRate ?? 0) * 100)}%` }} />
                  </span>
                  <span className="font-mono">{formatPercent(r.passRate)}</span>
                </td>
                <td className="px-3 py-2">
                  <span className="flex flex-wrap gap-1.5">
                    {(["pass", "fail", "no_data", "untested"] as const)
                      .filter((k) => r.panelCounts[k] > 0)
                      .map((k) => (
                        <span key={k} className="flex items-center gap-0.5">
                          <StatusTag status={k} /> {r.panelCounts[k]}
                        </span>
                      ))}
                  </span>
                </td>
                <td className="px-3 py-2">{new Date(r.createdAt).toLocaleString()}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}
