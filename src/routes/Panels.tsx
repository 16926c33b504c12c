import { useState, type FormEvent } from "react";
import { Link, useNavigate, useOutletContext } from "react-router";
import type { WorkshopDetail } from "../../shared/api/workshops";
import { importPanelJson } from "../../shared/panel/schema";
import { Button, Card, ErrorNote, Field, Loading, Select } from "../components/ui";
import { Mark, ProblemList, slugify } from "../features/panels/components";
import { useCreatePanel, usePanels } from "../features/panels/queries";
import { kindSummary } from "../features/panels/words";
import { useAirframes } from "../features/recordings/queries";

/** The workshop's panels: a table, and for builders a new panel or an imported definition. */
export function Panels() {
  const w = useOutletContext<WorkshopDetail>();
  const canWrite = w.abilities.includes("bench.write");
  const panels = usePanels(w.id);
  const [open, setOpen] = useState<"new" | "import" | null>(null);

  return (
    <div>
      <div className="mb-5 flex flex-wrap items-end justify-between gap-4">
        <div>
          <h2 className="text-xl font-bold tracking-tight">Panels</h2>
          <p className="text-sm text-ink-soft">Each panel lists its elements and what each should show as the aircraft changes.</p>
        </div>
        {canWrite && (
          <div className="flex flex-wrap gap-2">
            <Button tone="primary" onClick={() => setOpen(open === "new" ? null : "new")} aria-expanded={open === "new"}>
              New panel
            </Button>
            <Button onClick={() => setOpen(open === "import" ? null : "import")} aria-expanded={open === "import"}>
              Import a definition
            </Button>
          </div>
        )}
      </div>
      <div className="flex flex-col gap-6">
        {canWrite && open && <NewPanel workshopId={w.id} importing={open === "import"} onClose={() => setOpen(null)} />}
        {panels.isPending ? (
          <Loading what="Loading panels" />
        ) : panels.error ? (
          <ErrorNote error={panels.error} />
        ) : panels.data.length === 0 ? (
          <Card>
            <p className="font-semibold">No panels described yet.</p>
            <p className="mt-1 text-sm text-ink-soft">
              {canWrite
                ? "Start one for a panel you are building, or import a definition someone shared. You will need an airframe with channels first (under Recordings)."
                : "As a viewer you will see panels here when builders add them."}
            </p>
          </Card>
        ) : (
          <div className="overflow-x-auto rounded-lg border border-rule bg-card">
            <table className="w-full text-left text-sm">
              <thead className="border-b border-rule bg-paper text-xs tracking-wide text-ink-soft uppercase">
                <tr>
                  <th className="px-4 py-2.5 font-semibold">Panel</th>
                  <th className="px-4 py-2.5 font-semibold">Airframe</th>
                  <th className="px-4 py-2.5 font-semibold">Elements</th>
                  <th className="px-4 py-2.5 font-semibold">Photo</th>
                </tr>
              </thead>
              <tbody>
                {panels.data.map((p) => (
                  <tr key={p.id} className="border-b border-rule/60 last:border-0">
                    <td className="px-4 py-3">
                      <Link to={`/w/${w.id}/panels/${p.id}`} className="font-semibold text-ink underline decoration-amber/60 underline-offset-2 hover:decoration-amber">
                        {p.name}
                      </Link>
                      <div className="font-mono text-xs text-ink-soft">
                        {p.slug}
                        {p.mirrorOf && " · mirrored"}
                      </div>
                    </td>
                    <td className="px-4 py-3">{p.airframeName}</td>
                    <td className="px-4 py-3">
                      <span className="font-mono">{p.elementCount}</span>
                      <span className="text-ink-soft">
                        {" "}
                        · {kindSummary(p.kinds)}
                        {p.placeholderCount > 0 && ` · ${p.placeholderCount} placeholder${p.placeholderCount === 1 ? "" : "s"}`}
                      </span>
                    </td>
                    <td className="px-4 py-3">{p.hasPhoto ? <Mark glyph="●" word="yes" tone="text-good" /> : <Mark glyph="○" word="none yet" tone="text-ink-soft" />}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
      </div>
    </div>
  );
}

/** A new, empty panel; or a pasted or chosen definition file, checked here first with every problem's path. */
function NewPanel({ workshopId, importing, onClose }: { workshopId: string; importing: boolean; onClose: () => void }) {
  const airframes = useAirframes(workshopId);
  const create = useCreatePanel(workshopId);
  const navigate = useNavigate();
  const [airframeId, setAirframeId] = useState("");
  const [name, setName] = useState("");
  const [slug, setSlug] = useState("");
  const [text, setText] = useState("");
  const [localProblems, setLocalProblems] = useState<{ path: string; message: string }[]>([]);
  const chosen = airframeId || airframes.data?.[0]?.id || "";
  const airframeName = airframes.data?.find((a) => a.id === chosen)?.name ?? "airframe";

  async function submit(e: FormEvent) {
    e.preventDefault();
    setLocalProblems([]);
    let definition: unknown;
    if (importing) {
      const parsed = importPanelJson(text);
      if (!parsed.ok) {
        setLocalProblems(parsed.problems);
        return;
      }
      definition = parsed.panel;
    } else {
      definition = { id: slug || slugify(name), name: name.trim(), airframe: slugify(airframeName), elements: [] };
    }
    const made = await create.mutateAsync({ airframeId: chosen, definition }).catch(() => null);
    if (made) navigate(`/w/${workshopId}/panels/${made.id}`);
  }

  async function readFile(file: File | undefined) {
    if (file) setText(await file.text());
  }

  if (airframes.isPending) return <Loading what="Loading airframes" />;
  if (!airframes.data?.length) {
    return (
      <Card title={importing ? "Import a definition" : "New panel"}>
        <p className="text-sm">
          A panel reads the channels of one airframe. Add an airframe and its channels first:{" "}
          <Link to={`/w/${workshopId}/recordings/airframes`} className="font-semibold underline decoration-amber/60">
            Airframes
          </Link>
          .
        </p>
      </Card>
    );
  }
  return (
    <Card title={importing ? "Import a definition" : "New panel"}>
      <form onSubmit={submit} className="flex flex-col gap-4" aria-label={importing ? "Import a panel definition" : "New panel"}>
        <Select label="Airframe" value={chosen} onChange={(e) => setAirframeId(e.target.value)}>
          {airframes.data.map((a) => (
            <option key={a.id} value={a.id}>
              {a.name} ({a.channelCount} channels)
            </option>
          ))}
        </Select>
        {importing ? (
          <>
            <div className="flex flex-col gap-1">
              <label htmlFor="panel-json" className="text-sm font-semibold">
                Definition (JSON, see the panel definition format)
              </label>
              <textarea
                id="panel-json"
                value={text}
                onChange={(e) => setText(e.target.value)}
                rows={10}
                spellCheck={false}
                className="rounded-md border border-rule bg-card px-3 py-2 font-mono text-xs"
                placeholder='{ "id": "left-sidewall", "name": "Left sidewall", "airframe": "…", "elements": [ … ] }'
              />
            </div>
            <label className="text-sm">
              <span className="font-semibold">Or choose a file: </span>
              <input type="file" accept=".json,application/json" onChange={(e) => readFile(e.target.files?.[0])} />
            </label>
          </>
        ) : (
          <div className="grid gap-3 sm:grid-cols-2">
            <Field label="Name" value={name} onChange={(e) => setName(e.target.value)} required maxLength={80} placeholder="Glareshield, left" />
            <Field
              label="Identifier"
              value={slug || slugify(name || "")}
              onChange={(e) => setSlug(e.target.value)}
              hint="Unique in the workshop; the device header and exports use it."
            />
          </div>
        )}
        {localProblems.length > 0 && (
          <div role="alert" className="rounded-md border border-bad/40 bg-bad/5 px-3 py-2 text-sm text-bad">
            <p className="font-semibold">
              <span aria-hidden="true" className="mr-1 font-mono">▲</span>The definition is not valid ({localProblems.length}):
            </p>
            <ul className="mt-1 list-disc pl-5">
              {localProblems.slice(0, 30).map((p, i) => (
                <li key={i}>
                  <span className="font-mono text-xs">{p.path || "(file)"}</span>: {p.message}
                </li>
              ))}
            </ul>
          </div>
        )}
        <ProblemList error={create.error} />
        <div className="flex gap-2">
          <Button type="submit" tone="primary" disabled={create.isPending || (importing ? !text.trim() : !name.trim())}>
            {create.isPending ? "Saving…" : importing ? "Import" : "Create panel"}
          </Button>
          <Button type="button" onClick={onClose}>
            Cancel
          </Button>
        </div>
      </form>
    </Card>
  );
}
