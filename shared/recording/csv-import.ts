import {
  CHANNEL_NAME_PATTERN,
  checkChannelValue,
  type ChannelDefinition,
  type ChannelValue,
} from "./channels";
import { RecordingError, type RecordingWhere } from "./errors";
import { FrameSequencer, type Frame } from "./frames";
import { ChunkDecoder, DEFAULT_MAX_BYTES } from "./text-input";

/**
 * Wide CSV import: a header row, one time column, one column per channel. Delimiter and decimal
 * mark are chosen by the builder rather than guessed, because "1,5" means different things in
 * different locales and a wrong guess would import wrong values silently. A hand-written
 * tokenizer (RFC 4180 quoting) keeps it streaming over pushed chunks and lets errors name the
 * exact line and column.
 */

export const CSV_DELIMITERS = [",", ";", "\t", "|"] as const;
export type CsvDelimiter = (typeof CSV_DELIMITERS)[number];
export type DecimalMark = "." | ",";
export type CsvTimeUnit = "ms" | "s";

export interface CsvImportOptions {
  delimiter: CsvDelimiter;
  decimalMark: DecimalMark;
  /** The airframe's catalogue; columns are matched to it by channel name. */
  channels: readonly ChannelDefinition[];
  /** Header name of the time column; default the first column. */
  timeColumn?: string;
  /** Unit of the time column unless its header says `[ms]` or `[s]`; default ms. */
  timeUnit?: CsvTimeUnit;
  /** Units chosen at import for columns whose header has no `[unit]`. */
  units?: Record<string, string>;
  /** Columns not in the catalogue: refuse them (default) or add them as draft channels. */
  unknownColumns?: "reject" | "draft";
  maxBytes?: number;
}

interface ChannelColumn {
  index: number;
  header: string;
  name: string;
  unit?: string;
  channel: ChannelDefinition | null;
}

const DELIMITER_NAMES: Record<CsvDelimiter, string> = { ",": "','", ";": "';'", "\t": "tab", "|": "'|'" };
const NON_FINITE_WORD = /^[+-]?(nan|inf|infinity)$/i;
const POINT_NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;
const COMMA_NUMBER = /^[+-]?(\d+(,\d*)?|,\d+)([eE][+-]?\d+)?$/;
const HEADER_CELL = /^(.*?)\s*(?:\[([^\]]*)\])?$/s;

type Parsed = { value: number } | { code: "not_finite" | "wrong_kind"; why: string };

export function parseDecimal(text: string, mark: DecimalMark): Parsed {
  const cell = text.trim();
  if (NON_FINITE_WORD.test(cell)) return { code: "not_finite", why: `${JSON.stringify(cell)} is not a finite number` };
  const own = mark === "." ? POINT_NUMBER : COMMA_NUMBER;
  if (own.test(cell)) {
    const value = Number(mark === "," ? cell.replace(",", ".") : cell);
    if (!Number.isFinite(value)) return { code: "not_finite", why: `${JSON.stringify(cell)} is not a finite number` };
    return { value };
  }
  const other = mark === "." ? COMMA_NUMBER : POINT_NUMBER;
  if (other.test(cell) && /[.,]/.test(cell)) {
    const used = mark === "." ? "','" : "'.'";
    return {
      code: "wrong_kind",
      why: `${JSON.stringify(cell)} is not a number: it uses ${used} but the decimal mark chosen is '${mark}'`,
    };
  }
  return { code: "wrong_kind", why: `${JSON.stringify(cell)} is not a number` };
}

export class CsvImporter {
  private readonly decoder: ChunkDecoder;
  private readonly sequencer = new FrameSequencer();
  private readonly catalogue: Map<string, ChannelDefinition>;
  private readonly options: CsvImportOptions;
  private columns: ChannelColumn[] | null = null;
  private timeIndex = 0;
  private timeUnit: CsvTimeUnit = "ms";
  private out: Frame[] = [];
  private ended = false;

