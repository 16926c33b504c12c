import dgram from "node:dgram";
import { createReadStream, createWriteStream, readFileSync } from "node:fs";
import { once } from "node:events";
import { Command, InvalidArgumentError, Option } from "commander";
import { CSV_DELIMITER_BY_NAME } from "../../shared/api/recordings";
import { channelList, type ChannelDefinition } from "../../shared/recording/channels";
import { CsvImporter } from "../../shared/recording/csv-import";
import { RecordingError, describeWhere, formatPath } from "../../shared/recording/errors";
import type { Frame } from "../../shared/recording/frames";
import { GzipInflater, looksGzipped } from "../../shared/recording/gzip";
import {
  RECORDING_FORMAT,
  RECORDING_VERSION,
  RecordingParser,
  serializeFrame,
  serializeHeader,
  type RecordingHeader,
} from "../../shared/recording/recording-file";
import { generateScenario, ScenarioError } from "../../shared/recording/scenario";
import { Segmenter } from "../../shared/recording/segments";
import { CaptureSession } from "../capture/session";
import { CliRefusal, deviceCommand, runCommand } from "./bench-commands";

/**
 * `panelproof`: the recording tools without a server, on the same code the server runs.
 * Exit codes: 0 done, 1 the input was refused (the message says where and why), 2 usage.
 */

class Refusal extends Error {}

function fail(message: string): never {
  throw new Refusal(message);
}

function readCatalogue(file: string): ChannelDefinition[] {
  let json: unknown;
  try {
    json = JSON.parse(readFileSync(file, "utf8"));
  } catch (error) {
    fail(`${file}: ${(error as Error).message}`);
  }
  const list = Array.isArray(json) ? json : (json as { channels?: unknown })?.channels;
  const parsed = channelList.safeParse(list);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    fail(`${file}: channels${formatPath(issue.path) ? (formatPath(issue.path).startsWith("[") ? "" : ".") + formatPath(issue.path) : ""}: ${issue.message}`);
  }
  return parsed.data;
}

/** A line-writer that waits when the disk is slower than the parser. */
function fileWriter(path: string) {
  const out = createWriteStream(path);
  return {
    async write(text: string) {
      if (!out.write(text)) await once(out, "drain");
    },
    async close() {
      out.end();
      await once(out, "finish");
    },
  };
}

interface ImportOptions {
  format?: "ppr" | "csv";
  delimiter?: keyof typeof CSV_DELIMITER_BY_NAME;
  decimalMark?: "point" | "comma";
  timeColumn?: string;
  timeUnit?: "ms" | "s";
  channels?: string;
  output?: string;
  maxBytes?: number;
}

/** One pass over a file: frames go to `onFrames`; returns the channels and header it found. */
async function passOver(file: string, options: ImportOptions, catalogue: ChannelDefinition[], onFrames: (frames: Frame[], header: RecordingHeader | null) => Promise<void>) {
  const format = options.format ?? (/\.csv(\.gz)?$/i.test(file) ? "csv" : "ppr");
  let ppr: RecordingParser | null = null;
  let csv: CsvImporter | null = null;
  let inflater: GzipInflater | null = null;
  let gzipped = false;
  let held: Frame[] = [];
  if (format === "csv") {
    if (!options.delimiter || !options.decimalMark) fail("a CSV import needs --delimiter and --decimal-mark chosen explicitly");
    csv = new CsvImporter({
      delimiter: CSV_DELIMITER_BY_NAME[options.delimiter],
      decimalMark: options.decimalMark === "comma" ? "," : ".",
      channels: catalogue,
      timeColumn: options.timeColumn,
      timeUnit: options.timeUnit,
      unknownColumns: "draft",
      maxBytes: options.maxBytes,
    });
  } else ppr = new RecordingParser({ maxBytes: options.maxBytes, gzip: "auto" });
  let first = true;
  for await (const chunk of createReadStream(file, { highWaterMark: 256 * 1024 }) as AsyncIterable<Buffer>) {
    if (ppr) {
      await onFrames(ppr.push(chunk), ppr.header);
      continue;
    }
    if (first && looksGzipped(chunk)) {
      gzipped = true;
      inflater = new GzipInflater((bytes) => held.push(...csv!.push(bytes)));
    }
    first = false;
    if (inflater) inflater.push(chunk);
    else held.push(...csv!.push(chunk));
    const out = held;
    held = [];
    await onFrames(out, null);
  }
  if (ppr) {
    await onFrames(ppr.end(), ppr.header);
    if (ppr.header?.channels) checkCatalogue(ppr.header.channels, catalogue);
    return { format, header: ppr.header, channels: ppr.header!.channels, drafts: [] as ChannelDefinition[], gzipped: false };
  }
  inflater?.end();
  held.push(...csv!.end());
  await onFrames(held, null);
  return { format, header: null, channels: csv!.channels, drafts: csv!.drafts, gzipped };
}

