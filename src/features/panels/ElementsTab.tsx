import { useMemo, useState } from "react";
import { Link } from "react-router";
import type { PanelDetail } from "../../../shared/api/panels";
import { elementChannels, ELEMENT_KINDS, type Element, type ElementKind } from "../../../shared/elements/kinds";
import type { Panel } from "../../../shared/panel/schema";
import type { ChannelDefinition } from "../../../shared/recording/channels";
import { arrange, PanelDrawing } from "../../components/PanelDrawing";
import { Button, Card } from "../../components/ui";
import { ProblemList } from "./components";
import { ElementForm } from "./ElementForm";
import { newElement } from "./element-model";
import { useReplacePanel } from "./queries";
import { KIND_WORDS } from "./words";

/** A free element id: `base`, else `base-2`, `base-3`... within 40 characters. */
function freeId(base: string, taken: ReadonlySet<string>): string {
  const clean = base.slice(0, 40);
  if (!taken.has(clean)) return clean;
  for (let n = 2; ; n++) {
    const suffix = `-${n}`;
    const candidate = `${base.slice(0, 40 - suffix.length).replace(/-+$/, "")}${suffix}`;
    if (!taken.has(candidate)) return candidate;
  }
}

/** The definition without one element, and without its layout position and photo marker. */
function withoutElement(def: Panel, id: string): Panel {
  const positions = { ...(def.layout?.positions ?? {}) };
  delete positions[id];
  const markers = { ...(def.photo?.markers ?? {}) };
  delete markers[id];
  return {
    ...def,
    elements: def.elements.filter((e) => e.id !== id),
    layout: def.layout && { ...def.layout, positions },
    photo: def.photo && { ...def.photo, markers },
  };
}

/** Renames an element's id in layout positions and photo markers too. */
function renamed(def: Panel, from: string, to: string): Panel {
  if (from === to) return def;
  const move = <T,>(record: Record<string, T> | undefined) =>
    record && Object.fromEntries(Object.entries(record).map(([k, v]) => [k === from ? to : k, v]));
  return {
    ...def,
    layout: def.layout && { ...def.layout, positions: move(def.layout.positions)! },
    photo: def.photo && { ...def.photo, markers: move(def.photo.markers)! },
  };
}

/**
 * The definition with elements placed at `at` on the virtual layout (rotation kept), clamped into
 * the layout and rounded to a tenth of its unit. A panel without a layout gets one the size of
 * its drawing, in millimetres.
 */
export function placed(def: Panel, ids: readonly string[], at: { x: number; y: number }): Panel {
  const drawn = arrange(def);
  const layout = def.layout ?? { width: Math.ceil(drawn.width), height: Math.ceil(drawn.height), unit: "mm" as const, positions: {} };
  const tenth = (v: number, max: number) => Math.round(Math.min(max, Math.max(0, v)) * 10) / 10;
  const positions = { ...layout.positions };
  for (const id of ids) positions[id] = { x: tenth(at.x, layout.width), y: tenth(at.y, layout.height), rotation: positions[id]?.rotation ?? 0 };
  return { ...def, layout: { ...layout, positions } };
}

type Editing = { mode: "add"; kind: ElementKind } | { mode: "edit"; id: string } | null;

