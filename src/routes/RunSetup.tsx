import { useQueryClient } from "@tanstack/react-query";
import { useEffect, useState } from "react";
import { Link, useNavigate, useOutletContext } from "react-router";
import { LINK_KINDS, type CreateRunBody, type RunLinkInput } from "../../shared/api/runs";
import type { WorkshopDetail } from "../../shared/api/workshops";
import type { Fault } from "../../shared/virtual/faults";
import { Button, Card, ErrorNote, Field, Loading, PageTitle, Select } from "../components/ui";
import { panelKeys, usePanel, usePanels } from "../features/panels/queries";
import { useRecordings } from "../features/recordings/queries";
import { FaultPicker } from "../features/runs/FaultPicker";
import { useCreateRun } from "../features/runs/queries";

interface LinkDraft {
  kind: (typeof LINK_KINDS)[number];
  panelId: string;
  faults: Fault[];
  /** Elements the builder watches by eye (observation mode). */
  observed: string[];
  path: string;
  baud: number;
  address: number;
}

const LINK_WORDS: Record<LinkDraft["kind"], string> = {
  virtual: "virtual (this browser plays the panel)",
  network: "network board (device token)",
  serial: "serial port (USB)",
  rs485: "RS-485 bus",
};

function toInput(d: LinkDraft): RunLinkInput {
  switch (d.kind) {
    case "virtual":
      return { kind: "virtual", panelId: d.panelId, faults: d.faults };
    case "network":
      return { kind: "network", panelId: d.panelId };
    case "serial":
      return { kind: "serial", panelId: d.panelId, path: d.path, baud: d.baud };
    case "rs485":
      return { kind: "rs485", panelId: d.panelId, path: d.path, baud: d.baud, address: d.address };
  }
}

/** Set up a run: a recording, one or more panels each with its link, and the speed. */
export function RunSetup() {
  const w = useOutletContext<WorkshopDetail>();
  const navigate = useNavigate();
  const recordings = useRecordings(w.id, false);
  const panels = usePanels(w.id);
  const create = useCreateRun(w.id);
  const qc = useQueryClient();
  // Panels also arrive from others and the command line: read the list afresh when setting up.
  useEffect(() => {
    void qc.invalidateQueries({ queryKey: panelKeys.all(w.id) });
  }, [qc, w.id]);
  const [name, setName] = useState("");
  const [recordingId, setRecordingId] = useState("");
  const [speed, setSpeed] = useState(1);
  const [lagBudget, setLagBudget] = useState("");
  const [links, setLinks] = useState<LinkDraft[]>([]);

  if (recordings.isPending || panels.isPending) return <Loading what="Reading recordings and panels" />;
  const ready = (recordings.data ?? []).filter((r) => r.status === "ready");
  const panelList = panels.data ?? [];
  const chosenRecording = recordingId || ready[0]?.id || "";
  const newLink = (): LinkDraft => ({ kind: "virtual", panelId: panelList.find((p) => !links.some((l) => l.panelId === p.id))?.id ?? panelList[0]?.id ?? "", faults: [], observed: [], path: "/dev/ttyUSB0", baud: 115200, address: links.length + 1 });
  const shown = links.length ? links : panelList.length ? [newLink()] : [];
  const update = (i: number, patch: Partial<LinkDraft>) => setLinks(shown.map((l, j) => (j === i ? { ...l, ...patch } : l)));

  const submit = () => {
    const observed = shown.flatMap((l) => l.observed.map((elementId) => ({ panelId: l.panelId, elementId })));
    const body: CreateRunBody = {
      recordingId: chosenRecording,
      links: shown.map(toInput),
      speed,
      tolerance: lagBudget.trim() ? { lagBudgetMs: Math.round(Number(lagBudget)) } : {},
      ...(name.trim() ? { name: name.trim() } : {}),
      ...(observed.length ? { observed } : {}),
    };
    // The run keeps each virtual link's faults; the console reads them back from the run.
    create.mutate(body, { onSuccess: (run) => navigate(`/w/${w.id}/runs/${run.id}`) });
  };

  return (
    <div className="flex flex-col gap-5">
      <PageTitle sub="Replay a recording into one or more panels and judge what they show.">Set up a run</PageTitle>
      <p>
        <Link to={`/w/${w.id}/runs`} className="text-calm underline">
          ← All runs
        </Link>
      </p>
      {ready.length === 0 && <ErrorNote error={new Error("No recording is ready yet: upload or compose one first.")} />}
      {panelList.length === 0 && <ErrorNote error={new Error("No panel is described yet: describe one first.")} />}
      <Card title="Recording">
        <div className="grid gap-3 sm:grid-cols-3">
          <Field label="Run name" value={name} onChange={(e) => setName(e.target.value)} placeholder="optional" />
          <Select label="Recording" value={chosenRecording} onChange={(e) => setRecordingId(e.target.value)}>
            {ready.map((r) => (
              <option key={r.id} value={r.id}>
                {r.name}
              </option>
            ))}
          </Select>
          <Select label="Speed" value={String(speed)} onChange={(e) => setSpeed(Number(e.target.value))}>
            {[0.1, 0.25, 0.5, 1, 2, 4, 8, 16].map((s) => (
              <option key={s} value={s}>
                {s}×
              </option>
            ))}
          </Select>
        </div>
        <div className="mt-3 grid gap-3 sm:grid-cols-3">
          <Field
            label="Lag budget (ms)"
            type="number"
            min={0}
            max={60000}
            value={lagBudget}
            onChange={(e) => setLagBudget(e.target.value)}
            placeholder="each element's own"
            hint="How late a panel may follow, in recording time, before it counts as a mismatch."
          />
        </div>
      </Card>
      {shown.map((l, i) => (
        <LinkEditor
          key={i}
          index={i}
          workshopId={w.id}
          draft={l}
          panels={panelList}
          onChange={(patch) => update(i, patch)}
          onRemove={shown.length > 1 ? () => setLinks(shown.filter((_, j) => j !== i)) : undefined}
        />
      ))}
      <div className="flex flex-wrap gap-3">
        <Button type="button" onClick={() => setLinks([...shown, newLink()])} disabled={panelList.length === 0}>
          Add a panel
        </Button>
        <Button type="button" tone="primary" onClick={submit} disabled={create.isPending || !chosenRecording || shown.length === 0}>
          {create.isPending ? "Starting…" : "Create the run"}
        </Button>
      </div>
      <ErrorNote error={create.error} />
    </div>
  );
}

