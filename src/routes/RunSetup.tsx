import { useQueryClient } from "@tanstack/react-query";
import { useEffect, useState } from "react";
import { Link, useNavigate, useOutletContext } from "react-router";
import { LINK_KINDS, type CreateRunBody, type RunLinkInput } from "../../shared/api/runs";
import type { WorkshopDetail } from "../../shared/api/workshops";
import type { Fault } from "../../shared/virtual/faults";
import { Button, Card, ErrorNote, Field, Loading, PageTitle, Select } from "../components/ui";
import { panelKeys, usePanel, usePanels } from "../features/panels/queries";
import { useRecordings } from "../features/recordings/queries";
import { useCreateRun } from "../features/runs/queries";
import { rememberRunFaults } from "../features/runs/virtual-panel";
import { FAULT_WORDS } from "../features/runs/words";

type FaultKind = Fault["kind"];

/** The numbers each fault kind asks for, with a default; booleans and choices are handled apart. */
const FAULT_NUMBERS: Record<FaultKind, { key: string; label: string; value: number }[]> = {
  lamp_stuck: [],
  lamp_inverted: [],
  pointer_offset: [{ key: "degrees", label: "Degrees", value: 15 }],
  pointer_scale: [{ key: "factor", label: "Factor", value: 1.2 }],
  pointer_slow: [{ key: "degPerSec", label: "Degrees per second", value: 20 }],
  missed_steps: [
    { key: "everyMs", label: "Every (ms)", value: 2000 },
    { key: "degrees", label: "Degrees", value: 2 },
  ],
  digit_dropped: [{ key: "position", label: "Digit (0 = leftmost)", value: 0 }],
  breaker_stuck: [],
  added_lag: [{ key: "ms", label: "Lag (ms)", value: 800 }],
  disconnect: [
    { key: "fromMs", label: "From (ms)", value: 5000 },
    { key: "toMs", label: "To (ms)", value: 10000 },
  ],
};
const FAULT_KINDS = Object.keys(FAULT_NUMBERS) as FaultKind[];

interface LinkDraft {
  kind: (typeof LINK_KINDS)[number];
  panelId: string;
  faults: Fault[];
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
  const newLink = (): LinkDraft => ({ kind: "virtual", panelId: panelList.find((p) => !links.some((l) => l.panelId === p.id))?.id ?? panelList[0]?.id ?? "", faults: [], path: "/dev/ttyUSB0", baud: 115200, address: links.length + 1 });
  const shown = links.length ? links : panelList.length ? [newLink()] : [];
  const update = (i: number, patch: Partial<LinkDraft>) => setLinks(shown.map((l, j) => (j === i ? { ...l, ...patch } : l)));

  const submit = () => {
    const body: CreateRunBody = { recordingId: chosenRecording, links: shown.map(toInput), speed, tolerance: lagBudget.trim() ? { lagBudgetMs: Math.round(Number(lagBudget)) } : {}, ...(name.trim() ? { name: name.trim() } : {}) };
    create.mutate(body, {
      onSuccess: (run) => {
        rememberRunFaults(run.id, body.links.map((l) => ({ panelId: l.panelId, kind: l.kind, faults: l.kind === "virtual" ? l.faults : undefined })));
        navigate(`/w/${w.id}/runs/${run.id}`);
      },
    });
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
            {[0.5, 1, 2, 4, 8, 16].map((s) => (
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
  const elements = (panel.data?.definition.elements ?? []).filter((e) => !e.placeholder);
  const [faultKind, setFaultKind] = useState<FaultKind>("lamp_stuck");
  const [element, setElement] = useState("");
  const [lit, setLit] = useState(true);
  const [breaker, setBreaker] = useState<"in" | "pulled" | "tripped">("pulled");
  const [numbers, setNumbers] = useState<Record<string, number>>({});
  const chosenElement = element || elements[0]?.id || "";

  const addFault = () => {
    const nums = Object.fromEntries(FAULT_NUMBERS[faultKind].map((n) => [n.key, numbers[`${faultKind}.${n.key}`] ?? n.value]));
    let f: Fault;
    if (faultKind === "disconnect") f = { kind: "disconnect", fromMs: nums.fromMs, toMs: nums.toMs };
    else if (faultKind === "lamp_stuck") f = { kind: "lamp_stuck", element: chosenElement, lit };
    else if (faultKind === "breaker_stuck") f = { kind: "breaker_stuck", element: chosenElement, position: breaker };
    else f = { kind: faultKind, element: chosenElement, ...nums } as Fault;
    onChange({ faults: [...draft.faults, f] });
  };

  return (
    <fieldset className="rounded-lg border border-rule bg-card p-5" aria-label={`Panel ${index + 1}`}>
      <legend className="px-1 text-lg font-semibold">Panel {index + 1}</legend>
      <div className="grid gap-3 sm:grid-cols-3">
        <Select label="Panel" value={draft.panelId} onChange={(e) => onChange({ panelId: e.target.value, faults: [] })}>
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
        <div className="mt-4 flex flex-col gap-3" role="group" aria-label="Injected faults">
          <h3 className="font-semibold">Injected faults</h3>
          {draft.faults.length === 0 ? (
            <p className="text-sm text-ink-soft">None: a healthy virtual panel should pass.</p>
          ) : (
            <ul className="flex flex-col gap-1 text-sm" aria-label="Faults to inject">
              {draft.faults.map((f, i) => (
                <li key={i} className="flex items-center gap-3">
                  <span className="font-mono">
                    ▲ {FAULT_WORDS[f.kind]}
                    {"element" in f ? ` on ${f.element}` : ` ${f.fromMs}–${f.toMs} ms`}
                  </span>
                  <button type="button" className="text-bad underline" onClick={() => onChange({ faults: draft.faults.filter((_, j) => j !== i) })}>
                    remove
                  </button>
                </li>
              ))}
            </ul>
          )}
          <div className="flex flex-wrap items-end gap-3">
            <Select label="Fault" value={faultKind} onChange={(e) => setFaultKind(e.target.value as FaultKind)}>
              {FAULT_KINDS.map((k) => (
                <option key={k} value={k}>
                  {FAULT_WORDS[k]}
                </option>
              ))}
            </Select>
            {faultKind !== "disconnect" && (
              <Select label="Element" value={chosenElement} onChange={(e) => setElement(e.target.value)}>
                {elements.map((e) => (
                  <option key={e.id} value={e.id}>
                    {e.label} ({e.id})
                  </option>
                ))}
              </Select>
            )}
            {faultKind === "lamp_stuck" && (
              <Select label="Stuck" value={lit ? "lit" : "dark"} onChange={(e) => setLit(e.target.value === "lit")}>
                <option value="lit">lit</option>
                <option value="dark">dark</option>
              </Select>
            )}
            {faultKind === "breaker_stuck" && (
              <Select label="Stuck at" value={breaker} onChange={(e) => setBreaker(e.target.value as typeof breaker)}>
                <option value="in">in</option>
                <option value="pulled">pulled</option>
                <option value="tripped">tripped</option>
              </Select>
            )}
            {FAULT_NUMBERS[faultKind].map((n) => (
              <Field
                key={`${faultKind}.${n.key}`}
                label={n.label}
                type="number"
                value={numbers[`${faultKind}.${n.key}`] ?? n.value}
                onChange={(e) => setNumbers({ ...numbers, [`${faultKind}.${n.key}`]: Number(e.target.value) })}
              />
            ))}
            <Button type="button" onClick={addFault} disabled={faultKind !== "disconnect" && !chosenElement}>
              Add the fault
            </Button>
          </div>
        </div>
      )}
    </fieldset>
  );
}
