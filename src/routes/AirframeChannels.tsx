import { useRef, useState, type FormEvent } from "react";
import { Link, useOutletContext, useParams } from "react-router";
import type { WorkshopDetail } from "../../shared/api/workshops";
import { CHANNEL_KINDS, channelDefinition, channelList, type ChannelDefinition, type ChannelKind } from "../../shared/recording/channels";
import { formatPath } from "../../shared/recording/errors";
import { Button, Card, DoneNote, ErrorNote, Loading } from "../components/ui";
import { ApiError } from "../lib/api";
import { RecordingsNav } from "../features/recordings/components";
import { formatValue } from "../features/recordings/format";
import { catalogueDownloadUrl, useAirframe, useReplaceChannels } from "../features/recordings/queries";

/** One airframe's channel catalogue: read it, edit it in place, confirm drafts, import and export it as JSON. */
export function AirframeChannels() {
  const w = useOutletContext<WorkshopDetail>();
  const { airframeId = "" } = useParams();
  const canWrite = w.abilities.includes("bench.write");
  const airframe = useAirframe(w.id, airframeId);

  return (
    <div>
      <RecordingsNav workshopId={w.id} canWrite={canWrite} />
      {airframe.isPending ? (
        <Loading what="Opening the catalogue" />
      ) : airframe.error ? (
        <ErrorNote
          error={airframe.error instanceof ApiError && airframe.error.status === 404 ? new Error("This airframe does not exist (any more).") : airframe.error}
        />
      ) : (
        <Catalogue key={airframeId} workshopId={w.id} airframeId={airframeId} name={airframe.data.name} description={airframe.data.description} saved={airframe.data.channels} canWrite={canWrite} />
      )}
    </div>
  );
}

function describeRange(c: ChannelDefinition): string {
  switch (c.kind) {
    case "number":
      if (c.min === undefined && c.max === undefined) return "any";
      return `${c.min === undefined ? "−∞" : formatValue(c.min)} to ${c.max === undefined ? "∞" : formatValue(c.max)}`;
    case "boolean":
      return "true, false";
    case "enum":
      return c.values.join(", ");
    case "text":
      return `up to ${c.maxLength ?? 256} characters`;
  }
}

function issuesOf(error: { issues: { path: PropertyKey[]; message: string }[] }, prefix: PropertyKey[] = []): string[] {
  return error.issues.map((i) => {
    const path = formatPath([...prefix, ...i.path]);
    return path ? `${path}: ${i.message}` : i.message;
  });
}