/** With --channels, a file's channels must agree with the catalogue's kinds. */
function checkCatalogue(channels: readonly ChannelDefinition[], catalogue: readonly ChannelDefinition[]) {
  const known = new Map(catalogue.map((c) => [c.name, c]));
  channels.forEach((c, i) => {
    const k = known.get(c.name);
    if (k && k.kind !== c.kind) {
      throw new RecordingError("invalid_header", `the file says ${c.kind}, the catalogue says ${k.kind}`, { line: 1, field: `channels[${i}].kind`, channel: c.name });
    }
  });
}

async function importCommand(file: string, options: ImportOptions) {
  const catalogue = options.channels ? readCatalogue(options.channels) : [];
  const segmenter = new Segmenter();
  let frames = 0;
  let segments = 0;
  let lastT = 0;
  const counts = new Map<string, number>();
  const out = options.output && (options.format ?? (/\.csv(\.gz)?$/i.test(file) ? "csv" : "ppr")) === "ppr" ? fileWriter(options.output) : null;
  let wroteHeader = false;
  const result = await passOver(file, options, catalogue, async (batch, header) => {
    if (out && header && !wroteHeader) {
      wroteHeader = true;
      await out.write(`${serializeHeader(header)}\n`);
    }
    let text = "";
    for (const frame of batch) {
      frames++;
      lastT = frame.t;
      for (const name in frame.v) counts.set(name, (counts.get(name) ?? 0) + 1);
      segments += segmenter.push(frame).length;
      if (out) text += `${serializeFrame(frame)}\n`;
    }
    if (out && text) await out.write(text);
  });
  segments += segmenter.finish().length;
  await out?.close();
  if (options.output && !out) {
    // CSV: the channels (drafts included) are known only at the end, so write in a second pass.
    const header: RecordingHeader = { format: RECORDING_FORMAT, version: RECORDING_VERSION, airframe: "Imported from CSV", channels: result.channels, source: "csv" };
    const writer = fileWriter(options.output);
    await writer.write(`${serializeHeader(header)}\n`);
    await passOver(file, options, catalogue, async (batch) => {
      let text = "";
      for (const frame of batch) text += `${serializeFrame(frame)}\n`;
      if (text) await writer.write(text);
    });
    await writer.close();
  }
  const duration = Math.max(lastT, result.header?.durationMs ?? 0);
  console.log(`${file}: valid ${result.format === "csv" ? "CSV" : "Panelproof recording"}${result.gzipped ? " (gzip)" : ""}`);
  console.log(`  ${frames} frames, ${result.channels.length} channels, ${(duration / 1000).toFixed(3)} s, ${segments} segments`);
  if (result.drafts.length) console.log(`  new channels (drafts): ${result.drafts.map((d) => `${d.name} (${d.kind})`).join(", ")}`);
  for (const c of result.channels) console.log(`  ${c.name.padEnd(32)} ${c.kind.padEnd(8)} ${String(counts.get(c.name) ?? 0).padStart(8)} changes`);
  if (options.output) console.log(`  written to ${options.output}`);
}

