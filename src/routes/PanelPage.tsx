import { useState, type FormEvent } from "react";
import { Link, useNavigate, useOutletContext, useParams, useSearchParams } from "react-router";
import type { WorkshopDetail } from "../../shared/api/workshops";
import { ApiError } from "../lib/api";
import { Button, ErrorNote, Loading } from "../components/ui";
import { FileLink, ProblemList } from "../features/panels/components";
import { CopyPanel } from "../features/panels/CopyPanel";
import { ElementsTab } from "../features/panels/ElementsTab";
import { PhotoTab } from "../features/panels/PhotoTab";
import { PreviewTab } from "../features/panels/PreviewTab";
import { panelFileUrls, useDeletePanel, usePanel, useRenamePanel } from "../features/panels/queries";
import { TokensTab } from "../features/panels/TokensTab";
import { PanelRunHistory } from "../features/runs/PanelRunHistory";
import { kindSummary } from "../features/panels/words";
import { useAirframe } from "../features/recordings/queries";

const TABS = [
  ["elements", "Elements"],
  ["photo", "Photo and markers"],
  ["preview", "Preview"],
  ["tokens", "Device tokens"],
  ["runs", "Runs"],
] as const;
type Tab = (typeof TABS)[number][0];

/** One panel: its elements and virtual layout, its photo with markers, a preview against a recording, device tokens. */
export function PanelPage() {
  const w = useOutletContext<WorkshopDetail>();
  const { panelId = "" } = useParams();
  const canWrite = w.abilities.includes("bench.write");
  const panel = usePanel(w.id, panelId);
  const airframe = useAirframe(w.id, panel.data?.airframeId ?? null);
  const [params, setParams] = useSearchParams();
  const tab = (TABS.find(([k]) => k === params.get("tab"))?.[0] ?? "elements") as Tab;
  const [copying, setCopying] = useState<"duplicate" | "mirror" | null>(null);
  const [renaming, setRenaming] = useState(false);
  const [deleting, setDeleting] = useState(false);

  if (panel.isPending) return <Loading what="Opening the panel" />;
  if (panel.error) {
    const missing = panel.error instanceof ApiError && panel.error.status === 404;
    return <ErrorNote error={missing ? new Error("This panel does not exist in this workshop.") : panel.error} />;
  }
  const p = panel.data;
  const files = panelFileUrls(w.id, p.id);
  const channels = airframe.data?.channels ?? [];
  const tabClass = (active: boolean) =>
    `rounded-md border px-3 py-1.5 text-sm font-semibold ${active ? "border-bezel bg-bezel text-dial" : "border-rule bg-card text-ink hover:bg-paper"}`;

  return (
    <div>
      <p className="mb-2 text-sm">
        <Link to={`/w/${w.id}/panels`} className="text-ink-soft underline decoration-amber/60 underline-offset-2">
          ← All panels
        </Link>
      </p>
      <div className="mb-4 flex flex-wrap items-start justify-between gap-4">
        <div>
          {renaming ? (
            <RenameForm workshopId={w.id} panelId={p.id} name={p.name} onDone={() => setRenaming(false)} />
          ) : (
            <h2 className="text-xl font-bold tracking-tight">
              {p.name}
              {canWrite && (
                <button type="button" className="ml-3 align-middle text-sm font-normal text-ink-soft underline" onClick={() => setRenaming(true)}>
                  rename
                </button>
              )}
            </h2>
          )}
          <p className="text-sm text-ink-soft">
            <span className="font-mono">{p.slug}</span> · {p.airframeName} · {p.elementCount} elements ({kindSummary(p.kinds)})
            {p.placeholderCount > 0 && ` · ${p.placeholderCount} placeholder${p.placeholderCount === 1 ? "" : "s"}`}
            {p.mirrorOf && (
              <>
                {" · "}
                <Link to={`/w/${w.id}/panels/${p.mirrorOf}`} className="underline decoration-amber/60">
                  mirror of another panel
                </Link>
              </>
            )}
          </p>
        </div>
        <div className="flex flex-wrap gap-2">
          {canWrite && (
            <>
              <Button onClick={() => setCopying(copying === "mirror" ? null : "mirror")} aria-expanded={copying === "mirror"}>
                Mirror
              </Button>
              <Button onClick={() => setCopying(copying === "duplicate" ? null : "duplicate")} aria-expanded={copying === "duplicate"}>
                Duplicate
              </Button>
            </>
          )}
          <FileLink href={files.json} testId="export-json">
            Export JSON
          </FileLink>
          <FileLink href={files.header} testId="export-header">
            Device header (.h)
          </FileLink>
          {canWrite && (
            <Button tone="danger" onClick={() => setDeleting(true)}>
              Delete
            </Button>
          )}
        </div>
      </div>
      {deleting && <DeletePanel workshopId={w.id} panelId={p.id} name={p.name} onCancel={() => setDeleting(false)} />}
      {copying && (
        <div className="mb-5">
          <CopyPanel key={copying} workshopId={w.id} panel={p} how={copying} channels={channels} onClose={() => setCopying(null)} />
        </div>
      )}
      {airframe.error && <ErrorNote error={airframe.error} />}
      <nav aria-label="Panel" className="mb-5 flex flex-wrap gap-2">
        {TABS.map(([key, word]) => (
          <button
            key={key}
            type="button"
            className={tabClass(tab === key)}
            aria-current={tab === key ? "page" : undefined}
            onClick={() => setParams(key === "elements" ? {} : { tab: key }, { replace: true })}
          >
            {word}
          </button>
        ))}
      </nav>
      {!canWrite && <p className="mb-4 text-sm text-ink-soft">You are a viewer here: everything is shown, nothing can be changed.</p>}
      {tab === "elements" && (airframe.isPending ? <Loading what="Loading the channel catalogue" /> : <ElementsTab workshopId={w.id} panel={p} channels={channels} canWrite={canWrite} />)}
      {tab === "photo" && <PhotoTab workshopId={w.id} panel={p} canWrite={canWrite} />}
      {tab === "preview" && <PreviewTab workshopId={w.id} panel={p} />}
      {tab === "tokens" && <TokensTab workshopId={w.id} panelId={p.id} canWrite={canWrite} />}
      {tab === "runs" && <PanelRunHistory workshopId={w.id} panelId={p.id} />}
    </div>
  );
}

