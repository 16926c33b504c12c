import { useState } from "react";
import { Link, useOutletContext, useParams } from "react-router";
import type { WorkshopDetail } from "../../shared/api/workshops";
import { Button, Card, DoneNote, ErrorNote, Loading, PageTitle } from "../components/ui";
import { ReportBody } from "../features/runs/ReportBody";
import { exportJsonUrl, junitUrl, useCreateShare, useRevokeShare, useRunReport, useShares, type CreatedShareView } from "../features/runs/queries";

/** One run's report: summary, elements, mismatches, downloads and share links. */
export function RunReport() {
  const w = useOutletContext<WorkshopDetail>();
  const { runId = "" } = useParams();
  const report = useRunReport(w.id, runId);
  const canShare = w.role === "owner" || w.role === "builder" || w.abilities.includes("bench.write");

  if (report.isPending) return <Loading what="Reading the report" />;
  if (report.error) return <ErrorNote error={report.error} />;
  const r = report.data;
  return (
    <div className="flex flex-col gap-5">
      <PageTitle sub={`Report of the run on ${r.run.recording.name}`}>{r.run.name}</PageTitle>
      <p className="flex gap-4">
        <Link to={`/w/${w.id}/runs`} className="text-calm underline">
          ← All runs
        </Link>
        <Link to={`/w/${w.id}/runs/${runId}`} className="text-calm underline">
          Console
        </Link>
      </p>
      <div className="flex flex-wrap gap-3">
        <a href={exportJsonUrl(w.id, runId)} download className="rounded-md border border-rule bg-card px-3.5 py-2 text-sm font-semibold">
          ⤓ Download JSON
        </a>
        <a href={junitUrl(w.id, runId)} download className="rounded-md border border-rule bg-card px-3.5 py-2 text-sm font-semibold">
          ⤓ Download JUnit XML
        </a>
      </div>
      {canShare && <Shares workshopId={w.id} runId={runId} />}
      <ReportBody report={r} />
    </div>
  );
}

function Shares({ workshopId, runId }: { workshopId: string; runId: string }) {
  const shares = useShares(workshopId, runId);
  const create = useCreateShare(workshopId, runId);
  const revoke = useRevokeShare(workshopId, runId);
  const [days, setDays] = useState(14);
  const [made, setMade] = useState<CreatedShareView | null>(null);
  const [copied, setCopied] = useState(false);

  return (
    <Card title="Share links">
      <p className="mb-3 text-sm text-ink-soft">A share link shows this report, read-only, to anyone who has it, until it expires or you revoke it.</p>
      <div className="flex flex-wrap items-end gap-3">
        <label className="flex flex-col gap-1 text-sm font-semibold">
          Valid for
          <select value={days} onChange={(e) => setDays(Number(e.target.value))} className="rounded-md border border-rule bg-card px-2 py-1.5 font-normal">
            {[1, 7, 14, 30, 90, 365].map((d) => (
              <option key={d} value={d}>
                {d} {d === 1 ? "day" : "days"}
              </option>
            ))}
          </select>
        </label>
        <Button
          type="button"
          tone="primary"
          disabled={create.isPending}
          onClick={() =>
            create.mutate(days, {
              onSuccess: (s) => {
                setMade(s);
                setCopied(false);
              },
            })
          }
        >
          Make a share link
        </Button>
      </div>
      <ErrorNote error={create.error ?? revoke.error} />
      {made && (
        <div className="mt-3 flex flex-col gap-2">
          <DoneNote>Here is the link. It is shown only this once: copy it now.</DoneNote>
          <div className="flex flex-wrap items-center gap-2">
            <input readOnly value={made.url} aria-label="Share link" className="w-full max-w-xl rounded-md border border-rule bg-card px-3 py-2 font-mono text-sm" onFocus={(e) => e.target.select()} />
            <Button
              type="button"
              onClick={() => {
                void navigator.clipboard?.writeText(made.url).then(
                  () => setCopied(true),
                  () => setCopied(false),
                );
              }}
            >
              {copied ? "✓ Copied" : "Copy"}
            </Button>
          </div>
        </div>
      )}
      {shares.data && shares.data.length > 0 && (
        <table className="mt-4 w-full text-left text-sm" aria-label="Share links">
          <thead className="text-ink-soft">
            <tr>
              <th className="py-1">Made</th>
              <th className="py-1">Expires</th>
              <th className="py-1">State</th>
              <th className="py-1" />
            </tr>
          </thead>
          <tbody>
            {shares.data.map((s) => {
              const expired = new Date(s.expiresAt).getTime() <= Date.now();
              return (
                <tr key={s.id} className="border-t border-rule/60">
                  <td className="py-1">{new Date(s.createdAt).toLocaleString()}</td>
                  <td className="py-1">{new Date(s.expiresAt).toLocaleDateString()}</td>
                  <td className="py-1 font-mono text-xs uppercase">{s.revokedAt ? "■ revoked" : expired ? "◌ expired" : "● active"}</td>
                  <td className="py-1 text-right">
                    {!s.revokedAt && !expired && (
                      <Button type="button" tone="danger" onClick={() => revoke.mutate(s.id)} disabled={revoke.isPending}>
                        Revoke
                      </Button>
                    )}
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
      )}
    </Card>
  );
}
