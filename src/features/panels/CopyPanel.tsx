import { useMemo, useState, type FormEvent } from "react";
import { useNavigate } from "react-router";
import type { PanelDetail } from "../../../shared/api/panels";
import { panelChannels } from "../../../shared/panel/schema";
import type { ChannelDefinition } from "../../../shared/recording/channels";
import { Button, Card, Field } from "../../components/ui";
import { ProblemList } from "./components";
import { useCopyPanel } from "./queries";

/** The channel a mirrored side most likely reads: left/right, 1/2 and l/r swapped, when the catalogue has it. */
export function counterpart(name: string, known: ReadonlySet<string>): string | null {
  const swaps: [RegExp, string][] = [
    [/(^|[._])left($|[._])/, "$1right$2"],
    [/(^|[._])right($|[._])/, "$1left$2"],
    [/_l($|[._])/, "_r$1"],
    [/_r($|[._])/, "_l$1"],
    [/\.l($|[._])/, ".r$1"],
    [/\.r($|[._])/, ".l$1"],
    [/(^|[._])([a-z]+)1($|[._])/, "$1$22$3"],
    [/(^|[._])([a-z]+)2($|[._])/, "$1$21$3"],
  ];
  for (const [from, to] of swaps) {
    if (!from.test(name)) continue;
    const candidate = name.replace(from, to);
    if (candidate !== name && known.has(candidate)) return candidate;
  }
  return null;
}

/** Duplicate (same bindings) or mirror (layout mirrored, ids suffixed, chosen channels swapped). */
export function CopyPanel({
  workshopId,
  panel,
  how,
  channels,
  onClose,
}: {
  workshopId: string;
  panel: PanelDetail;
  how: "duplicate" | "mirror";
  channels: readonly ChannelDefinition[];
  onClose: () => void;
}) {
  const copy = useCopyPanel(workshopId, panel.id, how);
  const navigate = useNavigate();
  const bound = useMemo(() => panelChannels(panel.definition), [panel.definition]);
  const known = useMemo(() => new Set(channels.map((c) => c.name)), [channels]);
  const suggested = useMemo(() => Object.fromEntries(bound.map((c) => [c, counterpart(c, known) ?? c])), [bound, known]);
  const [map, setMap] = useState<Record<string, string>>(suggested);
  const [name, setName] = useState("");
  const [slug, setSlug] = useState("");

  function submit(e: FormEvent) {
    e.preventDefault();
    const channelMap = Object.fromEntries(Object.entries(map).filter(([from, to]) => to && to !== from));
    const body = { ...(name.trim() ? { name: name.trim() } : {}), ...(slug.trim() ? { slug: slug.trim() } : {}), ...(how === "mirror" ? { channelMap } : {}) };
    copy.mutate(body, { onSuccess: (made) => navigate(`/w/${workshopId}/panels/${made.id}`) });
  }

  return (
    <Card title={how === "mirror" ? "Mirror this panel" : "Duplicate this panel"}>
      <form onSubmit={submit} className="flex flex-col gap-4" aria-label={how === "mirror" ? "Mirror the panel" : "Duplicate the panel"}>
        <p className="text-sm text-ink-soft">
          {how === "mirror"
            ? "Builds the other side's panel from this definition: layout positions are mirrored left to right, element identifiers get a side suffix, and the element order (the link's element numbers) stays. The photo stays with this panel; its markers are mirrored as a starting point."
            : "A second panel with the same elements, bindings and photo, to change on its own."}
        </p>
        <div className="grid gap-3 sm:grid-cols-2">
          <Field label="Name" value={name} onChange={(e) => setName(e.target.value)} placeholder={`${panel.name} (${how === "mirror" ? "mirror" : "copy"})`} maxLength={80} />
          <Field label="Identifier" value={slug} onChange={(e) => setSlug(e.target.value)} placeholder="chosen for you when empty" maxLength={40} />
        </div>
        {how === "mirror" && bound.length > 0 && (
          <fieldset className="rounded-md border border-rule px-3 pb-3">
            <legend className="px-1 text-sm font-semibold">Channels the other side reads</legend>
            <p className="mb-2 text-xs text-ink-soft">Suggested where the catalogue has a left/right or 1/2 counterpart; change any.</p>
            <div className="grid gap-2">
              {bound.map((c) => (
                <div key={c} className="grid grid-cols-[1fr_auto_1fr] items-center gap-2 text-sm">
                  <span className="font-mono text-xs">{c}</span>
                  <span aria-hidden="true">→</span>
                  <select
                    aria-label={`Mirrored side reads instead of ${c}`}
                    value={map[c] ?? c}
                    onChange={(e) => setMap((m) => ({ ...m, [c]: e.target.value }))}
                    className="rounded-md border border-rule bg-card px-2 py-1 font-mono text-xs"
                  >
                    {channels.map((k) => (
                      <option key={k.name} value={k.name}>
                        {k.name}
                        {k.name === c ? " (the same)" : ""}
                      </option>
                    ))}
                  </select>
                </div>
              ))}
            </div>
          </fieldset>
        )}
        <ProblemList error={copy.error} />
        <div className="flex gap-2">
          <Button type="submit" tone="primary" disabled={copy.isPending}>
            {copy.isPending ? "Working…" : how === "mirror" ? "Make the mirrored panel" : "Make the copy"}
          </Button>
          <Button type="button" onClick={onClose}>
            Cancel
          </Button>
        </div>
      </form>
    </Card>
  );
}
