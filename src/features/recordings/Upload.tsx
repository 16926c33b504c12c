import { useEffect, useId, useRef, useState, type FormEvent } from "react";
import { Link } from "react-router";
import type { AirframeSummary, ImportJobView } from "../../../shared/api/recordings";
import { Button, Card, ErrorNote, Field, Select } from "../../components/ui";
import { ApiError } from "../../lib/api";
import { ImportState, ProgressBar } from "./components";
import { formatBytes, formatCount, formatCreated, percent } from "./format";
import { useCancelImport, useImportJob, useUpload } from "./queries";
import {
  DECIMAL_MARK_LABELS,
  DELIMITER_LABELS,
  formatFromFileName,
  nameFromFileName,
  type CsvDelimiterName,
  type DecimalMarkName,
} from "./upload";

/** The first line of a text file (not gzip), so the builder can see which delimiter it uses. */
async function firstLine(file: File): Promise<string | null> {
  const head = new Uint8Array(await file.slice(0, 2048).arrayBuffer());
  if (head[0] === 0x1f && head[1] === 0x8b) return null;
  const text = new TextDecoder("utf-8", { fatal: false }).decode(head);
  return text.split(/\r?\n/)[0].slice(0, 300);
}

export function UploadForm({ workshopId, airframes, onClose }: { workshopId: string; airframes: AirframeSummary[]; onClose: () => void }) {
  const formId = useId();
  const [file, setFile] = useState<File | null>(null);
  const [name, setName] = useState("");
  const [nameTouched, setNameTouched] = useState(false);
  const [airframeId, setAirframeId] = useState(airframes.length === 1 ? airframes[0].id : "");
  const [format, setFormat] = useState<"ppr" | "csv">("ppr");
  const [delimiter, setDelimiter] = useState<CsvDelimiterName | "">("");
  const [decimalMark, setDecimalMark] = useState<DecimalMarkName | "">("");
  const [timeColumn, setTimeColumn] = useState("");
  const [timeUnit, setTimeUnit] = useState<"ms" | "s">("ms");
  const [drafts, setDrafts] = useState<boolean | null>(null);
  const [head, setHead] = useState<string | null>(null);
  const [sent, setSent] = useState<{ sent: number; total: number } | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [fileKey, setFileKey] = useState(0);
  const [cancelled, setCancelled] = useState(false);
  const upload = useUpload(workshopId);
  // Aborting the transfer is the whole cancel: the server deletes what it stored and makes no import.
  // Closing the form does not abort: the upload goes on and lands in Recent imports.
  const sending = useRef<AbortController | null>(null);

  const airframe = airframes.find((a) => a.id === airframeId);
  // A new airframe has an empty catalogue: every channel of the first file is unknown to it.
  const addDrafts = drafts ?? (airframe ? airframe.channelCount === 0 : false);

  useEffect(() => {
    let live = true;
    setHead(null);
    if (file) void firstLine(file).then((line) => live && setHead(line));
    return () => {
      live = false;
    };
  }, [file]);

  function pick(f: File | null) {
    setFile(f);
    setProblem(null);
    if (!f) return;
    setFormat(formatFromFileName(f.name));
    if (!nameTouched) setName(nameFromFileName(f.name));
  }

  function submit(e: FormEvent) {
    e.preventDefault();
    setProblem(null);
    if (!file) return setProblem("Choose a file to upload.");
    if (!name.trim()) return setProblem("Give the recording a name.");
    if (!airframeId) return setProblem("Choose the airframe the recording belongs to.");
    if (format === "csv" && (!delimiter || !decimalMark)) {
      return setProblem("A CSV import needs its delimiter and decimal mark chosen: Panelproof never guesses them.");
    }
    setSent({ sent: 0, total: file.size });
    setCancelled(false);
    const controller = new AbortController();
    sending.current = controller;
    upload.mutate(
      {
        file,
        options: {
          name,
          airframeId,
          format,
          addDraftChannels: addDrafts,
          fileName: file.name,
          csv: format === "csv" && delimiter && decimalMark ? { delimiter, decimalMark, timeColumn, timeUnit } : undefined,
        },
        onProgress: (s, total) => setSent({ sent: s, total }),
        signal: controller.signal,
      },
      {
        onSuccess: () => {
          setFile(null);
          setName("");
          setNameTouched(false);
          setSent(null);
          setFileKey((k) => k + 1);
        },
        onError: () => setSent(null),
        onSettled: () => {
          if (sending.current === controller) sending.current = null;
        },
      },
    );
  }

  function cancelSending() {
    setCancelled(true);
    sending.current?.abort();
  }

  if (airframes.length === 0) {
    return (
      <Card title="Upload a recording">
        <p className="text-sm">
          A recording belongs to an airframe, whose channel catalogue says what each value means.{" "}
          <Link to={`/w/${workshopId}/recordings/airframes`} className="font-semibold underline">
            Create an airframe
          </Link>{" "}
          first.
        </p>
      </Card>
    );
  }

  return (
    <Card title="Upload a recording" aside={<Button className="px-2 py-1 text-xs" onClick={onClose}>Close</Button>}>
      <form onSubmit={submit} aria-label="Upload a recording" className="grid gap-4 md:grid-cols-2">
        <div className="flex flex-col gap-1 md:col-span-2">
          <label htmlFor={`${formId}-file`} className="text-sm font-semibold">
            File
          </label>
          <input
            id={`${formId}-file`}
            key={fileKey}
            type="file"
            accept=".jsonl,.ppr,.csv,.tsv,.gz,.txt,application/json,text/csv"
            onChange={(e) => pick(e.target.files?.[0] ?? null)}
            className="rounded-md border border-rule bg-card px-3 py-2 text-sm file:mr-3 file:rounded file:border file:border-rule file:bg-paper file:px-2 file:py-1 file:font-semibold"
          />
          <p className="text-sm text-ink-soft">
            A Panelproof recording file (line-delimited JSON, see docs/recording-format.md) or a wide CSV; either may be gzipped.
            {file && ` ${file.name}, ${formatBytes(file.size)}.`}
          </p>
        </div>
        <Field
          label="Name"
          value={name}
          maxLength={120}
          onChange={(e) => {
            setName(e.target.value);
            setNameTouched(true);
          }}
        />
        <Select label="Airframe" value={airframeId} onChange={(e) => setAirframeId(e.target.value)}>
          <option value="">Choose…</option>
          {airframes.map((a) => (
            <option key={a.id} value={a.id}>
              {a.name} ({a.channelCount} channels)
            </option>
          ))}
        </Select>
        <fieldset className="flex flex-col gap-2 md:col-span-2">
          <legend className="mb-1 text-sm font-semibold">Format</legend>
          <div className="flex flex-wrap gap-4 text-sm">
            <label className="flex items-center gap-2">
              <input type="radio" name={`${formId}-format`} checked={format === "ppr"} onChange={() => setFormat("ppr")} />
              Panelproof file
            </label>
            <label className="flex items-center gap-2">
              <input type="radio" name={`${formId}-format`} checked={format === "csv"} onChange={() => setFormat("csv")} />
              CSV
            </label>
          </div>
        </fieldset>
        {format === "csv" && (
          <div className="grid gap-4 rounded-md border border-rule bg-paper/60 p-3 md:col-span-2 md:grid-cols-2">
            {head !== null && (
              <div className="md:col-span-2">
                <p className="text-sm font-semibold">First line of the file</p>
                <pre className="mt-1 overflow-x-auto rounded border border-rule bg-card px-2 py-1 font-mono text-xs whitespace-pre" data-testid="csv-first-line">
                  {head.replace(/\t/g, "→")}
                </pre>
              </div>
            )}
            <Select label="Delimiter" value={delimiter} onChange={(e) => setDelimiter(e.target.value as CsvDelimiterName | "")}>
              <option value="">Choose…</option>
              {(Object.keys(DELIMITER_LABELS) as CsvDelimiterName[]).map((d) => (
                <option key={d} value={d}>
                  {DELIMITER_LABELS[d]}
                </option>
              ))}
            </Select>
            <Select label="Decimal mark" value={decimalMark} onChange={(e) => setDecimalMark(e.target.value as DecimalMarkName | "")}>
              <option value="">Choose…</option>
              {(Object.keys(DECIMAL_MARK_LABELS) as DecimalMarkName[]).map((d) => (
                <option key={d} value={d}>
                  {DECIMAL_MARK_LABELS[d]}
                </option>
              ))}
            </Select>
            <Field label="Time column" value={timeColumn} onChange={(e) => setTimeColumn(e.target.value)} placeholder="the first column" hint="Its header name; empty means the first column." />
            <Select label="Time unit" value={timeUnit} onChange={(e) => setTimeUnit(e.target.value as "ms" | "s")}>
              <option value="ms">milliseconds</option>
              <option value="s">seconds</option>
            </Select>
            <p className="text-sm text-ink-soft md:col-span-2">
              A header like <code className="font-mono">time [s]</code> or <code className="font-mono">alt.baro_ft [ft]</code> gives units in the file itself.
            </p>
          </div>
        )}
        <label className="flex items-start gap-2 text-sm md:col-span-2">
          <input type="checkbox" className="mt-1" checked={addDrafts} onChange={(e) => setDrafts(e.target.checked)} />
          <span>
            <span className="font-semibold">Add unknown channels as drafts</span>
            <span className="block text-ink-soft">
              Channels missing from {airframe ? `${airframe.name}’s` : "the airframe’s"} catalogue are added for you to confirm, instead of refusing the file.
            </span>
          </span>
        </label>
        <div className="flex flex-col gap-3 md:col-span-2">
          {problem && <ErrorNote error={new Error(problem)} />}
          {cancelled && !upload.isPending ? (
            <p role="status" className="text-sm text-ink-soft" data-testid="upload-cancelled">
              <span aria-hidden="true" className="mr-1 font-mono">✕</span>
              Upload cancelled. Nothing was kept; the file is still chosen if you want to send it again.
            </p>
          ) : (
            <ErrorNote error={upload.error ? explain(upload.error) : null} />
          )}
          {sent && (
            <ProgressBar
              label="Sending the file"
              value={percent(sent.sent, sent.total)}
              text={`Sending: ${formatBytes(sent.sent)} of ${formatBytes(sent.total)} · ${percent(sent.sent, sent.total)}%`}
            />
          )}
          <div className="flex flex-wrap gap-2">
            <Button type="submit" tone="primary" disabled={upload.isPending}>
              {upload.isPending ? "Sending…" : "Upload and import"}
            </Button>
            {upload.isPending && (
              <Button type="button" onClick={cancelSending}>
                Cancel upload
              </Button>
            )}
          </div>
        </div>
      </form>
    </Card>
  );
}

