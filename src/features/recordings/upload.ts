/** Choices of the upload form, as the upload route's query string wants them (shared/api/recordings.ts uploadQuery). */

export type CsvDelimiterName = "comma" | "semicolon" | "tab" | "pipe";
export type DecimalMarkName = "point" | "comma";

export interface UploadOptions {
  name: string;
  airframeId: string;
  format: "ppr" | "csv";
  addDraftChannels: boolean;
  /** The file's own name, given back when the original is downloaded. */
  fileName?: string;
  /** CSV only: chosen explicitly, never guessed. */
  csv?: { delimiter: CsvDelimiterName; decimalMark: DecimalMarkName; timeColumn?: string; timeUnit?: "ms" | "s" };
}

export const DELIMITER_LABELS: Record<CsvDelimiterName, string> = {
  comma: "Comma  ,",
  semicolon: "Semicolon  ;",
  tab: "Tab",
  pipe: "Vertical bar  |",
};

export const DECIMAL_MARK_LABELS: Record<DecimalMarkName, string> = {
  point: "Point  1.5",
  comma: "Comma  1,5",
};

export function uploadSearch(o: UploadOptions): string {
  const q = new URLSearchParams({ name: o.name.trim(), airframeId: o.airframeId, format: o.format });
  if (o.format === "csv" && o.csv) {
    q.set("delimiter", o.csv.delimiter);
    q.set("decimalMark", o.csv.decimalMark);
    if (o.csv.timeColumn?.trim()) q.set("timeColumn", o.csv.timeColumn.trim());
    if (o.csv.timeUnit) q.set("timeUnit", o.csv.timeUnit);
  }
  q.set("addDraftChannels", o.addDraftChannels ? "true" : "false");
  const fileName = o.fileName && bareFileName(o.fileName);
  if (fileName) q.set("fileName", fileName);
  return q.toString();
}

/** The format a file name suggests: `.csv` (or `.csv.gz`) is CSV, everything else a Panelproof file. */
export function formatFromFileName(name: string): "ppr" | "csv" {
  return /\.(csv|tsv)(\.gz)?$/i.test(name) ? "csv" : "ppr";
}

/** A recording name from a file name: without folders and the known extensions. */
export function nameFromFileName(name: string): string {
  const last = name.split(/[\\/]/).pop() ?? name;
  const bare = last.replace(/\.gz$/i, "").replace(/\.(ppr\.jsonl|jsonl|ppr|csv|tsv|json|txt)$/i, "");
  return bare.replace(/[_]+/g, " ").trim().slice(0, 120) || "Uploaded recording";
}

/**
 * A file name the upload route accepts (shared/api/recordings.ts uploadQuery.fileName): the last
 * path part, without quotes or control characters, at most 255 characters; null when nothing is left.
 */
export function bareFileName(name: string): string | null {
  const last = name.split(/[\\/]/).pop() ?? "";
  // eslint-disable-next-line no-control-regex
  const clean = last.replace(/["\u0000-\u001f\u007f]/g, "").slice(0, 255);
  return clean.length > 0 ? clean : null;
}