function LinkEditor({
  index,
  workshopId,
  draft,
  panels,
  onChange,
  onRemove,
}: {
  index: number;
  workshopId: string;
  draft: LinkDraft;
  panels: { id: string; name: string }[];
  onChange: (patch: Partial<LinkDraft>) => void;
  onRemove?: () => void;
}) {
  const panel = usePanel(workshopId, draft.panelId);
  const elements = panel.data?.definition.elements ?? [];
  const observable = elements.filter((e) => !e.placeholder && e.kind !== "encoder");

  return (
    <fieldset className="rounded-lg border border-rule bg-card p-5" aria-label={`Panel ${index + 1}`}>
      <legend className="px-1 text-lg font-semibold">Panel {index + 1}</legend>
      <div className="grid gap-3 sm:grid-cols-3">
        <Select label="Panel" value={draft.panelId} onChange={(e) => onChange({ panelId: e.target.value, faults: [], observed: [] })}>
          {panels.map((p) => (
            <option key={p.id} value={p.id}>
              {p.name}
            </option>
          ))}
        </Select>
        <Select label="Link" value={draft.kind} onChange={(e) => onChange({ kind: e.target.value as LinkDraft["kind"] })}>
          {LINK_KINDS.map((k) => (
            <option key={k} value={k}>
              {LINK_WORDS[k]}
            </option>
          ))}
        </Select>
        {onRemove && (
          <div className="flex items-end">
            <Button type="button" tone="danger" onClick={onRemove}>
              Remove this panel
            </Button>
          </div>
        )}
      </div>
      {(draft.kind === "serial" || draft.kind === "rs485") && (
        <div className="mt-3 grid gap-3 sm:grid-cols-3">
          <Field label="Port path" value={draft.path} onChange={(e) => onChange({ path: e.target.value })} hint="On the machine that runs the bench" />
          <Field label="Baud" type="number" value={draft.baud} onChange={(e) => onChange({ baud: Number(e.target.value) })} />
          {draft.kind === "rs485" && <Field label="Bus address" type="number" min={1} max={247} value={draft.address} onChange={(e) => onChange({ address: Number(e.target.value) })} />}
        </div>
      )}
      {draft.kind === "network" && <p className="mt-3 text-sm text-ink-soft">The board connects with one of this panel's device tokens once the run is open.</p>}
      {draft.kind === "virtual" && (
        <div className="mt-4 flex flex-col gap-3">
          <h3 className="font-semibold">Injected faults</h3>
          <FaultPicker elements={elements} faults={draft.faults} onChange={(faults) => onChange({ faults })} />
        </div>
      )}
      {observable.length > 0 && (
        <fieldset className="mt-4 flex flex-col gap-2">
          <legend className="font-semibold">Watched by eye</legend>
          <p className="text-sm text-ink-soft">For elements the board cannot sense: the console pauses at each change of what they should show and asks you.</p>
          <div className="flex flex-wrap gap-x-5 gap-y-1">
            {observable.map((e) => (
              <label key={e.id} className="flex items-center gap-2 text-sm">
                <input
                  type="checkbox"
                  checked={draft.observed.includes(e.id)}
                  onChange={(ev) => onChange({ observed: ev.target.checked ? [...draft.observed, e.id] : draft.observed.filter((x) => x !== e.id) })}
                />
                {e.label}
              </label>
            ))}
          </div>
        </fieldset>
      )}
    </fieldset>
  );
}
