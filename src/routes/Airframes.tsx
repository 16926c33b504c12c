import { useState, type FormEvent } from "react";
import { Link, useOutletContext } from "react-router";
import type { WorkshopDetail } from "../../shared/api/workshops";
import { Button, Card, DoneNote, ErrorNote, Field, Loading } from "../components/ui";
import { Empty, RecordingsNav } from "../features/recordings/components";
import { useAirframes, useCreateAirframe } from "../features/recordings/queries";

/** The workshop's airframes: each owns the channel catalogue its recordings are checked against. */
export function Airframes() {
  const w = useOutletContext<WorkshopDetail>();
  const canWrite = w.abilities.includes("bench.write");
  const airframes = useAirframes(w.id);

  return (
    <div>
      <RecordingsNav workshopId={w.id} canWrite={canWrite} />
      <div className="mb-5">
        <h2 className="text-xl font-bold tracking-tight">Airframes and channels</h2>
        <p className="text-sm text-ink-soft">
          An airframe is an aircraft type. Its channel catalogue names every value its recordings may hold, with kind, unit and range.
        </p>
      </div>
      <div className="grid gap-6 lg:grid-cols-[1fr_22rem]">
        <div>
          {airframes.isPending ? (
            <Loading what="Loading airframes" />
          ) : airframes.error ? (
            <ErrorNote error={airframes.error} />
          ) : airframes.data.length === 0 ? (
            <Empty>No airframes yet. {canWrite ? "Create the first one beside this list." : "Builders of this workshop add them."}</Empty>
          ) : (
            <div className="overflow-x-auto rounded-lg border border-rule bg-card">
              <table className="w-full text-left text-sm" aria-label="Airframes">
                <thead className="border-b border-rule bg-paper/60 text-ink-soft">
                  <tr>
                    <th className="px-3 py-2 font-semibold">Airframe</th>
                    <th className="px-3 py-2 text-right font-semibold">Channels</th>
                    <th className="px-3 py-2 text-right font-semibold">Drafts to confirm</th>
                    <th className="px-3 py-2 text-right font-semibold">Recordings</th>
                  </tr>
                </thead>
                <tbody>
                  {airframes.data.map((a) => (
                    <tr key={a.id} className="border-b border-rule/60 last:border-0">
                      <td className="px-3 py-2">
                        <Link to={`/w/${w.id}/recordings/airframes/${a.id}`} className="font-semibold text-ink underline decoration-amber/60 underline-offset-2">
                          {a.name}
                        </Link>
                        {a.description && <p className="text-xs text-ink-soft">{a.description}</p>}
                      </td>
                      <td className="px-3 py-2 text-right font-mono">{a.channelCount}</td>
                      <td className="px-3 py-2 text-right font-mono">
                        {a.draftChannelCount > 0 ? (
                          <span className="inline-flex items-baseline gap-1">
                            <span aria-hidden="true">◇</span>
                            {a.draftChannelCount}
                          </span>
                        ) : (
                          "none"
                        )}
                      </td>
                      <td className="px-3 py-2 text-right font-mono">{a.recordingCount}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          )}
        </div>
        {canWrite && <CreateAirframe workshopId={w.id} />}
      </div>
    </div>
  );
}

function CreateAirframe({ workshopId }: { workshopId: string }) {
  const [name, setName] = useState("");
  const [description, setDescription] = useState("");
  const [made, setMade] = useState<string | null>(null);
  const create = useCreateAirframe(workshopId);

  function submit(e: FormEvent) {
    e.preventDefault();
    setMade(null);
    create.mutate(
      { name: name.trim(), ...(description.trim() ? { description: description.trim() } : {}) },
      {
        onSuccess: (a) => {
          setMade(a.name);
          setName("");
          setDescription("");
        },
      },
    );
  }

  return (
    <Card title="New airframe">
      <form onSubmit={submit} aria-label="New airframe" className="flex flex-col gap-4">
        <Field label="Airframe name" value={name} maxLength={80} required onChange={(e) => setName(e.target.value)} placeholder="Marlin TX-2 (invented twin)" />
        <Field label="Description" value={description} maxLength={500} onChange={(e) => setDescription(e.target.value)} hint="Optional: variant, simulator model, notes." />
        <ErrorNote error={create.error} />
        {made && <DoneNote>{made} is ready. Its catalogue starts empty: import one, add channels, or upload a recording with new channels as drafts.</DoneNote>}
        <div>
          <Button type="submit" tone="primary" disabled={create.isPending || !name.trim()}>
            Create airframe
          </Button>
        </div>
      </form>
    </Card>
  );
}
