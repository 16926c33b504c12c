import { useState, type FormEvent } from "react";
import { Link, useNavigate, useOutletContext, useParams } from "react-router";
import type { CaptureView } from "../../shared/api/recordings";
import type { WorkshopDetail } from "../../shared/api/workshops";
import { Button, Card, ErrorNote, Field, Loading, Select } from "../components/ui";
import { ApiError } from "../lib/api";
import { Fact, RecordingsNav, StatusMark } from "../features/recordings/components";
import { formatCount, formatCreated, formatValue } from "../features/recordings/format";
import { useAirframes, useCapture, useCaptures, useStartCapture, useStopCapture } from "../features/recordings/queries";

const tokenKey = (captureId: string) => `panelproof.capture-token.${captureId}`;

const CAPTURE_MARKS: Record<CaptureView["state"], { glyph: string; word: string; tone: string }> = {
  capturing: { glyph: "◉", word: "listening", tone: "text-calm" },
  stopped: { glyph: "■", word: "stopped, nothing arrived", tone: "text-ink-soft" },
  saved: { glyph: "●", word: "saved as a recording", tone: "text-good" },
  failed: { glyph: "▲", word: "failed", tone: "text-bad" },
  interrupted: { glyph: "◆", word: "interrupted, not saved", tone: "text-bad" },
};

/** Start listening for a simulator exporter's values. */
export function CaptureStart() {
  const w = useOutletContext<WorkshopDetail>();
  const canWrite = w.abilities.includes("bench.write");
  const airframes = useAirframes(w.id);
  const start = useStartCapture(w.id);
  const navigate = useNavigate();
  const [name, setName] = useState("");
  const [airframeId, setAirframeId] = useState("");
  const [port, setPort] = useState("");
  const [problem, setProblem] = useState<string | null>(null);
  const chosen = airframeId || (airframes.data?.length === 1 ? airframes.data[0].id : "");

  function submit(e: FormEvent) {
    e.preventDefault();
    setProblem(null);
    const udpPort = port.trim() === "" ? 0 : Number(port);
    if (!name.trim()) return setProblem("Give the capture a name; it becomes the recording's name.");
    if (!chosen) return setProblem("Choose the airframe whose channels will arrive.");
    if (!Number.isInteger(udpPort) || udpPort < 0 || udpPort > 65535) return setProblem("The UDP port is a whole number from 1 to 65535, or empty for any free port.");
    start.mutate(
      { name: name.trim(), airframeId: chosen, udpPort },
      {
        onSuccess: (view) => {
          if (view.token) sessionStorage.setItem(tokenKey(view.id), view.token);
          navigate(`/w/${w.id}/recordings/capture/${view.id}`);
        },
      },
    );
  }

  return (
    <div>
      <RecordingsNav workshopId={w.id} canWrite={canWrite} />
      <div className="mb-5">
        <h2 className="text-xl font-bold tracking-tight">Capture live</h2>
        <p className="text-sm text-ink-soft">
          Fly the simulator with a small exporter running: it sends JSON messages over UDP (or a WebSocket) and the bench keeps them as a recording.
        </p>
      </div>
      {!canWrite ? (
        <ErrorNote error={new Error("Only builders and owners start captures.")} />
      ) : airframes.isPending ? (
        <Loading what="Loading airframes" />
      ) : airframes.data && airframes.data.length === 0 ? (
        <Card title="Start a capture">
          <p className="text-sm">
            A capture needs an airframe to check values against.{" "}
            <Link to={`/w/${w.id}/recordings/airframes`} className="font-semibold underline">Create an airframe</Link> first.
          </p>
        </Card>
      ) : (
        <div className="max-w-xl">
          <Card title="Start a capture">
            <form onSubmit={submit} aria-label="Start a capture" className="flex flex-col gap-4">
              <Field label="Name" value={name} maxLength={120} onChange={(e) => setName(e.target.value)} placeholder="Evening circuit, gear cycled twice" />
              <Select label="Airframe" value={chosen} onChange={(e) => setAirframeId(e.target.value)}>
                <option value="">Choose…</option>
                {(airframes.data ?? []).map((a) => (
                  <option key={a.id} value={a.id}>{a.name}</option>
                ))}
              </Select>
              <Field
                label="UDP port"
                inputMode="numeric"
                value={port}
                onChange={(e) => setPort(e.target.value)}
                placeholder="any free port"
                hint="Leave empty and the bench picks a free port and shows it."
              />
              {problem && <ErrorNote error={new Error(problem)} />}
              <ErrorNote error={start.error} />
              <div>
                <Button type="submit" tone="primary" disabled={start.isPending}>
                  {start.isPending ? "Starting…" : "Start listening"}
                </Button>
              </div>
            </form>
          </Card>
        </div>
      )}
      <PastCaptures workshopId={w.id} />
    </div>
  );
}

