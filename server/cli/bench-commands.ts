import { readFileSync, writeFileSync } from "node:fs";
import { channelList, type ChannelDefinition } from "../../shared/recording/channels";
import { importPanelJson, type Panel } from "../../shared/panel/schema";
import { faultList, type Fault } from "../../shared/virtual/faults";
import { PanelEmulator } from "../bench/device-emulator";
import { hostOnSerial, hostOnWebSocket, type EmulatorHost } from "../bench/device-runner";

/**
 * `panelproof device` (a panel with no hardware on a serial port or the bench's WebSocket) and
 * `panelproof run` (a headless run for a production test line: create, play to the end, write
 * JUnit XML, exit 1 when any element failed or had no data).
 */

export class CliRefusal extends Error {}

function refuse(message: string): never {
  throw new CliRefusal(message);
}

export function readPanelFile(file: string): Panel {
  let text: string;
  try {
    text = readFileSync(file, "utf8");
  } catch (error) {
    refuse(`${file}: ${(error as Error).message}`);
  }
  const parsed = importPanelJson(text);
  if (!parsed.ok) refuse(`${file}: ${parsed.problems.map((p) => `${p.path || "(top)"}: ${p.message}`).join("; ")}`);
  return parsed.panel;
}

export function parseFaults(texts: readonly string[]): Fault[] {
  const out: Fault[] = [];
  for (const text of texts) {
    let json: unknown;
    try {
      json = JSON.parse(text);
    } catch (error) {
      refuse(`--fault: not JSON: ${(error as Error).message}`);
    }
    const parsed = faultList.safeParse(Array.isArray(json) ? json : [json]);
    if (!parsed.success) refuse(`--fault: ${parsed.error.issues[0].path.join(".")}: ${parsed.error.issues[0].message}`);
    out.push(...parsed.data);
  }
  return out;
}

function readChannels(file: string | undefined): ChannelDefinition[] {
  if (!file) return [];
  const json = JSON.parse(readFileSync(file, "utf8")) as unknown;
  const list = Array.isArray(json) ? json : (json as { channels?: unknown }).channels;
  const parsed = channelList.safeParse(list);
  if (!parsed.success) refuse(`${file}: not a channel catalogue`);
  return parsed.data;
}

export interface DeviceOptions {
  panel: string;
  port?: string;
  url?: string;
  token?: string;
  baud: number;
  address?: number;
  fault: string[];
  channels?: string;
  timeScale: number;
}

export async function deviceCommand(options: DeviceOptions) {
  if (!options.port === !options.url) refuse("give exactly one of --port PATH or --url ws://.../ws/bench/runs/RUN/panels/PANEL");
  const panel = readPanelFile(options.panel);
  const emulator = new PanelEmulator({
    panel,
    channels: readChannels(options.channels),
    faults: parseFaults(options.fault),
    address: options.address ?? 0,
    timeScale: options.timeScale,
  });
  let host: EmulatorHost;
  if (options.url) {
    const headers: Record<string, string> = options.token ? { authorization: `Bearer ${options.token}` } : {};
    host = await hostOnWebSocket(emulator, options.url, headers);
    console.log(`panel ${panel.id}: connected to ${options.url}`);
  } else {
    host = await hostOnSerial([emulator], options.port!, options.baud);
    console.log(`panel ${panel.id}: on ${options.port}${options.address ? ` at bus address ${options.address}` : ""}`);
  }
  const stop = () => void host.close();
  process.once("SIGINT", stop);
  process.once("SIGTERM", stop);
  const end = await host.done;
  console.log(`link closed (${end.code}${end.reason ? `: ${end.reason}` : ""})`);
  process.exitCode = end.code === 1000 || end.code === 1001 ? 0 : 1;
}

// ---- headless run -------------------------------------------------------------------------

class Client {
  private cookies = new Map<string, string>();
  constructor(readonly base: string) {}

  async call<T = any>(method: string, path: string, body?: unknown): Promise<{ status: number; body: T; text: string }> {
    const headers: Record<string, string> = { origin: this.base };
    if (this.cookies.size) headers.cookie = this.cookieHeader();
    if (body !== undefined) headers["content-type"] = "application/json";
    const res = await fetch(this.base + path, { method, headers, body: body === undefined ? undefined : JSON.stringify(body) });
    for (const line of res.headers.getSetCookie()) {
      const [pair] = line.split(";");
      const i = pair.indexOf("=");
      this.cookies.set(pair.slice(0, i).trim(), pair.slice(i + 1).trim());
    }
    const text = await res.text();
    let parsed: unknown = text;
    try {
      parsed = text ? JSON.parse(text) : null;
    } catch {
      /* not JSON */
    }
    return { status: res.status, body: parsed as T, text };
  }

  cookieHeader() {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join("; ");
  }

  async ok<T = any>(method: string, path: string, body?: unknown): Promise<T> {
    const r = await this.call<T>(method, path, body);
    if (r.status >= 300) refuse(`${method} ${path}: ${r.status} ${(r.body as { error?: { message?: string } })?.error?.message ?? r.text.slice(0, 200)}`);
    return r.body;
  }
}

export interface RunOptions {
  server: string;
  email: string;
  password: string;
  workshop: string;
  recording: string;
  link: string[];
  speed: number;
  junit?: string;
  fault: string[];
  name?: string;
  timeout: number;
}