function Catalogue({
  workshopId,
  airframeId,
  name,
  description,
  saved,
  canWrite,
}: {
  workshopId: string;
  airframeId: string;
  name: string;
  description: string | null;
  saved: ChannelDefinition[];
  canWrite: boolean;
}) {
  const [working, setWorking] = useState<ChannelDefinition[] | null>(null);
  const [editing, setEditing] = useState<number | "new" | null>(null);
  const [problems, setProblems] = useState<string[]>([]);
  const [done, setDone] = useState<string | null>(null);
  const replace = useReplaceChannels(workshopId, airframeId);
  const fileInput = useRef<HTMLInputElement>(null);
  const channels = working ?? saved;
  const drafts = channels.filter((c) => c.draft).length;

  function change(next: ChannelDefinition[]) {
    setWorking(next);
    setDone(null);
  }

  function save() {
    const checked = channelList.safeParse(channels);
    if (!checked.success) return setProblems(issuesOf(checked.error, ["channels"]));
    setProblems([]);
    replace.mutate(checked.data, {
      onSuccess: () => {
        setWorking(null);
        setDone("Catalogue saved.");
      },
    });
  }

  async function importFile(file: File) {
    setDone(null);
    let json: unknown;
    try {
      json = JSON.parse(await file.text());
    } catch (error) {
      return setProblems([`${file.name} is not JSON: ${(error as Error).message}`]);
    }
    const list = Array.isArray(json) ? json : (json as { channels?: unknown } | null)?.channels;
    const checked = channelList.safeParse(list);
    if (!checked.success) return setProblems([`${file.name} was not loaded:`, ...issuesOf(checked.error, ["channels"])]);
    setProblems([]);
    change(checked.data);
    setDone(`${checked.data.length} channels loaded from ${file.name}. Check them, then save the catalogue.`);
  }

  return (
    <div className="flex flex-col gap-5">
      <header className="flex flex-wrap items-start justify-between gap-4">
        <div>
          <p className="text-sm text-ink-soft">
            <Link to={`/w/${workshopId}/recordings/airframes`} className="underline">Airframes</Link> / channel catalogue
          </p>
          <h2 className="text-xl font-bold tracking-tight">{name}</h2>
          {description && <p className="text-sm text-ink-soft">{description}</p>}
          <p className="mt-1 text-sm">
            {channels.length} channels
            {drafts > 0 && (
              <span className="ml-2 text-ink">
                <span aria-hidden="true">◇ </span>
                {drafts} {drafts === 1 ? "draft" : "drafts"} to confirm
              </span>
            )}
          </p>
        </div>
        <div className="flex flex-wrap items-center gap-2">
          <a href={catalogueDownloadUrl(workshopId, airframeId)} download className="rounded-md border border-rule bg-card px-3 py-2 text-sm font-semibold text-ink no-underline hover:bg-paper">
            Export catalogue JSON
          </a>
          {canWrite && (
            <>
              <Button onClick={() => fileInput.current?.click()}>Import catalogue JSON</Button>
              <input
                ref={fileInput}
                type="file"
                accept=".json,application/json"
                aria-label="Catalogue JSON file"
                className="hidden"
                onChange={(e) => {
                  const f = e.target.files?.[0];
                  e.target.value = "";
                  if (f) void importFile(f);
                }}
              />
              {drafts > 0 && (
                <Button onClick={() => change(channels.map((c) => ({ ...c, draft: undefined })))}>Confirm every draft</Button>
              )}
              <Button onClick={() => setEditing("new")} disabled={editing !== null}>Add a channel</Button>
            </>
          )}
        </div>
      </header>

      {working && (
        <div role="status" className="sticky top-2 z-10 flex flex-wrap items-center justify-between gap-3 rounded-md border border-amber bg-amber/10 px-4 py-2 text-sm">
          <span>
            <span aria-hidden="true" className="mr-1 font-mono">◆</span>
            Unsaved changes to the catalogue.
          </span>
          <span className="flex gap-2">
            <Button tone="primary" disabled={replace.isPending || editing !== null} onClick={save}>
              {replace.isPending ? "Saving…" : "Save catalogue"}
            </Button>
            <Button onClick={() => { setWorking(null); setEditing(null); setProblems([]); }}>Discard</Button>
          </span>
        </div>
      )}
      {problems.length > 0 && (
        <div role="alert" className="rounded-md border border-bad/40 bg-bad/5 px-3 py-2 text-sm text-bad">
          <ul className="flex flex-col gap-0.5">
            {problems.map((p, i) => (
              <li key={i}><span aria-hidden="true" className="mr-1 font-mono">▲</span>{p}</li>
            ))}
          </ul>
        </div>
      )}
      <ErrorNote error={replace.error} />
      {done && <DoneNote>{done}</DoneNote>}

      <Card>
        <div className="overflow-x-auto">
          <table className="w-full text-left text-sm" aria-label="Channel catalogue">
            <thead className="border-b border-rule text-ink-soft">
              <tr>
                <th className="py-2 pr-3 font-semibold">Channel</th>
                <th className="py-2 pr-3 font-semibold">Kind</th>
                <th className="py-2 pr-3 font-semibold">Unit</th>
                <th className="py-2 pr-3 font-semibold">Range or values</th>
                <th className="py-2 pr-3 font-semibold">Description</th>
                <th className="py-2 pr-3 font-semibold">State</th>
                {canWrite && <th className="py-2 font-semibold"><span className="sr-only">Actions</span></th>}
              </tr>
            </thead>
            <tbody>
              {editing === "new" && (
                <EditRow
                  initial={null}
                  others={channels}
                  onCancel={() => setEditing(null)}
                  onApply={(c) => {
                    change([...channels, c]);
                    setEditing(null);
                  }}
                />
              )}
              {channels.length === 0 && editing !== "new" && (
                <tr>
                  <td colSpan={7} className="py-6 text-center text-ink-soft">
                    The catalogue is empty. Add channels, import a catalogue JSON, or upload a recording with “add unknown channels as drafts”.
                  </td>
                </tr>
              )}
              {channels.map((c, i) =>
                editing === i ? (
                  <EditRow
                    key={c.name}
                    initial={c}
                    others={channels.filter((_, j) => j !== i)}
                    onCancel={() => setEditing(null)}
                    onApply={(next) => {
                      change(channels.map((old, j) => (j === i ? next : old)));
                      setEditing(null);
                    }}
                  />
                ) : (
                  <tr key={c.name} className={`border-b border-rule/60 last:border-0 ${c.draft ? "bg-paper/70" : ""}`}>
                    <td className="py-1.5 pr-3 font-mono">{c.name}</td>
                    <td className="py-1.5 pr-3">{c.kind}</td>
                    <td className="py-1.5 pr-3">{c.unit ?? "–"}</td>
                    <td className="py-1.5 pr-3 font-mono text-xs">{describeRange(c)}</td>
                    <td className="py-1.5 pr-3 text-ink-soft">{c.description ?? ""}</td>
                    <td className="py-1.5 pr-3 whitespace-nowrap">
                      {c.draft ? (
                        <span className="inline-block rounded-sm border border-dashed border-ink/60 px-1.5 py-0.5 font-mono text-[11px] tracking-widest uppercase" title="First seen in an import; confirm its kind, unit and range">
                          ◇ draft
                        </span>
                      ) : (
                        <span className="text-ink-soft">confirmed</span>
                      )}
                    </td>
                    {canWrite && (
                      <td className="py-1.5 text-right whitespace-nowrap">
                        <span className="inline-flex gap-1.5">
                          {c.draft && (
                            <Button className="px-2 py-1 text-xs" aria-label={`Confirm ${c.name}`} onClick={() => change(channels.map((old, j) => (j === i ? { ...old, draft: undefined } : old)))}>
                              Confirm
                            </Button>
                          )}
                          <Button className="px-2 py-1 text-xs" aria-label={`Edit ${c.name}`} disabled={editing !== null} onClick={() => setEditing(i)}>
                            Edit
                          </Button>
                          <Button tone="danger" className="px-2 py-1 text-xs" aria-label={`Remove ${c.name}`} disabled={editing !== null} onClick={() => change(channels.filter((_, j) => j !== i))}>
                            Remove
                          </Button>
                        </span>
                      </td>
                    )}
                  </tr>
                ),
              )}
            </tbody>
          </table>
        </div>
      </Card>
      <p className="text-xs text-ink-soft">
        Changes apply to new imports and captures; recordings already stored keep the channels they were made with.
      </p>
    </div>
  );
}