/** Every capture of the workshop, newest first: how it ended, its counters, and the recording it became. */
function PastCaptures({ workshopId }: { workshopId: string }) {
  const captures = useCaptures(workshopId);
  return (
    <section className="mt-8" aria-labelledby="past-captures">
      <h3 id="past-captures" className="mb-3 text-lg font-bold tracking-tight">Captures</h3>
      {captures.isPending ? (
        <Loading what="Loading captures" />
      ) : captures.error ? (
        <ErrorNote error={captures.error} />
      ) : captures.data.length === 0 ? (
        <p className="text-sm text-ink-soft">No capture yet. The ones you start are listed here, with what arrived and the recording each became.</p>
      ) : (
        <div className="overflow-x-auto rounded-lg border border-rule bg-card">
          <table className="w-full text-left text-sm" aria-label="Captures">
            <thead className="border-b border-rule bg-paper/60 text-ink-soft">
              <tr>
                <th scope="col" className="px-3 py-2 font-semibold">Name</th>
                <th scope="col" className="px-3 py-2 font-semibold">State</th>
                <th scope="col" className="px-3 py-2 text-right font-semibold">Received</th>
                <th scope="col" className="px-3 py-2 text-right font-semibold">Malformed</th>
                <th scope="col" className="px-3 py-2 text-right font-semibold">Out of order</th>
                <th scope="col" className="px-3 py-2 text-right font-semibold">Duplicates</th>
                <th scope="col" className="px-3 py-2 font-semibold">Started</th>
                <th scope="col" className="px-3 py-2 font-semibold">Recording</th>
              </tr>
            </thead>
            <tbody>
              {captures.data.map((c) => (
                <tr key={c.id} className="border-b border-rule/60 last:border-0" aria-label={`Capture ${c.name}`}>
                  <td className="px-3 py-2">
                    <Link to={`/w/${workshopId}/recordings/capture/${c.id}`} className="font-semibold text-ink underline decoration-amber/60 underline-offset-2">
                      {c.name}
                    </Link>
                  </td>
                  <td className="px-3 py-2">
                    <StatusMark mark={CAPTURE_MARKS[c.state]} />
                    {c.state === "interrupted" && c.lastError && <span className="block text-xs text-ink-soft">{c.lastError}</span>}
                  </td>
                  <td className="px-3 py-2 text-right font-mono">{formatCount(c.received)}</td>
                  <td className="px-3 py-2 text-right font-mono">{formatCount(c.malformed)}</td>
                  <td className="px-3 py-2 text-right font-mono">{formatCount(c.outOfOrder)}</td>
                  <td className="px-3 py-2 text-right font-mono">{formatCount(c.duplicates)}</td>
                  <td className="px-3 py-2 whitespace-nowrap">{formatCreated(c.startedAt)}</td>
                  <td className="px-3 py-2">
                    {c.recordingId ? (
                      <Link to={`/w/${workshopId}/recordings/${c.recordingId}`} className="font-semibold text-ink underline decoration-amber/60 underline-offset-2">
                        Open the recording
                      </Link>
                    ) : (
                      <span className="text-ink-soft">{c.state === "capturing" ? "when stopped" : "none"}</span>
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </section>
  );
}

/** One capture: where to send values, what has arrived, and the counts of what was refused. */
export function CaptureLive() {
  const w = useOutletContext<WorkshopDetail>();
  const { captureId = "" } = useParams();
  const canWrite = w.abilities.includes("bench.write");
  const capture = useCapture(w.id, captureId);
  const stop = useStopCapture(w.id, captureId);
  const token = sessionStorage.getItem(tokenKey(captureId));

  if (capture.isPending) return <Loading what="Opening the capture" />;
  if (capture.error) {
    const missing = capture.error instanceof ApiError && capture.error.status === 404;
    return <ErrorNote error={missing ? new Error("This capture does not exist (any more).") : capture.error} />;
  }
  const c = capture.data;
  const host = window.location.hostname;
  const wsUrl = `${window.location.protocol === "https:" ? "wss" : "ws"}://${window.location.host}${c.webSocketPath}${token ? `?token=${token}` : ""}`;
  const latest = Object.entries(c.latest).sort(([a], [b]) => a.localeCompare(b));

  return (
    <div>
      <RecordingsNav workshopId={w.id} canWrite={canWrite} />
      <header className="mb-5 flex flex-wrap items-start justify-between gap-4">
        <div>
          <p className="text-sm text-ink-soft">Live capture</p>
          <h2 className="text-xl font-bold tracking-tight">{c.name}</h2>
          <p className="mt-1 text-sm">
            <StatusMark mark={CAPTURE_MARKS[c.state]} />
          </p>
        </div>
        {canWrite && c.state === "capturing" && (
          <Button tone="primary" disabled={stop.isPending} onClick={() => stop.mutate()}>
            {stop.isPending ? "Stopping…" : "Stop and save as recording"}
          </Button>
        )}
        {c.recordingId && (
          <Link to={`/w/${w.id}/recordings/${c.recordingId}`} className="rounded-md border border-bezel bg-bezel px-3.5 py-2 text-sm font-semibold text-dial no-underline">
            Open the recording →
          </Link>
        )}
      </header>
      <ErrorNote error={stop.error} />
      <div className="grid gap-6 lg:grid-cols-[1fr_29rem]">
        <div className="flex flex-col gap-6">
          <dl className="grid grid-cols-2 gap-4 rounded-lg border border-rule bg-card p-4 sm:grid-cols-4">
            <Fact term="Received"><span data-testid="capture-received">{formatCount(c.received)}</span></Fact>
            <Fact term="Malformed"><span data-testid="capture-malformed">{formatCount(c.malformed)}</span></Fact>
            <Fact term="Out of order"><span data-testid="capture-out-of-order">{formatCount(c.outOfOrder)}</span></Fact>
            <Fact term="Duplicates"><span data-testid="capture-duplicates">{formatCount(c.duplicates)}</span></Fact>
            {c.dropped !== undefined && <Fact term="Not recorded">{formatCount(c.dropped)}</Fact>}
            {c.frames !== undefined && <Fact term="Frames kept">{formatCount(c.frames)}</Fact>}
            <Fact term="Started">{formatCreated(c.startedAt)}</Fact>
          </dl>
          {c.lastError && (
            <p className="rounded-md border border-bad/40 bg-bad/5 px-3 py-2 text-sm text-bad">
              <span aria-hidden="true" className="mr-1 font-mono">▲</span>
              <span className="font-semibold">{c.state === "interrupted" ? "Interrupted: " : "Last refused message: "}</span>
              <span className="font-mono text-xs">{c.lastError}</span>
            </p>
          )}
          <Card title="Channels arriving" aside={<span className="text-sm text-ink-soft">{latest.length} channels{c.state === "capturing" ? " · updated every ½ s" : ""}</span>}>
            {latest.length === 0 ? (
              <p className="text-sm text-ink-soft">Nothing yet. Start the exporter; values appear here as they arrive.</p>
            ) : (
              <table className="w-full text-sm" aria-label="Latest value of every channel">
                <thead className="border-b border-rule text-left text-ink-soft">
                  <tr>
                    <th className="py-1.5 font-semibold">Channel</th>
                    <th className="py-1.5 text-right font-semibold">Latest value</th>
                  </tr>
                </thead>
                <tbody>
                  {latest.map(([name, value]) => (
                    <tr key={name} className="border-b border-rule/50 last:border-0">
                      <td className="py-1 font-mono text-xs">{name}</td>
                      <td className="py-1 text-right font-mono">{formatValue(value)}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            )}
          </Card>
        </div>
        <Card title="Point an exporter here">
          <dl className="flex flex-col gap-3">
            <Fact term="UDP">{c.udpPort === null ? "not listening" : `${host}:${c.udpPort}`}</Fact>
            <Fact term="WebSocket"><span className="break-all">{wsUrl}</span></Fact>
            <Fact term="Capture token">
              {token ? <span className="break-all" data-testid="capture-token">{token}</span> : <span className="font-sans text-ink-soft">shown only in the tab that started the capture</span>}
            </Fact>
          </dl>
          <p className="mt-4 text-sm">
            Send one JSON object per datagram (or WebSocket message): a sequence number one higher each time, the time in milliseconds, and only the values that changed.
          </p>
          <pre className="mt-2 overflow-x-auto rounded-md bg-bezel p-3 font-mono text-[11px] leading-4 text-dial">
{`{"token": "<capture token>", "seq": 0, "t": 0,
 "v": {"gear.handle": "DOWN", "alt.baro_ft": 1200}}`}
          </pre>
          <p className="mt-3 text-sm">A few lines of Python do it:</p>
          <pre className="mt-2 overflow-x-auto rounded-md bg-bezel p-3 font-mono text-[11px] leading-4 text-dial" data-testid="exporter-snippet">
{`import json, socket, time
TOKEN = "${token ?? "<capture token>"}"
HOST, PORT = "${host}", ${c.udpPort ?? 0}
out = socket.socket(socket.AF_INET, socket.SOCK_DGRAM)
t0 = time.monotonic()
for seq in range(600):
    values = {"alt.baro_ft": 1000 + seq}  # from the simulator
    ms = round((time.monotonic() - t0) * 1000)
    msg = {"token": TOKEN, "seq": seq, "t": ms, "v": values}
    out.sendto(json.dumps(msg).encode(), (HOST, PORT))
    time.sleep(0.05)`}
          </pre>
          <p className="mt-3 text-xs text-ink-soft">
            The message format, limits and how late or repeated messages are counted: docs/capture.md. Malformed messages are counted and shown here; they never stop the capture.
          </p>
        </Card>
      </div>
    </div>
  );
}