/** virtual:PANEL_ID | network:PANEL_ID | serial:PATH:PANEL_ID[:BAUD] | rs485:PATH:ADDRESS:PANEL_ID */
export function parseLinkSpec(spec: string, faults: Fault[]) {
  const [kind, ...rest] = spec.split(":");
  if (kind === "virtual" && rest.length === 1) return { kind, panelId: rest[0], faults };
  if (kind === "network" && rest.length === 1) return { kind, panelId: rest[0] };
  if (kind === "serial" && (rest.length === 2 || rest.length === 3)) return { kind, path: rest[0], panelId: rest[1], ...(rest[2] ? { baud: Number(rest[2]) } : {}) };
  if (kind === "rs485" && rest.length === 3) return { kind, path: rest[0], address: Number(rest[1]), panelId: rest[2] };
  refuse(`--link ${spec}: expected virtual:PANEL_ID, network:PANEL_ID, serial:PATH:PANEL_ID[:BAUD] or rs485:PATH:ADDRESS:PANEL_ID`);
}

/** The recording's channel list, from its file header (the first line of its download). */
async function recordingChannels(client: Client, base: string, recordingId: string): Promise<ChannelDefinition[]> {
  const res = await fetch(`${client.base}${base}/recordings/${recordingId}/download?format=ppr`, { headers: { origin: client.base, cookie: client.cookieHeader() } });
  if (!res.ok || !res.body) return [];
  const reader = res.body.getReader();
  let text = "";
  while (!text.includes("\n")) {
    const { value, done } = await reader.read();
    if (done) break;
    text += new TextDecoder().decode(value);
  }
  await reader.cancel().catch(() => undefined);
  try {
    const parsed = channelList.safeParse((JSON.parse(text.split("\n")[0]) as { channels?: unknown }).channels);
    return parsed.success ? parsed.data : [];
  } catch {
    return [];
  }
}

export async function runCommand(options: RunOptions) {
  const client = new Client(options.server.replace(/\/$/, ""));
  const signIn = await client.call("POST", "/api/auth/sign-in/email", { email: options.email, password: options.password });
  if (signIn.status !== 200) refuse(`sign-in refused (${signIn.status})`);
  const base = `/api/workshops/${options.workshop}`;
  const faults = parseFaults(options.fault);
  const links = options.link.map((spec) => parseLinkSpec(spec, faults));
  const created = await client.ok<{ id: string }>("POST", `${base}/runs`, { recordingId: options.recording, links, speed: options.speed, ...(options.name ? { name: options.name } : {}) });
  const runId = created.id;
  console.log(`run ${runId}: ${links.length} panel(s) at ${options.speed}x`);

  // Virtual links are driven here by the device emulator (what a browser's virtual panel does).
  const hosts: EmulatorHost[] = [];
  const channels = links.some((l) => l.kind === "virtual") ? await recordingChannels(client, base, options.recording) : [];
  for (const l of links) {
    if (l.kind !== "virtual") continue;
    const panel = (await client.ok<{ definition: Panel }>("GET", `${base}/panels/${l.panelId}`)).definition;
    const emulator = new PanelEmulator({ panel, channels, faults, timeScale: options.speed });
    const url = `${client.base.replace(/^http/, "ws")}/ws/bench/runs/${runId}/panels/${l.panelId}`;
    hosts.push(await hostOnWebSocket(emulator, url, { origin: client.base, cookie: client.cookieHeader() }));
  }
  await client.ok("POST", `${base}/runs/${runId}/control`, { action: "pause" }); // opens serial ports and buses
  const deadline = Date.now() + options.timeout * 1000;
  const detail = () => client.ok<any>("GET", `${base}/runs/${runId}`);
  for (;;) {
    const d = await detail();
    if (d.links.every((l: { connected: boolean }) => l.connected)) break;
    if (Date.now() > 15_000 + (deadline - options.timeout * 1000)) refuse(`panels not connected after 15 s: ${d.links.filter((l: { connected: boolean }) => !l.connected).map((l: { panelId: string }) => l.panelId).join(", ")}`);
    await new Promise((r) => setTimeout(r, 100));
  }
  await client.ok("POST", `${base}/runs/${runId}/control`, { action: "play" });
  let last: any;
  for (;;) {
    last = await detail();
    if (last.state === "finished" && last.elements.length > 0) break;
    if (last.state === "interrupted" || last.state === "failed") refuse(`the run ended ${last.state}`);
    if (Date.now() > deadline) refuse(`the run did not finish within ${options.timeout} s`);
    await new Promise((r) => setTimeout(r, 200));
  }
  for (const h of hosts) await h.close();
  if (options.junit) {
    const xml = await client.call("GET", `${base}/runs/${runId}/junit.xml`);
    writeFileSync(options.junit, xml.text);
  }
  const c = last.counts as Record<string, number>;
  console.log(`pass ${c.pass}, fail ${c.fail}, no data ${c.no_data}, untested ${c.untested}, placeholder ${c.placeholder}; ${last.mismatchCount} mismatches`);
  for (const e of last.elements as { status: string; label: string; elementId: string; mismatchCount: number }[]) {
    if (e.status === "fail" || e.status === "no_data") console.log(`  ${e.status.toUpperCase()} ${e.label} (${e.elementId}): ${e.mismatchCount} mismatch(es)`);
  }
  process.exitCode = c.fail + c.no_data > 0 ? 1 : 0;
}
