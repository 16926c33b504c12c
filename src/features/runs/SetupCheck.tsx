import type { SetupCheckView } from "../../../shared/api/runs";
import { Button } from "../../components/ui";

/**
 * The set-up check before play: every switch, lever and breaker the panel reports somewhere
 * else than the recording starts, in words, updated live as the builder sets them; play waits
 * until they agree, or the builder plays anyway (kept in the run's checks).
 */
export function SetupCheck({ setup, canDrive, blocked, onOverride }: { setup: SetupCheckView; canDrive: boolean; blocked: boolean; onOverride: () => void }) {
  if (!setup.applies) return null;
  const agrees = setup.differences.length === 0;
  return (
    <section aria-label="Set-up check" className={`rounded-md border px-4 py-3 ${agrees ? "border-good/50" : "border-amber/70 border-dashed"}`} data-testid="setup-check">
      <h3 className="font-semibold">{agrees ? "● Set-up check: the panel's inputs are where the recording starts" : `▲ Set-up check: ${setup.differences.length} ${setup.differences.length === 1 ? "input differs" : "inputs differ"} from where the recording starts`}</h3>
      {!agrees && (
        <ul className="mt-2 flex flex-col gap-1 text-sm" aria-label="Inputs to set before play">
          {setup.differences.map((d) => (
            <li key={`${d.panelId}/${d.elementId}`} data-testid={`setup-${d.elementId}`}>
              ▲ {d.sentence}
            </li>
          ))}
        </ul>
      )}
      {setup.unreported.length > 0 && (
        <p className="mt-2 text-xs text-ink-soft">
          Not reported yet (not blocking): {setup.unreported.map((u) => `${u.label} (recording starts ${u.expected})`).join(", ")}.
        </p>
      )}
      {!agrees && canDrive && (
        <div className="mt-3 flex flex-wrap items-center gap-3">
          <span className="text-sm">{blocked ? "Play waits until they agree." : "Play will wait until they agree."}</span>
          <Button type="button" tone="danger" onClick={onOverride}>
            Play anyway
          </Button>
        </div>
      )}
    </section>
  );
}
