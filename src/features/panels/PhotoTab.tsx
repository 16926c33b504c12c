import { useEffect, useRef, useState, type PointerEvent as ReactPointerEvent } from "react";
import type { PanelDetail } from "../../../shared/api/panels";
import { PHOTO_MAX_BYTES } from "../../../shared/api/panels";
import { Button, Card, DoneNote } from "../../components/ui";
import { Mark, ProblemList } from "./components";
import { photoUrl, useSaveMarkers, useUploadPhoto } from "./queries";
import { KIND_WORDS } from "./words";

type Markers = Record<string, { x: number; y: number }>;

const round = (v: number) => Math.round(Math.min(1, Math.max(0, v)) * 10000) / 10000;

/**
 * A photo of the real panel and a marker on every element: drag an element from the list onto
 * the photo (or pick it and click the photo), drag markers to move them, then save.
 */
export function PhotoTab({ workshopId, panel, canWrite }: { workshopId: string; panel: PanelDetail; canWrite: boolean }) {
  const upload = useUploadPhoto(workshopId, panel.id);
  const save = useSaveMarkers(workshopId, panel.id);
  const saved: Markers = panel.definition.photo?.markers ?? {};
  const [markers, setMarkers] = useState<Markers>(saved);
  const [picked, setPicked] = useState<string | null>(null);
  const [dragging, setDragging] = useState<{ id: string; x: number; y: number } | null>(null);
  const [tooBig, setTooBig] = useState<string | null>(null);
  const imageRef = useRef<HTMLDivElement>(null);
  const savedKey = JSON.stringify(saved);
  useEffect(() => setMarkers(JSON.parse(savedKey)), [savedKey]);
  const dirty = JSON.stringify(markers) !== savedKey;
  const elements = panel.definition.elements;
  const placed = elements.filter((e) => markers[e.id]).length;

  function fractionAt(clientX: number, clientY: number): { x: number; y: number } | null {
    const box = imageRef.current?.getBoundingClientRect();
    if (!box || box.width === 0) return null;
    const x = (clientX - box.left) / box.width;
    const y = (clientY - box.top) / box.height;
    if (x < 0 || x > 1 || y < 0 || y > 1) return null;
    return { x: round(x), y: round(y) };
  }

  // Dragging follows the pointer over the whole window; dropping outside the photo changes nothing.
  useEffect(() => {
    if (!dragging) return;
    const move = (e: PointerEvent) => setDragging((d) => d && { ...d, x: e.clientX, y: e.clientY });
    const up = (e: PointerEvent) => {
      const at = fractionAt(e.clientX, e.clientY);
      if (at) setMarkers((m) => ({ ...m, [dragging.id]: at }));
      setDragging(null);
      setPicked(null);
    };
    window.addEventListener("pointermove", move);
    window.addEventListener("pointerup", up);
    return () => {
      window.removeEventListener("pointermove", move);
      window.removeEventListener("pointerup", up);
    };
  }, [dragging?.id]);

  const startDrag = (id: string) => (e: ReactPointerEvent) => {
    if (!canWrite) return;
    e.preventDefault();
    setDragging({ id, x: e.clientX, y: e.clientY });
  };

  function choose(file: File | undefined) {
    setTooBig(null);
    if (!file) return;
    if (file.size > PHOTO_MAX_BYTES) {
      setTooBig(`${file.name} is ${(file.size / 1024 / 1024).toFixed(1)} MB; photos may be at most ${PHOTO_MAX_BYTES / 1024 / 1024} MB.`);
      return;
    }
    upload.mutate(file);
  }

  return (
    <div className="flex flex-col gap-5">
      {canWrite && (
        <Card title={panel.hasPhoto ? "Replace the photo" : "Upload a photo of the real panel"}>
          <p className="mb-3 text-sm text-ink-soft">JPEG, PNG or WebP, up to {PHOTO_MAX_BYTES / 1024 / 1024} MB. Large photos are scaled to 2,000 pixels on the long side.</p>
          <label className="inline-flex items-center gap-3 text-sm">
            <span className="font-semibold">Photo file</span>
            <input type="file" accept="image/jpeg,image/png,image/webp" onChange={(e) => choose(e.target.files?.[0])} disabled={upload.isPending} data-testid="photo-input" />
          </label>
          {upload.isPending && <p className="mt-2 font-mono text-sm text-ink-soft">Uploading and scaling…</p>}
          {tooBig && (
            <p role="alert" className="mt-2 text-sm text-bad">
              ▲ {tooBig}
            </p>
          )}
          <div className="mt-2">
            <ProblemList error={upload.error} title="Photo not stored" />
          </div>
        </Card>
      )}
      {!panel.hasPhoto ? (
        <Card>
          <p className="font-semibold">No photo yet.</p>
          <p className="text-sm text-ink-soft">With a photo, each element gets a marker where it sits on the real panel, so failures can be shown on the panel you built.</p>
        </Card>
      ) : (
        <div className="grid gap-5 lg:grid-cols-[minmax(0,3fr)_minmax(16rem,1fr)]">
          <div>
            <div
              ref={imageRef}
              className={`relative overflow-hidden rounded-lg border border-rule bg-bezel select-none ${picked ? "cursor-crosshair" : ""}`}
              onClick={(e) => {
                if (!picked || !canWrite) return;
                const at = fractionAt(e.clientX, e.clientY);
                if (at) setMarkers((m) => ({ ...m, [picked]: at }));
                setPicked(null);
              }}
              data-testid="photo-area"
            >
              <img src={photoUrl(workshopId, panel.id, panel.updatedAt)} alt={`Photo of ${panel.name}`} className="block w-full" draggable={false} />
              {elements.map((el) => {
                const m = markers[el.id];
                if (!m) return null;
                return (
                  <div
                    key={el.id}
                    role="img"
                    aria-label={`Marker: ${el.label}`}
                    data-marker={el.id}
                    onPointerDown={startDrag(el.id)}
                    className={`absolute flex -translate-x-1/2 -translate-y-1/2 items-center gap-1 ${canWrite ? "cursor-grab" : ""} ${dragging?.id === el.id ? "opacity-30" : ""}`}
                    style={{ left: `${m.x * 100}%`, top: `${m.y * 100}%` }}
                  >
                    <span aria-hidden="true" className="block h-4 w-4 rounded-full border-2 border-dial bg-amber-bright/80 shadow" />
                    <span className="rounded-sm bg-bezel/85 px-1.5 py-0.5 text-xs font-semibold text-dial">{el.label}</span>
                  </div>
                );
              })}
            </div>
            <p className="mt-2 text-xs text-ink-soft">
              {canWrite ? "Drag an element from the list onto the photo, or pick it and click the photo. Drag a marker to move it." : "Where each element sits on the real panel."}
            </p>
          </div>
          <div className="flex flex-col gap-3">
            <p className="text-sm">
              {placed === elements.length ? (
                <Mark glyph="●" word="Every element marked" tone="text-good" />
              ) : (
                <Mark glyph="◐" word={`${placed} of ${elements.length} marked`} tone="text-calm" />
              )}
            </p>
            <ul className="flex flex-col gap-1.5" aria-label="Elements to mark">
              {elements.map((el) => {
                const has = !!markers[el.id];
                return (
                  <li key={el.id} className="flex items-center gap-2">
                    <button
                      type="button"
                      data-chip={el.id}
                      disabled={!canWrite}
                      onPointerDown={startDrag(el.id)}
                      onClick={() => setPicked(picked === el.id ? null : el.id)}
                      aria-pressed={picked === el.id}
                      className={`flex flex-1 touch-none items-center gap-2 rounded-md border px-2.5 py-1.5 text-left text-sm ${
                        picked === el.id ? "border-amber bg-amber/10" : "border-rule bg-card"
                      } ${canWrite ? "cursor-grab" : ""}`}
                    >
                      <span aria-hidden="true" className="font-mono">
                        {has ? "●" : "○"}
                      </span>
                      <span className="font-semibold">{el.label}</span>
                      <span className="text-xs text-ink-soft">
                        {KIND_WORDS[el.kind].one.toLowerCase()} · {has ? "marked" : "not marked"}
                      </span>
                    </button>
                    {canWrite && has && (
                      <button
                        type="button"
                        className="text-xs text-ink-soft underline"
                        onClick={() =>
                          setMarkers((m) => {
                            const next = { ...m };
                            delete next[el.id];
                            return next;
                          })
                        }
                        aria-label={`Take the marker off ${el.label}`}
                      >
                        unmark
                      </button>
                    )}
                  </li>
                );
              })}
            </ul>
            {canWrite && (
              <div className="flex gap-2">
                <Button tone="primary" disabled={!dirty || save.isPending} onClick={() => save.mutate(markers)}>
                  {save.isPending ? "Saving…" : "Save markers"}
                </Button>
                <Button disabled={!dirty} onClick={() => setMarkers(saved)}>
                  Undo changes
                </Button>
              </div>
            )}
            {save.isSuccess && !dirty && <DoneNote>Markers saved.</DoneNote>}
            <ProblemList error={save.error} title="Markers not saved" />
          </div>
        </div>
      )}
      {dragging && (
        <div className="pointer-events-none fixed z-50 -translate-x-1/2 -translate-y-1/2" style={{ left: dragging.x, top: dragging.y }} aria-hidden="true">
          <span className="block h-4 w-4 rounded-full border-2 border-dial bg-amber-bright shadow" />
        </div>
      )}
    </div>
  );
}
