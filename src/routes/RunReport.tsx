import { useState, type FormEvent } from "react";
import { Link, useNavigate, useOutletContext, useParams } from "react-router";
import { emailReportBody, type EmailReportAnswer } from "../../shared/api/run-reports";
import type { WorkshopDetail } from "../../shared/api/workshops";
import { Button, Card, DoneNote, ErrorNote, Loading, PageTitle } from "../components/ui";
import { ApiError } from "../lib/api";
import { useMembers } from "../lib/queries";
import { ReportBody } from "../features/runs/ReportBody";
import { exportJsonUrl, junitUrl, useCreateShare, useRevokeShare, useShares, type CreatedShareView, type RunReportView } from "../features/runs/queries";
import { useEmailReport, usePanelRunHistory, useRunReportView } from "../features/runs/report-queries";
import { formatPercent } from "../features/runs/PanelRunHistory";

/** One run's report: summary, elements, mismatches, downloads, comparison, e-mail and share links. */
export function RunReport() {
  const w = useOutletContext<WorkshopDetail>();
  const { runId = "" } = useParams();
  const report = useRunReportView(w.id, runId);
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
        {r.panels.map((p) => (
          <Link key={p.panelId} to={`/w/${w.id}/panels/${p.panelId}?tab=runs`} className="text-calm underline">
            Run history of {p.name}
          </Link>
        ))}
      </p>
      <div className="flex flex-wrap gap-3">
        <a href={exportJsonUrl(w.id, runId)} download className="rounded-md border border-rule bg-card px-3.5 py-2 text-sm font-semibold">
          ⤓ Download JSON
        </a>
        <a href={junitUrl(w.id, runId)} download className="rounded-md border border-rule bg-card px-3.5 py-2 text-sm font-semibold">
          ⤓ Download JUnit XML
        </a>
      </div>
      <CompareWithEarlier workshopId={w.id} report={r} />
      {canShare && <EmailReport workshopId={w.id} runId={runId} />}
      {canShare && <Shares workshopId={w.id} runId={runId} />}
      <ReportBody report={r} source={{ kind: "workshop", workshopId: w.id, runId }} />
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

/** Other runs of the same panels and recording, to compare with ("fixed 3, still failing 2, new 1"). */
function CompareWithEarlier({ workshopId, report }: { workshopId: string; report: RunReportView }) {
  const navigate = useNavigate();
  const panelIds = report.panels.map((p) => p.panelId).sort().join();
  const history = usePanelRunHistory(workshopId, report.panels[0]?.panelId ?? null);
  const candidates = (history.data ?? []).filter((h) => h.id !== report.run.id && h.recordingId === report.run.recording.id && [...h.panelIds].sort().join() === panelIds);
  const earlier = candidates.filter((h) => h.createdAt < report.run.createdAt);
  const [other, setOther] = useState("");
  const chosen = other || earlier[0]?.id || candidates[0]?.id || "";
  return (
    <Card title="Compare with another run of this panel and recording">
      {history.isPending && <Loading what="Reading this panel's runs" />}
      <ErrorNote error={history.error} />
      {history.data && candidates.length === 0 && <p className="text-sm text-ink-soft">No other run of the same panels and recording yet. Run it again after a fix, then compare here.</p>}
      {candidates.length > 0 && (
        <form
          className="flex flex-wrap items-end gap-3"
          onSubmit={(e) => {
            e.preventDefault();
            if (chosen) navigate(`/w/${workshopId}/runs/${report.run.id}/compare/${chosen}`);
          }}
        >
          <label className="flex flex-col gap-1 text-sm font-semibold">
            Compare with
            <select value={chosen} onChange={(e) => setOther(e.target.value)} className="rounded-md border border-rule bg-card px-2 py-1.5 font-normal">
              {candidates.map((h) => (
                <option key={h.id} value={h.id}>
                  {h.name} · {new Date(h.createdAt).toLocaleString()} · passed {formatPercent(h.passRate)}
                  {h.createdAt < report.run.createdAt ? " (earlier)" : " (later)"}
                </option>
              ))}
            </select>
          </label>
          <Button type="submit" tone="primary">
            Compare the runs
          </Button>
        </form>
      )}
    </Card>
  );
}

/** E-mail the report to chosen members and typed addresses, optionally with a share link made for it. */
function EmailReport({ workshopId, runId }: { workshopId: string; runId: string }) {
  const [open, setOpen] = useState(false);
  const members = useMembers(workshopId);
  const send = useEmailReport(workshopId, runId);
  const [picked, setPicked] = useState<string[]>([]);
  const [addresses, setAddresses] = useState("");
  const [note, setNote] = useState("");
  const [withShare, setWithShare] = useState(false);
  const [problems, setProblems] = useState<{ path: string; message: string }[]>([]);
  const [sent, setSent] = useState<EmailReportAnswer | null>(null);

  const submit = (e: FormEvent) => {
    e.preventDefault();
    const body = {
      memberUserIds: picked,
      addresses: addresses.split(/[\s,;]+/).filter(Boolean),
      note: note.trim() || undefined,
      shareLink: withShare ? { expiresInDays: 14 } : undefined,
    };
    // The same contract the server checks, so problems show before sending.
    const checked = emailReportBody.safeParse(body);
    if (!checked.success) {
      setProblems(checked.error.issues.map((i) => ({ path: i.path.join("."), message: i.message })));
      return;
    }
    setProblems([]);
    send.mutate(body, { onSuccess: (answer) => setSent(answer) });
  };
  const serverProblems = send.error instanceof ApiError ? send.error.issues : [];

  return (
    <Card title="E-mail this report">
      {!open ? (
        <Button type="button" onClick={() => setOpen(true)}>
          ✉ E-mail the report…
        </Button>
      ) : (
        <form onSubmit={submit} className="flex flex-col gap-3" aria-label="E-mail the report">
          <fieldset className="flex flex-col gap-1">
            <legend className="text-sm font-semibold">Workshop members</legend>
            {members.isPending && <Loading what="Reading the members" />}
            {(members.data ?? []).map((m) => (
              <label key={m.userId} className="flex items-center gap-2 text-sm">
                <input type="checkbox" checked={picked.includes(m.userId)} onChange={(e) => setPicked((old) => (e.target.checked ? [...old, m.userId] : old.filter((id) => id !== m.userId)))} />
                {m.name} <span className="text-ink-soft">{m.email}</span>
              </label>
            ))}
          </fieldset>
          <label className="flex flex-col gap-1 text-sm font-semibold">
            Other addresses (separated by commas or spaces)
            <input value={addresses} onChange={(e) => setAddresses(e.target.value)} className="rounded-md border border-rule bg-card px-3 py-2 font-normal" placeholder="bench@example.org" />
          </label>
          <label className="flex flex-col gap-1 text-sm font-semibold">
            Note (optional)
            <textarea value={note} onChange={(e) => setNote(e.target.value)} maxLength={1000} rows={2} className="rounded-md border border-rule bg-card px-3 py-2 font-normal" />
          </label>
          <label className="flex items-center gap-2 text-sm">
            <input type="checkbox" checked={withShare} onChange={(e) => setWithShare(e.target.checked)} /> Add a read-only share link (valid 14 days) for readers outside the workshop
          </label>
          {[...problems, ...serverProblems].length > 0 && (
            <ul role="alert" className="text-sm text-bad">
              {[...problems, ...serverProblems].map((p, i) => (
                <li key={i}>
                  ✕ {p.path.replace(/^body\./, "")}: {p.message}
                </li>
              ))}
            </ul>
          )}
          {!serverProblems.length && <ErrorNote error={send.error} />}
          {sent && <DoneNote>Sent to {sent.sentTo.join(", ")}.{sent.shareUrl ? " The message carries a new share link." : ""}</DoneNote>}
          <div className="flex gap-2">
            <Button type="submit" tone="primary" disabled={send.isPending}>
              {send.isPending ? "Sending…" : "Send the report"}
            </Button>
            <Button type="button" onClick={() => setOpen(false)}>
              Close
            </Button>
          </div>
        </form>
      )}
    </Card>
  );
}