async function scenarioCommand(file: string, options: { output: string }) {
  let json: unknown;
  try {
    json = JSON.parse(readFileSync(file, "utf8"));
  } catch (error) {
    fail(`${file}: not a JSON scenario: ${(error as Error).message}`);
  }
  let generated;
  try {
    generated = generateScenario(json);
  } catch (error) {
    if (error instanceof ScenarioError) fail(error.issues.map((i) => `${file}: ${i.path || "(top)"}: ${i.message}`).join("\n"));
    throw error;
  }
  const out = fileWriter(options.output);
  await out.write(`${serializeHeader(generated.header)}\n`);
  for (let i = 0; i < generated.frames.length; i += 1000) {
    await out.write(generated.frames.slice(i, i + 1000).map((f) => `${serializeFrame(f)}\n`).join(""));
  }
  await out.close();
  console.log(`${file}: scenario "${generated.scenario.name}" generated ${generated.frames.length} frames over ${((generated.header.durationMs ?? 0) / 1000).toFixed(3)} s -> ${options.output}`);
}

async function captureCommand(options: { udp: number; output: string; seconds?: number; token?: string; channels?: string; host: string; airframe: string }) {
  const catalogue = options.channels ? readCatalogue(options.channels) : [];
  const session = new CaptureSession({ channels: catalogue, token: options.token ?? null });
  const socket = dgram.createSocket("udp4");
  socket.on("message", (datagram) => session.accept(datagram));
  socket.on("error", (error) => (session.counters.lastError = `UDP socket: ${error.message}`));
  await new Promise<void>((resolve, reject) => {
    socket.once("error", reject);
    socket.bind(options.udp, options.host, () => resolve());
  });
  const port = socket.address().port;
  console.log(`capturing on udp ${options.host}:${port}${options.seconds ? ` for ${options.seconds} s` : ""}; Ctrl-C stops and saves (format: docs/capture.md)`);
  const ticker = setInterval(() => session.tick(), 100);
  await new Promise<void>((resolve) => {
    if (options.seconds) setTimeout(resolve, options.seconds * 1000);
    process.once("SIGINT", () => resolve());
    process.once("SIGTERM", () => resolve());
  });
  clearInterval(ticker);
  socket.close();
  const { frames, channels } = session.finish();
  const c = session.counters;
  console.log(`received ${c.received}, malformed ${c.malformed}, out of order ${c.outOfOrder}, duplicates ${c.duplicates}, dropped ${c.dropped}${c.lastError ? `; last error: ${c.lastError}` : ""}`);
  if (frames.length === 0) fail("nothing was captured: no valid message arrived");
  const header: RecordingHeader = { format: RECORDING_FORMAT, version: RECORDING_VERSION, airframe: options.airframe, channels, source: "capture", createdAt: new Date().toISOString() };
  const out = fileWriter(options.output);
  await out.write(`${serializeHeader(header)}\n`);
  for (const frame of frames) await out.write(`${serializeFrame(frame)}\n`);
  await out.close();
  console.log(`${frames.length} frames, ${channels.length} channels -> ${options.output}`);
}

const integer = (what: string, min: number, max: number) => (text: string) => {
  const n = Number(text);
  if (!Number.isInteger(n) || n < min || n > max) throw new InvalidArgumentError(`${what} must be a whole number from ${min} to ${max}.`);
  return n;
};

const program = new Command()
  .name("panelproof")
  .description("Panelproof recording tools: check and convert recordings, generate scenarios, capture live values.")
  .exitOverride((error) => process.exit(error.exitCode === 0 ? 0 : 2));

program
  .command("import")
  .description("validate a recording file (Panelproof .ppr.jsonl, gzip, or CSV) and print a summary")
  .argument("<file>", "the file to read")
  .addOption(new Option("--format <format>", "ppr or csv (default: from the file name)").choices(["ppr", "csv"]))
  .addOption(new Option("--delimiter <name>", "CSV delimiter").choices(["comma", "semicolon", "tab", "pipe"]))
  .addOption(new Option("--decimal-mark <mark>", "CSV decimal mark").choices(["point", "comma"]))
  .option("--time-column <name>", "CSV time column (default: the first)")
  .addOption(new Option("--time-unit <unit>", "CSV time unit when the header does not say").choices(["ms", "s"]))
  .option("--channels <catalogue.json>", "an airframe's channel catalogue (as downloaded) to check against")
  .option("--max-bytes <n>", "size limit in bytes", integer("--max-bytes", 1, 2 ** 40))
  .option("-o, --output <out.ppr.jsonl>", "also write the recording as a Panelproof file")
  .action(importCommand);