function explain(error: Error): Error {
  if (error instanceof ApiError && error.issues.length) {
    return new Error(`${error.message} ${error.issues.map((i) => `${i.path}: ${i.message}`).join("; ")}`);
  }
  return error;
}

/** Imports of this workshop, newest first; each polls its own progress until done or failed. */
export function ImportList({ workshopId, imports, canWrite }: { workshopId: string; imports: ImportJobView[]; canWrite: boolean }) {
  if (imports.length === 0) return null;
  return (
    <Card title="Recent imports">
      <ul className="flex flex-col divide-y divide-rule/60" aria-label="Recent imports">
        {imports.slice(0, 8).map((job) => (
          <ImportRow key={job.id} workshopId={workshopId} job={job} canWrite={canWrite} />
        ))}
      </ul>
    </Card>
  );
}

function ImportRow({ workshopId, job: initial, canWrite }: { workshopId: string; job: ImportJobView; canWrite: boolean }) {
  const { data: job } = useImportJob(workshopId, initial);
  const cancel = useCancelImport(workshopId);
  const fraction = job.state === "done" ? 100 : percent(job.bytesRead, job.bytesTotal);
  const inFlight = job.state === "queued" || job.state === "running";
  return (
    <li className="flex flex-col gap-2 py-3" aria-label={`Import of ${job.name}`}>
      <div className="flex flex-wrap items-baseline justify-between gap-3">
        <span className="font-semibold">{job.name}</span>
        <span className="flex items-baseline gap-3 text-sm">
          <ImportState state={job.state} />
          <span className="text-ink-soft">{formatCreated(job.createdAt)}</span>
          {canWrite && inFlight && (
            <Button className="px-2 py-1 text-xs" disabled={cancel.isPending} onClick={() => cancel.mutate(job.id)} aria-label={`Cancel the import of ${job.name}`}>
              {cancel.isPending ? "Cancelling…" : "Cancel import"}
            </Button>
          )}
        </span>
      </div>
      <ErrorNote error={cancel.error} />
      {job.state === "cancelled" && <p className="text-sm text-ink-soft">Cancelled: no recording was made and the uploaded file was deleted.</p>}
      {job.state !== "failed" && job.state !== "cancelled" && (
        <ProgressBar
          label={`Import of ${job.name}`}
          value={fraction}
          text={`${formatBytes(job.bytesRead)} of ${formatBytes(job.bytesTotal)} read · ${formatCount(job.frames)} frames · ${fraction}%`}
        />
      )}
      {job.state === "failed" && job.error && (
        <div role="alert" className="rounded-md border border-bad/40 bg-bad/5 px-3 py-2 text-sm text-bad">
          <p>
            <span aria-hidden="true" className="mr-1 font-mono">▲</span>
            <span className="font-semibold">Refused, nothing was kept.</span>
          </p>
          <dl className="mt-1 grid grid-cols-[4rem_1fr] gap-x-2 gap-y-0.5">
            <dt className="font-semibold">Where</dt>
            <dd className="font-mono text-xs leading-5" data-testid="import-where">{job.error.where ?? "the whole file"}</dd>
            <dt className="font-semibold">Why</dt>
            <dd data-testid="import-why">{job.error.message}</dd>
          </dl>
        </div>
      )}
      {job.state === "done" && job.recordingId && (
        <Link to={`/w/${workshopId}/recordings/${job.recordingId}`} className="text-sm font-semibold underline decoration-amber/60 underline-offset-2">
          Open the recording →
        </Link>
      )}
    </li>
  );
}
