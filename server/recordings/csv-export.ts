import type { ChannelDefinition, ChannelValue } from "../../shared/recording/channels";
import type { Frame } from "../../shared/recording/frames";

/**
 * Writes a recording as the wide CSV our importer reads back with delimiter ',' and decimal
 * point: `time [ms]`, then one `name [unit]` column per channel; a cell holds a value only in
 * the rows where that channel changed. (An empty text value cannot be told apart from "no
 * change" in this form; the Panelproof file keeps it.)
 */
export function csvHeaderLine(channels: readonly ChannelDefinition[]): string {
  const cells = ["time [ms]", ...channels.map((c) => (c.unit ? `${c.name} [${c.unit}]` : c.name))];
  return `${cells.map(quote).join(",")}\n`;
}

export function csvFrameLine(channels: readonly ChannelDefinition[], frame: Frame): string {
  let line = String(frame.t);
  for (const c of channels) {
    const value = frame.v[c.name];
    line += `,${value === undefined ? "" : cell(value)}`;
  }
  return `${line}\n`;
}

function cell(value: ChannelValue): string {
  if (typeof value === "number") return String(value);
  if (typeof value === "boolean") return value ? "true" : "false";
  return quote(value);
}

/** RFC 4180 quoting, only where needed. */
function quote(text: string): string {
  return /[",\r\n]/.test(text) || text !== text.trim() ? `"${text.replace(/"/g, '""')}"` : text;
}