  // Tokenizer state, kept across chunks.
  private field = "";
  private fields: string[] = [];
  private inQuotes = false;
  private pendingQuote = false;
  private quoteClosed = false;
  private fieldWasQuoted = false;
  private skipLineFeed = false;
  private line = 1;
  private recordLine = 1;
  private rawHeader = "";
  private sawAnyText = false;

  constructor(options: CsvImportOptions) {
    if (options.delimiter === "," && options.decimalMark === ",") {
      throw new RecordingError("csv_options", "a decimal comma needs a delimiter other than ','; choose ';' or tab");
    }
    if (!CSV_DELIMITERS.includes(options.delimiter)) {
      throw new RecordingError("csv_options", `delimiter must be one of ',', ';', tab, '|'`);
    }
    this.options = options;
    this.catalogue = new Map(options.channels.map((c) => [c.name, c]));
    this.decoder = new ChunkDecoder(options.maxBytes ?? DEFAULT_MAX_BYTES);
  }

  /** The channels of this import in column order, drafts included once their kind is known. */
  get channels(): ChannelDefinition[] {
    return (this.columns ?? []).flatMap((c) => (c.channel ? [c.channel] : []));
  }

  get drafts(): ChannelDefinition[] {
    return this.channels.filter((c) => c.draft);
  }

  get bytesFed(): number {
    return this.decoder.bytesFed;
  }

  push(chunk: string | Uint8Array): Frame[] {
    if (this.ended) throw new Error("CsvImporter: push after end");
    this.tokenize(this.decoder.decode(chunk));
    return this.take();
  }

  end(): Frame[] {
    if (this.ended) return [];
    this.ended = true;
    this.tokenize(this.decoder.end());
    if (this.pendingQuote) {
      this.pendingQuote = false;
      this.inQuotes = false;
      this.quoteClosed = true;
    }
    if (this.inQuotes) {
      throw new RecordingError("csv_row", "a quoted field is never closed", { row: this.recordLine });
    }
    if (this.field !== "" || this.fields.length > 0 || this.quoteClosed) {
      this.endField();
      this.endRecord();
    }
    if (!this.columns) {
      throw new RecordingError("empty_file", "the file is empty");
    }
    const last = this.sequencer.finish();
    if (last) this.out.push(last);
    if (this.sequencer.framesEmitted === 0) {
      throw new RecordingError("no_frames", "the CSV has a header row but no values", { row: this.line });
    }
    return this.take();
  }

  private take(): Frame[] {
    const frames = this.out;
    this.out = [];
    return frames;
  }

  private tokenize(text: string): void {
    if (!text) return;
    if (!this.sawAnyText) {
      this.sawAnyText = true;
      if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
    }
    const delimiter = this.options.delimiter;
    for (let i = 0; i < text.length; i++) {
      const ch = text[i];
      if (this.skipLineFeed) {
        this.skipLineFeed = false;
        if (ch === "\n") continue;
      }
      if (this.pendingQuote) {
        // The previous chunk ended on a quote inside a quoted field: `""` is an escaped quote.
        this.pendingQuote = false;
        if (ch === '"') {
          this.field += '"';
          continue;
        }
        this.inQuotes = false;
        this.quoteClosed = true;
      }
      if (this.inQuotes) {
        if (ch === '"') {
          if (i + 1 === text.length) this.pendingQuote = true;
          else if (text[i + 1] === '"') {
            this.field += '"';
            i++;
          } else {
            this.inQuotes = false;
            this.quoteClosed = true;
          }
        } else {
          if (ch === "\n") this.line++;
          this.field += ch;
        }
        continue;
      }
      if (!this.columns && ch !== "\n" && ch !== "\r") this.rawHeader += ch;
      if (ch === delimiter) {
        this.endField();
      } else if (ch === "\n" || ch === "\r") {
        this.endField();
        this.endRecord();
        this.line++;
        this.recordLine = this.line;
        if (ch === "\r") this.skipLineFeed = true;
      } else if (this.quoteClosed) {
        throw new RecordingError("csv_row", `unexpected ${JSON.stringify(ch)} after a closing quote`, {
          row: this.recordLine,
          column: this.fields.length + 1,
        });
      } else if (ch === '"' && this.field === "") {
        this.inQuotes = true;
        this.fieldWasQuoted = true;
      } else {
        this.field += ch;
      }
    }
  }

