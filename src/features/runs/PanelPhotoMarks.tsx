import type { Element } from "../../../shared/elements/kinds";

/**
 * The photo of the real panel with a marker on every element placed on it (the panel page's
 * Photo tab), and every failing element marked by a dashed ring, a cross and its label, so a
 * builder finds the faulty lamp on the panel in front of them. Shape and words as well as colour.
 */
export function PanelPhotoMarks({
  src,
  name,
  elements,
  markers,
  failing,
}: {
  src: string;
  name: string;
  elements: readonly Element[];
  markers: Record<string, { x: number; y: number }>;
  failing: ReadonlySet<string>;
}) {
  const placed = elements.filter((e) => markers[e.id]);
  const unplaced = elements.filter((e) => !markers[e.id] && !e.placeholder);
  return (
    <figure className="flex flex-col gap-1" data-testid="panel-photo-live">
      <div className="relative overflow-hidden rounded-md border border-rule">
        <img src={src} alt={`Photo of ${name}`} className="block w-full" draggable={false} />
        {placed.map((el) => {
          const at = markers[el.id];
          const bad = failing.has(el.id);
          return (
            <div
              key={el.id}
              className="pointer-events-none absolute -translate-x-1/2 -translate-y-1/2"
              style={{ left: `${at.x * 100}%`, top: `${at.y * 100}%` }}
              title={el.label}
              data-testid={bad ? `photo-fail-${el.id}` : `photo-mark-${el.id}`}
            >
              {bad ? (
                // The ring is centred on the marker; the label sits above it.
                <div className="relative h-10 w-10 rounded-full border-[3px] border-dashed border-bad bg-bad/20 ring-2 ring-dial/80">
                  <span className="absolute bottom-full left-1/2 mb-1 -translate-x-1/2 whitespace-nowrap rounded bg-bad px-1.5 py-0.5 font-mono text-[11px] font-bold text-dial shadow">
                    ✕ FAIL {el.label}
                  </span>
                </div>
              ) : (
                <span className="block h-3 w-3 rounded-full border-2 border-dial bg-ink/40 shadow" />
              )}
            </div>
          );
        })}
      </div>
      {unplaced.length > 0 && (
        <figcaption className="text-xs text-ink-soft">
          Not placed on the photo (the panel page's Photo tab places them): {unplaced.map((e) => e.label).join(", ")}
        </figcaption>
      )}
    </figure>
  );
}