function RenameForm({ workshopId, panelId, name, onDone }: { workshopId: string; panelId: string; name: string; onDone: () => void }) {
  const rename = useRenamePanel(workshopId, panelId);
  const [value, setValue] = useState(name);
  function submit(e: FormEvent) {
    e.preventDefault();
    rename.mutate(value, { onSuccess: onDone });
  }
  return (
    <form onSubmit={submit} className="flex flex-wrap items-center gap-2" aria-label="Rename the panel">
      <input aria-label="Panel name" value={value} onChange={(e) => setValue(e.target.value)} maxLength={80} className="rounded-md border border-rule bg-card px-3 py-1.5 text-lg font-bold" autoFocus />
      <Button type="submit" tone="primary" disabled={rename.isPending || !value.trim()}>
        Save
      </Button>
      <Button type="button" onClick={onDone}>
        Cancel
      </Button>
      <div className="basis-full">
        <ProblemList error={rename.error} />
      </div>
    </form>
  );
}

function DeletePanel({ workshopId, panelId, name, onCancel }: { workshopId: string; panelId: string; name: string; onCancel: () => void }) {
  const remove = useDeletePanel(workshopId, panelId);
  const navigate = useNavigate();
  return (
    <div role="alertdialog" aria-label="Delete the panel" className="mb-5 rounded-md border border-bad/50 bg-bad/5 p-4 text-sm">
      <p className="font-semibold text-bad">Delete “{name}”?</p>
      <p className="mt-1">Its definition, photo, markers and device tokens go. Export its JSON first if you may want it back.</p>
      <div className="mt-3 flex gap-2">
        <Button tone="danger" onClick={() => remove.mutate(undefined, { onSuccess: () => navigate(`/w/${workshopId}/panels`) })} disabled={remove.isPending}>
          Delete the panel
        </Button>
        <Button onClick={onCancel}>Keep it</Button>
      </div>
      <div className="mt-2">
        <ProblemList error={remove.error} />
      </div>
    </div>
  );
}