export function ElementsTab({ workshopId, panel, channels, canWrite }: { workshopId: string; panel: PanelDetail; channels: readonly ChannelDefinition[]; canWrite: boolean }) {
  const def = panel.definition;
  const replace = useReplacePanel(workshopId, panel.id);
  const [editing, setEditing] = useState<Editing>(null);
  const [choosing, setChoosing] = useState(false);
  const [selected, setSelected] = useState<string | null>(null);
  const [confirmDelete, setConfirmDelete] = useState<string | null>(null);
  const ids = useMemo(() => new Set(def.elements.map((e) => e.id)), [def.elements]);
  const known = useMemo(() => new Set(channels.map((c) => c.name)), [channels]);

  const save = (next: Panel, after?: () => void) =>
    replace.mutate(next, {
      onSuccess: () => {
        after?.();
      },
    });

  const editingElement = editing?.mode === "edit" ? def.elements.find((e) => e.id === editing.id) : undefined;
  const takenIds = useMemo(() => {
    const s = new Set(ids);
    if (editingElement) s.delete(editingElement.id);
    return s;
  }, [ids, editingElement]);

  function onSubmit(el: Element) {
    if (editing?.mode === "edit" && editingElement) {
      const next = renamed({ ...def, elements: def.elements.map((e) => (e.id === editingElement.id ? el : e)) }, editingElement.id, el.id);
      save(next, () => setEditing(null));
    } else {
      save({ ...def, elements: [...def.elements, el] }, () => {
        setEditing(null);
        setSelected(el.id);
      });
    }
  }

  function duplicate(el: Element) {
    const id = freeId(`${el.id}-copy`, ids);
    const copy = { ...structuredClone(el), id, label: `${el.label} (copy)`.slice(0, 60) } as Element;
    const index = def.elements.findIndex((e) => e.id === el.id);
    const elements = [...def.elements.slice(0, index + 1), copy, ...def.elements.slice(index + 1)];
    save({ ...def, elements }, () => setSelected(id));
  }

  const form = editing && (
    <Card title={editing.mode === "add" ? `Add a ${KIND_WORDS[editing.kind].one.toLowerCase()}` : `${canWrite ? "Edit" : "View"} ${editingElement?.label ?? ""}`}>
      <ElementForm
        key={editing.mode === "add" ? `add-${editing.kind}` : `edit-${editing.id}-${panel.updatedAt}`}
        initial={editing.mode === "add" ? newElement(editing.kind, freeId(editing.kind, ids)) : (editingElement as unknown as Record<string, unknown>)}
        original={editingElement as unknown as Record<string, unknown> | undefined}
        channels={channels}
        takenIds={takenIds}
        readOnly={!canWrite}
        busy={replace.isPending}
        submitLabel={editing.mode === "add" ? "Add to the panel" : "Save the element"}
        onSubmit={onSubmit}
        onCancel={() => {
          setEditing(null);
          replace.reset();
        }}
      />
      <div className="mt-3">
        <ProblemList error={replace.error} title="The panel was not saved" />
      </div>
    </Card>
  );

  return (
    <div className="flex flex-col gap-6">
      <div className={`grid gap-6 ${canWrite && !editing ? "xl:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]" : ""}`}>
        <div className="flex flex-col gap-2">
          <PanelDrawing
            // While a new place is being saved, show it there rather than back where it was.
            panel={replace.isPending && replace.variables ? (replace.variables as Panel) : def}
            selected={selected}
            onSelect={setSelected}
            onPlace={canWrite ? (ids, at) => replace.mutate(placed(def, ids, at)) : undefined}
            title={`${def.name}: virtual layout`}
          />
          <p className="text-xs text-ink-soft">
            Drawn from the definition{def.layout ? ` (${def.layout.width} × ${def.layout.height} ${def.layout.unit})` : ""}. Elements without a layout position are set out in a
            grid. {canWrite ? "Drag an element to place it (saved at once); click one to find it in the table." : "Click an element to find it in the table."}
          </p>
        </div>
        <div className="flex flex-col gap-3">
          {canWrite && !editing && (
            <Card title="Add an element">
              {!choosing ? (
                <Button tone="primary" onClick={() => setChoosing(true)}>
                  Add an element
                </Button>
              ) : (
                <div className="grid gap-2 sm:grid-cols-2" role="group" aria-label="Element kind">
                  {ELEMENT_KINDS.map((k) => (
                    <button
                      key={k}
                      type="button"
                      onClick={() => {
                        setEditing({ mode: "add", kind: k });
                        setChoosing(false);
                        replace.reset();
                      }}
                      className="rounded-md border border-rule bg-card px-3 py-2 text-left hover:bg-paper"
                    >
                      <span className="block text-sm font-semibold">{KIND_WORDS[k].one}</span>
                      <span className="block text-xs text-ink-soft">{KIND_WORDS[k].what}</span>
                    </button>
                  ))}
                </div>
              )}
            </Card>
          )}
        </div>
      </div>
      {form}
      <div className="overflow-x-auto rounded-lg border border-rule bg-card">
        <table className="w-full text-left text-sm" aria-label="Elements">
          <thead className="border-b border-rule bg-paper text-xs tracking-wide text-ink-soft uppercase">
            <tr>
              <th className="px-3 py-2 font-semibold">#</th>
              <th className="px-3 py-2 font-semibold">Element</th>
              <th className="px-3 py-2 font-semibold">Kind</th>
              <th className="px-3 py-2 font-semibold">Reads</th>
              <th className="px-3 py-2 font-semibold">Lag budget</th>
              <th className="px-3 py-2 font-semibold">
                <span className="sr-only">Actions</span>
              </th>
            </tr>
          </thead>
          <tbody>
            {def.elements.length === 0 && (
              <tr>
                <td colSpan={6} className="px-3 py-4 text-ink-soft">
                  No elements yet. {canWrite ? "Add the panel's lamps, pointers, readouts, breakers, switches, buttons, encoders and levers." : ""}
                </td>
              </tr>
            )}
            {def.elements.map((el, i) => (
              <tr
                key={el.id}
                className={`border-b border-rule/60 last:border-0 ${selected === el.id ? "bg-amber/10" : ""}`}
                data-testid={`element-row-${el.id}`}
                onClick={() => setSelected(el.id)}
              >
                <td className="px-3 py-2 font-mono text-xs text-ink-soft">{i}</td>
                <td className="px-3 py-2">
                  <span className="font-semibold">{el.label}</span>
                  <div className="font-mono text-xs text-ink-soft">{el.id}</div>
                </td>
                <td className="px-3 py-2">
                  {KIND_WORDS[el.kind].one}
                  {el.placeholder && <span className="ml-2 rounded-sm border border-ink/30 px-1 font-mono text-[10px] tracking-widest uppercase">placeholder</span>}
                </td>
                <td className="px-3 py-2 font-mono text-xs">
                  {elementChannels(el).map((c) => (
                    <div key={c} className={known.has(c) ? "" : "text-bad"}>
                      {known.has(c) ? c : `▲ ${c} (not in the catalogue)`}
                    </div>
                  ))}
                </td>
                <td className="px-3 py-2 font-mono text-xs">{el.lagBudgetMs} ms</td>
                <td className="px-3 py-2">
                  <div className="flex flex-wrap justify-end gap-1.5">
                    {el.kind === "pointer" && (
                      <Link
                        to={`/w/${workshopId}/panels/${panel.id}/pointers/${el.id}`}
                        className="rounded-md border border-rule bg-card px-2.5 py-1 text-xs font-semibold text-ink no-underline hover:bg-paper"
                      >
                        Scale and motor
                      </Link>
                    )}
                    <Button className="!px-2.5 !py-1 text-xs" onClick={() => setEditing({ mode: "edit", id: el.id })} aria-label={`${canWrite ? "Edit" : "View"} ${el.label}`}>
                      {canWrite ? "Edit" : "View"}
                    </Button>
                    {canWrite && (
                      <>
                        <Button className="!px-2.5 !py-1 text-xs" onClick={() => duplicate(el)} aria-label={`Duplicate ${el.label}`} disabled={replace.isPending}>
                          Duplicate
                        </Button>
                        {confirmDelete === el.id ? (
                          <Button
                            tone="danger"
                            className="!px-2.5 !py-1 text-xs"
                            onClick={() => save(withoutElement(def, el.id), () => setConfirmDelete(null))}
                            aria-label={`Confirm removing ${el.label}`}
                          >
                            Remove it
                          </Button>
                        ) : (
                          <Button tone="danger" className="!px-2.5 !py-1 text-xs" onClick={() => setConfirmDelete(el.id)} aria-label={`Remove ${el.label}`}>
                            Remove
                          </Button>
                        )}
                      </>
                    )}
                  </div>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {!editing && <ProblemList error={replace.error} title="The panel was not saved" />}
    </div>
  );
}