program
  .command("scenario")
  .description("generate a recording from a scenario (docs/scenario-format.md)")
  .argument("<file>", "the scenario JSON")
  .requiredOption("-o, --output <out.ppr.jsonl>", "where to write the recording")
  .action(scenarioCommand);

program
  .command("capture")
  .description("listen for JSON datagrams (docs/capture.md) and save them as a recording")
  .requiredOption("--udp <port>", "UDP port to listen on (0: any free port)", integer("--udp", 0, 65535))
  .requiredOption("-o, --output <out.ppr.jsonl>", "where to write the recording")
  .option("--seconds <n>", "stop after this many seconds (default: at Ctrl-C)", integer("--seconds", 1, 7 * 24 * 3600))
  .option("--token <token>", "require this token in every datagram")
  .option("--channels <catalogue.json>", "check values against an airframe's catalogue")
  .option("--host <address>", "address to listen on", "127.0.0.1")
  .option("--airframe <name>", "airframe name for the file header", "Captured airframe")
  .action(captureCommand);

const collect = (value: string, previous: string[] = []) => [...previous, value];
const positive = (what: string) => (text: string) => {
  const n = Number(text);
  if (!(n > 0)) throw new InvalidArgumentError(`${what} must be a positive number.`);
  return n;
};

program
  .command("device")
  .description("act as a panel's board with no hardware: on a serial port, or connected to a run's WebSocket")
  .requiredOption("--panel <file>", "the panel definition JSON (as exported)")
  .option("--port <path>", "a serial port (or one end of a pty pair)")
  .option("--url <url>", "ws://HOST/ws/bench/runs/RUN/panels/PANEL")
  .option("--token <token>", "the panel's device token (network link)")
  .option("--baud <n>", "serial baud rate", integer("--baud", 1200, 2_000_000), 115_200)
  .option("--address <n>", "RS-485 bus address (answers only when polled)", integer("--address", 1, 247))
  .option("--fault <json>", "a fault or list of faults to show (docs/run-report.md); repeatable", collect, [])
  .option("--channels <catalogue.json>", "the recording's channels, to name enum values")
  .option("--time-scale <x>", "the replay speed, so time-based faults count recording time", positive("--time-scale"), 1)
  .action(deviceCommand);

program
  .command("run")
  .description("a headless run: create it, play it to the end, write JUnit XML; exit 1 when any element fails")
  .requiredOption("--server <url>", "the Panelproof server, e.g. http://127.0.0.1:5178")
  .requiredOption("--email <email>")
  .requiredOption("--password <password>")
  .requiredOption("--workshop <id>")
  .requiredOption("--recording <id>")
  .requiredOption("--link <spec>", "virtual:PANEL_ID | network:PANEL_ID | serial:PATH:PANEL_ID[:BAUD] | rs485:PATH:ADDRESS:PANEL_ID; repeatable", collect, [])
  .option("--speed <x>", "replay speed 0.1 to 16", positive("--speed"), 1)
  .option("--junit <out.xml>", "write the JUnit XML report here")
  .option("--fault <json>", "faults for the virtual panels the command drives; repeatable", collect, [])
  .option("--name <name>", "the run's name")
  .option("--timeout <seconds>", "give up after this long", integer("--timeout", 1, 7 * 24 * 3600), 3600)
  .action(runCommand);

try {
  await program.parseAsync(process.argv);
} catch (error) {
  if (error instanceof RecordingError) {
    const where = describeWhere(error.where);
    console.error(`${process.argv[3] ?? ""}: ${where ? `${where}: ` : ""}${error.why}`);
    process.exit(1);
  }
  if (error instanceof Refusal || error instanceof CliRefusal) {
    console.error(error.message);
    process.exit(1);
  }
  const code = (error as NodeJS.ErrnoException).code;
  if (code === "ENOENT" || code === "EADDRINUSE" || code === "EACCES" || code === "EISDIR") {
    console.error((error as Error).message);
    process.exit(1);
  }
  throw error;
}