  private endField(): void {
    this.fields.push(this.field);
    this.field = "";
    this.quoteClosed = false;
    this.fieldWasQuoted = false;
  }

  private endRecord(): void {
    const fields = this.fields;
    this.fields = [];
    // A blank line: nothing to import, and not worth an error.
    if (fields.length === 0 || (fields.length === 1 && fields[0].trim() === "")) return;
    if (!this.columns) this.readHeader(fields);
    else this.readRow(fields);
  }

  private readHeader(cells: string[]): void {
    const row = this.recordLine;
    const { delimiter } = this.options;
    if (cells.length < 2) {
      const others = CSV_DELIMITERS.filter((d) => d !== delimiter && this.rawHeader.includes(d));
      if (others.length > 0) {
        throw new RecordingError(
          "csv_delimiter",
          `only one column found with delimiter ${DELIMITER_NAMES[delimiter]}, but the header contains ${others
            .map((d) => DELIMITER_NAMES[d])
            .join(" and ")}: choose ${DELIMITER_NAMES[others[0]]} as the delimiter`,
          { row },
        );
      }
      throw new RecordingError(
        "csv_header",
        "only one column found; a CSV needs a time column and at least one channel column",
        { row },
      );
    }
    const parsed = cells.map((cell) => {
      const match = HEADER_CELL.exec(cell.trim())!;
      return { header: cell.trim(), name: match[1].trim(), unit: match[2]?.trim() };
    });
    const timeName = this.options.timeColumn;
    this.timeIndex = timeName === undefined ? 0 : parsed.findIndex((p) => p.name === timeName || p.header === timeName);
    if (this.timeIndex < 0) {
      throw new RecordingError("csv_header", `no time column named ${JSON.stringify(timeName)}`, { row });
    }
    const time = parsed[this.timeIndex];
    const timeUnit = time.unit || this.options.timeUnit || "ms";
    if (timeUnit !== "ms" && timeUnit !== "s") {
      throw new RecordingError("csv_unit", `the time column's unit must be ms or s, not ${JSON.stringify(timeUnit)}`, {
        row,
        column: this.timeIndex + 1,
        field: time.header,
      });
    }
    if (time.unit && this.options.timeUnit && time.unit !== this.options.timeUnit) {
      throw new RecordingError(
        "csv_unit",
        `the header says the time is in ${time.unit} but ${this.options.timeUnit} was chosen at import`,
        { row, column: this.timeIndex + 1, field: time.header },
      );
    }
    this.timeUnit = timeUnit;

    const seen = new Map<string, number>();
    const columns: ChannelColumn[] = [];
    parsed.forEach((p, index) => {
      if (index === this.timeIndex) return;
      const where: RecordingWhere = { row, column: index + 1, field: p.header };
      if (!CHANNEL_NAME_PATTERN.test(p.name)) {
        throw new RecordingError(
          "csv_header",
          `${JSON.stringify(p.name)} is not a channel name (lowercase dotted words like alt.baro_ft, unit in [brackets])`,
          where,
        );
      }
      const earlier = seen.get(p.name);
      if (earlier !== undefined) {
        throw new RecordingError("csv_header", `channel ${p.name} already has column ${earlier}`, where);
      }
      seen.set(p.name, index + 1);
      const known = this.catalogue.get(p.name);
      const unit = p.unit || this.options.units?.[p.name] || undefined;
      if (!known && (this.options.unknownColumns ?? "reject") === "reject") {
        throw new RecordingError("unknown_channel", "this column is not a channel of the airframe's catalogue", {
          ...where,
          channel: p.name,
        });
      }
      if (known?.unit && unit && known.unit !== unit) {
        throw new RecordingError(
          "csv_unit",
          `the column is in ${unit} but the channel is in ${known.unit}; convert the column or choose the right channel`,
          { ...where, channel: p.name },
        );
      }
      columns.push({ index, header: p.header, name: p.name, unit: unit ?? known?.unit, channel: known ?? null });
    });
    this.columns = columns;
  }

