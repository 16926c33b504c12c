import { useState, type ReactNode } from "react";
import { NavLink } from "react-router";
import type { ImportJobView, RecordingSummary } from "../../../shared/api/recordings";
import { Button } from "../../components/ui";

/** Small pieces shared by the recordings screens. Status is always a word and a shape, never colour alone. */

type Mark = { glyph: string; word: string; tone: string };

const RECORDING_MARKS: Record<RecordingSummary["status"], Mark> = {
  importing: { glyph: "◐", word: "importing", tone: "text-calm" },
  ready: { glyph: "●", word: "ready", tone: "text-good" },
  failed: { glyph: "▲", word: "failed", tone: "text-bad" },
};

const IMPORT_MARKS: Record<ImportJobView["state"], Mark> = {
  queued: { glyph: "○", word: "waiting", tone: "text-ink-soft" },
  running: { glyph: "◐", word: "reading", tone: "text-calm" },
  done: { glyph: "●", word: "done", tone: "text-good" },
  failed: { glyph: "▲", word: "failed", tone: "text-bad" },
  cancelled: { glyph: "✕", word: "cancelled", tone: "text-ink-soft" },
};

export function StatusMark({ mark, children }: { mark: Mark; children?: ReactNode }) {
  return (
    <span className={`inline-flex items-baseline gap-1.5 ${mark.tone}`}>
      <span aria-hidden="true" className="font-mono">
        {mark.glyph}
      </span>
      <span className="font-semibold">{mark.word}</span>
      {children && <span className="text-ink-soft">{children}</span>}
    </span>
  );
}

export const RecordingStatus = ({ status, children }: { status: RecordingSummary["status"]; children?: ReactNode }) => (
  <StatusMark mark={RECORDING_MARKS[status]}>{children}</StatusMark>
);

export const ImportState = ({ state }: { state: ImportJobView["state"] }) => <StatusMark mark={IMPORT_MARKS[state]} />;

/** A measured bar: value in percent with its meaning spelled out beside it. */
export function ProgressBar({ value, label, text }: { value: number; label: string; text: ReactNode }) {
  const v = Math.max(0, Math.min(100, Math.round(value)));
  return (
    <div className="flex flex-col gap-1">
      <div
        role="progressbar"
        aria-label={label}
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={v}
        aria-valuetext={`${v}%`}
        className="relative h-3 overflow-hidden rounded-sm border border-bezel/70 bg-dial"
      >
        <div className="h-full bg-amber transition-[width] duration-300" style={{ width: `${v}%` }} />
        {/* Quarter ticks, like the graduations of a bench meter. */}
        <div aria-hidden="true" className="pointer-events-none absolute inset-0 grid grid-cols-4">
          <span className="border-r border-bezel/25" />
          <span className="border-r border-bezel/25" />
          <span className="border-r border-bezel/25" />
          <span />
        </div>
      </div>
      <p className="font-mono text-xs text-ink-soft">{text}</p>
    </div>
  );
}

/** The recordings area's own row of links under the workshop tabs. */
export function RecordingsNav({ workshopId, canWrite }: { workshopId: string; canWrite: boolean }) {
  const link = ({ isActive }: { isActive: boolean }) =>
    `rounded-md border px-3 py-1.5 text-sm font-semibold no-underline ${isActive ? "border-bezel bg-bezel text-dial" : "border-rule bg-card text-ink hover:bg-paper"}`;
  return (
    <nav aria-label="Recordings" className="mb-6 flex flex-wrap gap-2">
      <NavLink to={`/w/${workshopId}/recordings`} end className={link}>
        All recordings
      </NavLink>
      {canWrite && (
        <NavLink to={`/w/${workshopId}/recordings/compose`} className={link}>
          Compose a scenario
        </NavLink>
      )}
      {canWrite && (
        <NavLink to={`/w/${workshopId}/recordings/capture`} className={link}>
          Capture live
        </NavLink>
      )}
      <NavLink to={`/w/${workshopId}/recordings/airframes`} className={link}>
        Airframes and channels
      </NavLink>
    </nav>
  );
}

/** A destructive action that asks in place before it acts (no browser pop-up to miss). */
export function ConfirmButton({
  label,
  question,
  confirmLabel,
  onConfirm,
  busy,
  small,
}: {
  label: string;
  question: string;
  confirmLabel: string;
  onConfirm: () => void;
  busy?: boolean;
  small?: boolean;
}) {
  const [asking, setAsking] = useState(false);
  const size = small ? "px-2 py-1 text-xs" : "";
  if (!asking) {
    return (
      <Button tone="danger" className={size} onClick={() => setAsking(true)}>
        {label}
      </Button>
    );
  }
  return (
    <span role="group" aria-label={question} className="inline-flex flex-wrap items-center gap-2 rounded-md border border-bad/40 bg-bad/5 px-2 py-1">
      <span className="text-sm text-bad">
        <span aria-hidden="true" className="mr-1 font-mono">▲</span>
        {question}
      </span>
      <Button tone="danger" className={size} disabled={busy} onClick={onConfirm}>
        {confirmLabel}
      </Button>
      <Button className={size} onClick={() => setAsking(false)}>
        Keep it
      </Button>
    </span>
  );
}

/** A term and its reading, for the fact rows at the top of a recording or capture. */
export function Fact({ term, children }: { term: string; children: ReactNode }) {
  return (
    <div className="flex flex-col">
      <dt className="text-xs font-semibold tracking-wide text-ink-soft uppercase">{term}</dt>
      <dd className="font-mono text-sm text-ink">{children}</dd>
    </div>
  );
}

export function Empty({ children }: { children: ReactNode }) {
  return <p className="rounded-md border border-dashed border-rule px-4 py-6 text-center text-sm text-ink-soft">{children}</p>;
}
