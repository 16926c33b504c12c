import { useState, type FormEvent } from "react";
import type { CreatedTokenView } from "../../../shared/api/panels";
import { Button, Card, ErrorNote, Field, Loading } from "../../components/ui";
import { Mark, ProblemList } from "./components";
import { useCreateToken, useRevokeToken, useTokens } from "./queries";

/** Device tokens: a board on the network shows one to say which panel it is. Shown once, stored hashed. */
export function TokensTab({ workshopId, panelId, canWrite }: { workshopId: string; panelId: string; canWrite: boolean }) {
  const tokens = useTokens(workshopId, panelId);
  const create = useCreateToken(workshopId, panelId);
  const revoke = useRevokeToken(workshopId, panelId);
  const [label, setLabel] = useState("");
  const [fresh, setFresh] = useState<CreatedTokenView | null>(null);

  function submit(e: FormEvent) {
    e.preventDefault();
    create.mutate(label.trim(), {
      onSuccess: (t) => {
        setFresh(t);
        setLabel("");
      },
    });
  }

  return (
    <div className="flex flex-col gap-5">
      <p className="max-w-3xl text-sm text-ink-soft">
        A board that reaches the bench over the network (Wi-Fi or Ethernet) presents a device token to say which panel it is. Make one token per board, put it in the board's
        settings, and revoke it when the board is retired or the token has leaked.
      </p>
      {canWrite && (
        <Card title="New device token">
          <form onSubmit={submit} className="flex flex-wrap items-end gap-3">
            <div className="min-w-64 flex-1">
              <Field label="Which board" value={label} onChange={(e) => setLabel(e.target.value)} maxLength={60} placeholder="glareshield board, ESP32 #2" required />
            </div>
            <Button type="submit" tone="primary" disabled={!label.trim() || create.isPending}>
              Make a token
            </Button>
          </form>
          <div className="mt-2">
            <ProblemList error={create.error} />
          </div>
          {fresh && (
            <div role="status" className="mt-3 rounded-md border border-amber/60 bg-amber/10 px-3 py-2 text-sm">
              <p className="font-semibold">Copy this token now: it is shown once and only its fingerprint is kept.</p>
              <code className="mt-1 block break-all font-mono text-xs select-all" data-testid="fresh-token">
                {fresh.token}
              </code>
            </div>
          )}
        </Card>
      )}
      {tokens.isPending ? (
        <Loading what="Loading tokens" />
      ) : tokens.error ? (
        <ErrorNote error={tokens.error} />
      ) : tokens.data.length === 0 ? (
        <p className="text-sm text-ink-soft">No device tokens for this panel.</p>
      ) : (
        <table className="w-full rounded-lg border border-rule bg-card text-left text-sm">
          <thead className="border-b border-rule bg-paper text-xs tracking-wide text-ink-soft uppercase">
            <tr>
              <th className="px-3 py-2 font-semibold">Board</th>
              <th className="px-3 py-2 font-semibold">Made</th>
              <th className="px-3 py-2 font-semibold">Last used</th>
              <th className="px-3 py-2 font-semibold">State</th>
              <th className="px-3 py-2" />
            </tr>
          </thead>
          <tbody>
            {tokens.data.map((t) => (
              <tr key={t.id} className="border-b border-rule/60 last:border-0">
                <td className="px-3 py-2 font-semibold">{t.label}</td>
                <td className="px-3 py-2 font-mono text-xs">{new Date(t.createdAt).toLocaleString()}</td>
                <td className="px-3 py-2 font-mono text-xs">{t.lastUsedAt ? new Date(t.lastUsedAt).toLocaleString() : "never"}</td>
                <td className="px-3 py-2">{t.revokedAt ? <Mark glyph="✕" word="revoked" tone="text-ink-soft" /> : <Mark glyph="●" word="accepted" tone="text-good" />}</td>
                <td className="px-3 py-2 text-right">
                  {canWrite && !t.revokedAt && (
                    <Button tone="danger" className="!px-2.5 !py-1 text-xs" onClick={() => revoke.mutate(t.id)} disabled={revoke.isPending}>
                      Revoke
                    </Button>
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </div>
  );
}