  private readRow(cells: string[]): void {
    const row = this.recordLine;
    const columns = this.columns!;
    const expected = columns.length + 1;
    if (cells.length !== expected) {
      const others = CSV_DELIMITERS.filter((d) => d !== this.options.delimiter && cells.join("").includes(d));
      const hint = cells.length === 1 && others.length > 0 ? ` (it contains ${DELIMITER_NAMES[others[0]]}: wrong delimiter?)` : "";
      throw new RecordingError("csv_row", `the row has ${cells.length} fields, the header has ${expected}${hint}`, {
        row,
      });
    }
    const timeCell = cells[this.timeIndex];
    const timeWhere: RecordingWhere = { row, column: this.timeIndex + 1, field: "time" };
    if (timeCell.trim() === "") throw new RecordingError("csv_row", "the time is empty", timeWhere);
    const time = parseDecimal(timeCell, this.options.decimalMark);
    if ("code" in time) throw new RecordingError(time.code, `time: ${time.why}`, timeWhere);
    const t = Math.round(this.timeUnit === "s" ? time.value * 1000 : time.value);
    if (t < 0) throw new RecordingError("csv_row", `time ${timeCell.trim()} is negative`, timeWhere);

    const values: Record<string, ChannelValue> = {};
    for (const column of columns) {
      const cell = cells[column.index];
      if (cell === "") continue;
      const where: RecordingWhere = { row, column: column.index + 1, field: column.header, channel: column.name };
      column.channel ??= this.draftChannel(column, cell);
      const value = this.cellValue(column.channel, cell, where);
      const problem = checkChannelValue(column.channel, value);
      if (problem) throw new RecordingError(problem.code, problem.why, where);
      values[column.name] = value;
    }
    const frame = this.sequencer.accept(t, values, { row });
    if (frame) this.out.push(frame);
  }

  private cellValue(channel: ChannelDefinition, cell: string, where: RecordingWhere): ChannelValue {
    switch (channel.kind) {
      case "number": {
        const parsed = parseDecimal(cell, this.options.decimalMark);
        if ("code" in parsed) throw new RecordingError(parsed.code, parsed.why, where);
        return parsed.value;
      }
      case "boolean": {
        const word = cell.trim().toLowerCase();
        if (word === "true" || word === "1") return true;
        if (word === "false" || word === "0") return false;
        throw new RecordingError("wrong_kind", `${JSON.stringify(cell)} is not true, false, 1 or 0`, where);
      }
      case "enum":
        return cell.trim();
      case "text":
        return cell;
    }
  }

  /** A draft's kind is guessed from its first value; a builder confirms it later. */
  private draftChannel(column: ChannelColumn, cell: string): ChannelDefinition {
    const base = { name: column.name, draft: true, description: "first seen in a CSV import" };
    const unit = column.unit ? { unit: column.unit } : {};
    if (/^(true|false)$/i.test(cell.trim())) return { ...base, kind: "boolean", ...unit };
    if ("value" in parseDecimal(cell, this.options.decimalMark)) return { ...base, kind: "number", ...unit };
    return { ...base, kind: "text", ...unit };
  }
}

export interface CsvImportResult {
  channels: ChannelDefinition[];
  drafts: ChannelDefinition[];
  frames: Frame[];
}

export function importCsv(input: string | Uint8Array | Iterable<string | Uint8Array>, options: CsvImportOptions): CsvImportResult {
  const importer = new CsvImporter(options);
  const frames: Frame[] = [];
  const chunks = typeof input === "string" || input instanceof Uint8Array ? [input] : input;
  for (const chunk of chunks) for (const frame of importer.push(chunk)) frames.push(frame);
  for (const frame of importer.end()) frames.push(frame);
  return { channels: importer.channels, drafts: importer.drafts, frames };
}
