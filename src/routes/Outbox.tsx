import { useState, type ReactNode } from "react";
import { ApiError } from "../lib/api";
import { useClearOutbox, useOutbox } from "../lib/queries";
import { Link } from "react-router";
import { Gauge } from "../components/Gauge";
import { Button, Card, ErrorNote, Loading, PageTitle } from "../components/ui";

const URL_PATTERN = /(https?:\/\/[^\s<>"]+)/g;

/** Plain text with its web addresses turned into links that open here. */
function linkify(text: string): ReactNode[] {
  return text.split(URL_PATTERN).map((part, i) =>
    /^https?:\/\//.test(part) ? (
      <a key={i} href={part} className="break-all text-calm underline">
        {part}
      </a>
    ) : (
      <span key={i}>{part}</span>
    ),
  );
}

/**
 * The Outbox stands outside sign-in: it exists only on a developer's or tester's own
 * machine, and an invited person must reach their invitation before they have an account.
 */
export function OutboxPage() {
  return (
    <div className="min-h-full">
      <header className="bg-bezel text-dial">
        <div className="mx-auto flex max-w-6xl items-center gap-3 px-4 py-3">
          <Link to="/workshops" className="flex items-center gap-2 font-bold text-dial no-underline">
            <Gauge className="h-7 w-7" /> Panelproof
          </Link>
          <span className="text-sm text-dial/70">local mail</span>
        </div>
      </header>
      <main className="mx-auto max-w-6xl px-4 py-8">
        <Outbox />
      </main>
    </div>
  );
}

/** Mail caught by the local fake SMTP server: only on a developer's or tester's own machine. */
export function Outbox() {
  const outbox = useOutbox();
  const clear = useClearOutbox();
  const [openId, setOpenId] = useState<string | null>(null);

  if (outbox.isPending) return <Loading what="Reading the outbox" />;
  if (outbox.error) {
    const off = outbox.error instanceof ApiError && outbox.error.status === 404;
    return <ErrorNote error={off ? new Error("Mail goes to a real SMTP server here, so there is no outbox to show.") : outbox.error} />;
  }
  const messages = outbox.data;
  const open = messages.find((m) => m.id === openId) ?? messages[0];

  return (
    <div>
      <PageTitle sub="Every e-mail Panelproof sent while mail goes to the local fake SMTP server. Nothing here left this machine.">
        Outbox
      </PageTitle>
      {messages.length === 0 ? (
        <Card><p className="text-ink-soft">No mail yet. Invitations and password-reset links will appear here.</p></Card>
      ) : (
        <div className="grid gap-6 lg:grid-cols-[22rem_1fr]">
          <div className="flex flex-col gap-2">
            <ul className="flex flex-col gap-2" aria-label="Messages">
              {messages.map((m) => (
                <li key={m.id}>
                  <button
                    type="button"
                    onClick={() => setOpenId(m.id)}
                    aria-current={open?.id === m.id}
                    className={`w-full rounded-md border px-3 py-2 text-left text-sm ${open?.id === m.id ? "border-ink/50 bg-card" : "border-rule bg-card/60 hover:bg-card"}`}
                  >
                    <span className="block font-mono text-xs text-ink-soft">{m.to.join(", ")} · {new Date(m.receivedAt).toLocaleTimeString()}</span>
                    <span className="block font-semibold">{m.subject}</span>
                  </button>
                </li>
              ))}
            </ul>
            <Button tone="danger" onClick={() => clear.mutate()} disabled={clear.isPending}>Empty the outbox</Button>
          </div>
          {open && (
            <Card title={open.subject}>
              <p className="mb-3 font-mono text-xs text-ink-soft">From {open.from} to {open.to.join(", ")}</p>
              <div className="whitespace-pre-wrap text-sm leading-relaxed" data-testid="outbox-body">{linkify(open.text)}</div>
            </Card>
          )}
        </div>
      )}
    </div>
  );
}
