/**
 * One error type for every way a recording source can be refused, so the server, the CLI and the
 * scenario editor can all show the same "where" and "why" without parsing message text.
 */

export const RECORDING_ERROR_CODES = [
  "empty_file",
  "too_large",
  "not_utf8",
  "truncated_gzip",
  "malformed_json",
  "not_a_header",
  "unknown_format",
  "unknown_version",
  "invalid_header",
  "invalid_frame",
  "time_backwards",
  "conflicting_duplicate",
  "not_finite",
  "wrong_kind",
  "out_of_range",
  "unknown_enum_value",
  "unknown_channel",
  "no_frames",
  "csv_options",
  "csv_delimiter",
  "csv_header",
  "csv_row",
  "csv_unit",
  "invalid_segment",
] as const;
export type RecordingErrorCode = (typeof RECORDING_ERROR_CODES)[number];

/** Where a problem is. Lines (Panelproof file) and rows (CSV) count from 1, as editors show them. */
export interface RecordingWhere {
  line?: number;
  row?: number;
  /** 1-based character column in the line, or the CSV column number. */
  column?: number;
  /** The JSON field (`t`, `v`, `channels[2].kind`) or CSV column header. */
  field?: string;
  channel?: string;
  /** Byte offset in the input as fed, for size and encoding problems. */
  byte?: number;
}

export function describeWhere(where: RecordingWhere): string {
  const parts: string[] = [];
  if (where.line !== undefined) parts.push(`line ${where.line}`);
  if (where.row !== undefined) parts.push(`row ${where.row}`);
  if (where.column !== undefined) parts.push(`column ${where.column}`);
  if (where.field !== undefined) parts.push(`field ${where.field}`);
  if (where.channel !== undefined) parts.push(`channel "${where.channel}"`);
  if (where.byte !== undefined) parts.push(`byte ${where.byte}`);
  return parts.join(", ");
}

export class RecordingError extends Error {
  readonly code: RecordingErrorCode;
  readonly where: RecordingWhere;
  readonly why: string;

  constructor(code: RecordingErrorCode, why: string, where: RecordingWhere = {}) {
    const place = describeWhere(where);
    super(place ? `${place}: ${why}` : why);
    this.name = "RecordingError";
    this.code = code;
    this.where = where;
    this.why = why;
  }
}

/** Formats a zod-style path as `channels[2].kind` so messages read like the JSON they point at. */
export function formatPath(path: ReadonlyArray<PropertyKey>): string {
  let out = "";
  for (const key of path) {
    if (typeof key === "number") out += `[${key}]`;
    else if (typeof key === "string" && /^[A-Za-z_$][A-Za-z0-9_$]*$/.test(key)) out += out ? `.${key}` : key;
    else out += `[${JSON.stringify(String(key))}]`;
  }
  return out;
}
