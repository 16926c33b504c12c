import { useState } from "react";
import { useOutletContext } from "react-router";
import type { WorkshopDetail } from "../../shared/api/workshops";
import { Button, ErrorNote, Loading } from "../components/ui";
import { RecordingsNav } from "../features/recordings/components";
import { useAirframes, useImports, useRecordingsWithImports } from "../features/recordings/queries";
import { RecordingsTable } from "../features/recordings/RecordingsTable";
import { ImportList, UploadForm } from "../features/recordings/Upload";

/** The workshop's recordings: the table, the upload form and the imports still being read. */
export function Recordings() {
  const w = useOutletContext<WorkshopDetail>();
  const canWrite = w.abilities.includes("bench.write");
  const imports = useImports(w.id);
  const importing = (imports.data ?? []).some((j) => j.state === "queued" || j.state === "running");
  // The table also shows imports in flight and failed ones (with where and why) as rows.
  const recordings = useRecordingsWithImports(w.id, importing);
  const airframes = useAirframes(w.id);
  const [uploading, setUploading] = useState(false);

  return (
    <div>
      <RecordingsNav workshopId={w.id} canWrite={canWrite} />
      <div className="mb-5 flex flex-wrap items-end justify-between gap-4">
        <div>
          <h2 className="text-xl font-bold tracking-tight">Recordings</h2>
          <p className="text-sm text-ink-soft">Timed streams of aircraft values: captured from a flight, imported from a file or composed from a scenario.</p>
        </div>
        {canWrite && (
          <div className="flex flex-wrap gap-2">
            <Button tone="primary" onClick={() => setUploading((u) => !u)} aria-expanded={uploading}>
              Upload a file
            </Button>
          </div>
        )}
      </div>
      <div className="flex flex-col gap-6">
        {canWrite && uploading && (airframes.isPending ? <Loading what="Loading airframes" /> : <UploadForm workshopId={w.id} airframes={airframes.data ?? []} onClose={() => setUploading(false)} />)}
        {imports.data && imports.data.length > 0 && <ImportList workshopId={w.id} imports={imports.data} canWrite={canWrite} />}
        {recordings.isPending ? (
          <Loading what="Loading recordings" />
        ) : recordings.error ? (
          <ErrorNote error={recordings.error} />
        ) : (
          <RecordingsTable workshopId={w.id} recordings={recordings.data} imports={imports.data ?? []} canWrite={canWrite} />
        )}
      </div>
    </div>
  );
}