function EditRow({
  initial,
  others,
  onApply,
  onCancel,
}: {
  initial: ChannelDefinition | null;
  others: ChannelDefinition[];
  onApply: (c: ChannelDefinition) => void;
  onCancel: () => void;
}) {
  const [name, setName] = useState(initial?.name ?? "");
  const [kind, setKind] = useState<ChannelKind>(initial?.kind ?? "number");
  const [unit, setUnit] = useState(initial?.unit ?? "");
  const [min, setMin] = useState(initial?.kind === "number" && initial.min !== undefined ? String(initial.min) : "");
  const [max, setMax] = useState(initial?.kind === "number" && initial.max !== undefined ? String(initial.max) : "");
  const [values, setValues] = useState(initial?.kind === "enum" ? initial.values.join(", ") : "");
  const [maxLength, setMaxLength] = useState(initial?.kind === "text" && initial.maxLength !== undefined ? String(initial.maxLength) : "");
  const [description, setDescription] = useState(initial?.description ?? "");
  const [problems, setProblems] = useState<string[]>([]);

  function apply(e?: FormEvent) {
    e?.preventDefault();
    const num = (s: string) => (s.trim() === "" ? undefined : Number(s.replace(",", ".")));
    const candidate: Record<string, unknown> = { name: name.trim(), kind };
    if (unit.trim()) candidate.unit = unit.trim();
    if (description.trim()) candidate.description = description.trim();
    // Editing keeps a draft a draft: confirming is its own, explicit step.
    if (initial?.draft) candidate.draft = true;
    if (kind === "number") {
      if (num(min) !== undefined) candidate.min = num(min);
      if (num(max) !== undefined) candidate.max = num(max);
    }
    if (kind === "enum") candidate.values = values.split(",").map((v) => v.trim()).filter(Boolean);
    if (kind === "text" && num(maxLength) !== undefined) candidate.maxLength = num(maxLength);
    const checked = channelDefinition.safeParse(candidate);
    const found: string[] = checked.success ? [] : issuesOf(checked.error);
    if (others.some((o) => o.name === candidate.name)) found.push(`name: ${String(candidate.name)} is already in the catalogue`);
    if (found.length || !checked.success) return setProblems(found);
    onApply(checked.data);
  }

  const input = "w-full rounded border border-rule bg-card px-2 py-1 text-sm";
  return (
    <tr className="border-b border-amber/60 bg-amber/5" aria-label={initial ? `Editing ${initial.name}` : "New channel"}>
      <td className="py-2 pr-2 align-top">
        <input aria-label="Channel name" className={`${input} font-mono`} value={name} onChange={(e) => setName(e.target.value)} placeholder="gear.handle" autoFocus />
      </td>
      <td className="py-2 pr-2 align-top">
        <select aria-label="Kind" className={input} value={kind} onChange={(e) => setKind(e.target.value as ChannelKind)}>
          {CHANNEL_KINDS.map((k) => (
            <option key={k} value={k}>{k}</option>
          ))}
        </select>
      </td>
      <td className="py-2 pr-2 align-top">
        <input aria-label="Unit" className={input} value={unit} onChange={(e) => setUnit(e.target.value)} placeholder="ft" />
      </td>
      <td className="py-2 pr-2 align-top">
        {kind === "number" && (
          <span className="flex gap-1">
            <input aria-label="Minimum" className={`${input} font-mono`} value={min} onChange={(e) => setMin(e.target.value)} placeholder="min" inputMode="decimal" />
            <input aria-label="Maximum" className={`${input} font-mono`} value={max} onChange={(e) => setMax(e.target.value)} placeholder="max" inputMode="decimal" />
          </span>
        )}
        {kind === "enum" && <input aria-label="Named values" className={`${input} font-mono`} value={values} onChange={(e) => setValues(e.target.value)} placeholder="UP, DOWN" />}
        {kind === "text" && <input aria-label="Longest text" className={`${input} font-mono`} value={maxLength} onChange={(e) => setMaxLength(e.target.value)} placeholder="256" inputMode="numeric" />}
        {kind === "boolean" && <span className="text-xs text-ink-soft">true, false</span>}
      </td>
      <td className="py-2 pr-2 align-top" colSpan={2}>
        <input aria-label="Description" className={input} value={description} onChange={(e) => setDescription(e.target.value)} />
        {problems.length > 0 && (
          <ul role="alert" className="mt-1 text-xs text-bad">
            {problems.map((p, i) => (
              <li key={i}>✕ {p}</li>
            ))}
          </ul>
        )}
      </td>
      <td className="py-2 text-right align-top whitespace-nowrap">
        <span className="inline-flex gap-1.5">
          <Button tone="primary" className="px-2 py-1 text-xs" onClick={() => apply()}>
            {initial ? "Apply" : "Add"}
          </Button>
          <Button className="px-2 py-1 text-xs" onClick={onCancel}>
            Cancel
          </Button>
        </span>
      </td>
    </tr>
  );
}
