import { useState } from "react";
import type { MotionView } from "../../../shared/api/panels";
import type { PointerElement } from "../../../shared/elements/kinds";
import { Card, ErrorNote, Loading, Select } from "../../components/ui";
import { useRecordings } from "../recordings/queries";
import { formatMs, Mark, ProblemList } from "./components";
import { useMotion } from "./queries";

/**
 * Motion demand on the scale page: pick a recording of the panel's airframe and learn whether the
 * pointer's saved motor keeps up with it, or where it falls behind and by how much, with the
 * peak speed and acceleration the recording asks for beside the motor's own limits. Uses the
 * saved motor: the server computes from the stored definition.
 */
export function MotionCard({
  workshopId,
  panelId,
  airframeId,
  updatedAt,
  pointer,
  unsavedMotor,
}: {
  workshopId: string;
  panelId: string;
  airframeId: string;
  updatedAt: string;
  /** The pointer as saved. */
  pointer: PointerElement;
  /** The motor form differs from the saved profile. */
  unsavedMotor: boolean;
}) {
  const recordings = useRecordings(workshopId, false);
  const mine = (recordings.data ?? []).filter((r) => r.airframeId === airframeId);
  const [recordingId, setRecordingId] = useState<string | null>(null);
  const chosen = recordingId ?? mine[0]?.id ?? null;
  const motion = useMotion(workshopId, panelId, pointer.id, pointer.motor ? chosen : null, updatedAt);

  let body;
  if (!pointer.motor) {
    body = <p className="text-sm text-ink-soft">Save a motor profile for this pointer to see whether it keeps up with a recording.</p>;
  } else if (recordings.isPending) {
    body = <Loading what="Loading recordings" />;
  } else if (recordings.error) {
    body = <ErrorNote error={recordings.error} />;
  } else if (mine.length === 0) {
    body = <p className="text-sm text-ink-soft">No recording of this panel's airframe yet: upload, capture or compose one under Recordings.</p>;
  } else {
    body = (
      <div className="flex flex-col gap-3">
        <div className="max-w-md">
          <Select label="Recording" value={chosen ?? ""} onChange={(e) => setRecordingId(e.target.value)} data-testid="motion-recording">
            {mine.map((r) => (
              <option key={r.id} value={r.id}>
                {r.name} ({formatMs(r.durationMs)})
              </option>
            ))}
          </Select>
        </div>
        {unsavedMotor && (
          <p className="text-xs text-ink-soft">
            <span aria-hidden="true" className="mr-1 font-mono">△</span>
            These figures are for the saved motor profile; save the form to check the one you are editing.
          </p>
        )}
        {motion.isPending && <Loading what="Replaying the recording through the motor" />}
        <ProblemList error={motion.error} title="Not computed" />
        {motion.data && motion.data.recordingId === chosen && <MotionVerdict view={motion.data} label={pointer.label} />}
      </div>
    );
  }
  return <Card title="Motion demand">{body}</Card>;
}

const degrees = (n: number) => `${n.toFixed(1)}°`;

function MotionVerdict({ view, label }: { view: MotionView; label: string }) {
  const speedOver = view.peakDegreesPerSecond > view.motorMaxDegreesPerSecond;
  const accelerationOver = view.peakDegreesPerSecond2 > view.motorAccelerationDegreesPerSecond2;
  return (
    <div className="flex flex-col gap-3" data-testid="motion-verdict">
      {view.keepsUp ? (
        <p className="rounded-md border border-good/40 bg-good/5 px-3 py-2 text-sm">
          <Mark glyph="✓" word="Keeps up." tone="text-good" />{" "}
          This motor follows the {label} through all of {view.recordingName} within {degrees(view.toleranceDegrees)} (worst lag {view.worstLagDegrees.toFixed(2)}°).
        </p>
      ) : (
        <div className="rounded-md border border-bad/40 bg-bad/5 px-3 py-2 text-sm">
          <Mark glyph="▲" word="Falls behind." tone="text-bad" />
          <ul className="mt-1 flex flex-col gap-0.5" aria-label="Where the motor falls behind">
            {view.behind.map((b, i) => (
              <li key={i}>
                This motor falls behind by <span className="font-mono">{degrees(b.worstLagDegrees)}</span> during{" "}
                <span className="font-mono">{formatMs(b.startMs)}</span> to <span className="font-mono">{formatMs(b.endMs)}</span>.
              </li>
            ))}
          </ul>
          {view.behindCount > view.behind.length && (
            <p className="mt-1 text-xs text-ink-soft">
              … and {view.behindCount - view.behind.length} more stretches; the first {view.behind.length} are listed.
            </p>
          )}
        </div>
      )}
      <table className="w-full max-w-xl text-sm" aria-label="Demanded against the motor's limits">
        <thead className="text-left text-xs tracking-wide text-ink-soft uppercase">
          <tr>
            <th className="py-1 font-semibold" />
            <th className="py-1 font-semibold">Demanded (peak)</th>
            <th className="py-1 font-semibold">Motor's limit</th>
          </tr>
        </thead>
        <tbody className="font-mono">
          <tr>
            <td className="py-1 font-sans">Angular speed</td>
            <td className={speedOver ? "text-bad" : ""}>
              {view.peakDegreesPerSecond.toFixed(1)} °/s{speedOver && " ▲ over"}
            </td>
            <td>{view.motorMaxDegreesPerSecond.toFixed(1)} °/s</td>
          </tr>
          <tr>
            <td className="py-1 font-sans">Angular acceleration</td>
            <td className={accelerationOver ? "text-bad" : ""}>
              {view.peakDegreesPerSecond2.toFixed(1)} °/s²{accelerationOver && " ▲ over"}
            </td>
            <td>{view.motorAccelerationDegreesPerSecond2.toFixed(1)} °/s²</td>
          </tr>
        </tbody>
      </table>
      <p className="text-xs text-ink-soft">
        From {view.sampleCount.toLocaleString("en")} samples of <span className="font-mono">{view.channel}</span>; the motor re-plans a fastest move at each sample. A
        peak above the limit for a single sample need not mean falling behind; the stretches above count lag beyond the pointer's tolerance of{" "}
        {degrees(view.toleranceDegrees)}.
      </p>
    </div>
  );
}
