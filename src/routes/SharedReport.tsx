import { Link, useParams } from "react-router";
import { Gauge } from "../components/Gauge";
import { ErrorNote, Loading, PageTitle } from "../components/ui";
import { ApiError } from "../lib/api";
import { ReportBody } from "../features/runs/ReportBody";
import { useSharedReportView } from "../features/runs/report-queries";

/** A run's report through a share link: outside sign-in, read-only, and plain about revoked or expired links. */
export function SharedReport() {
  const { token = "" } = useParams();
  const report = useSharedReportView(token);
  return (
    <div className="min-h-full">
      <header className="bg-bezel text-dial">
        <div className="mx-auto flex max-w-6xl items-center gap-3 px-4 py-3">
          <Link to="/" className="flex items-center gap-2 font-bold text-dial no-underline">
            <Gauge className="h-7 w-7" /> Panelproof
          </Link>
          <span className="text-sm text-dial/70">shared run report</span>
        </div>
      </header>
      <main className="mx-auto max-w-6xl px-4 py-8">
        {report.isPending && <Loading what="Reading the shared report" />}
        {report.error && <SharedError error={report.error} />}
        {report.data && (
          <>
            <PageTitle sub={`Shared read-only; this link works until ${new Date(report.data.sharedUntil).toLocaleString()}.`}>{report.data.run.name}</PageTitle>
            <ReportBody report={report.data} source={{ kind: "shared", token }} />
          </>
        )}
      </main>
    </div>
  );
}

function SharedError({ error }: { error: Error }) {
  if (error instanceof ApiError && error.status === 410) {
    const revoked = error.code === "revoked";
    return (
      <div role="alert" className="rounded-lg border border-bad/40 bg-bad/5 p-5">
        <h1 className="text-xl font-bold">{revoked ? "■ This share link was revoked" : "◌ This share link has expired"}</h1>
        <p className="mt-2">{error.message}</p>
        <p className="mt-2 text-ink-soft">Ask the workshop for a new link.</p>
      </div>
    );
  }
  if (error instanceof ApiError && error.status === 404) return <ErrorNote error={new Error("There is no shared report at this address. Check the link.")} />;
  return <ErrorNote error={error} />;
}
