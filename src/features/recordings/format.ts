import type { ChannelValue } from "../../../shared/recording/channels";

/** How recordings read on screen: durations as mm:ss.s, sizes in KB/MB, rates in frames per second. */

/** 83_450 ms → "01:23.5"; an hour or more gets hours: "1:02:03.0". */
export function formatDuration(ms: number): string {
  if (!Number.isFinite(ms) || ms < 0) return "–";
  const tenths = Math.round(ms / 100);
  const totalSeconds = Math.floor(tenths / 10);
  const h = Math.floor(totalSeconds / 3600);
  const m = Math.floor((totalSeconds % 3600) / 60);
  const s = totalSeconds % 60;
  const tail = `${String(s).padStart(2, "0")}.${tenths % 10}`;
  return h > 0 ? `${h}:${String(m).padStart(2, "0")}:${tail}` : `${String(m).padStart(2, "0")}:${tail}`;
}

/** Reads "83.5", "1:23.5", "01:23.45" or "1:02:03" back into milliseconds; null when it is not a time. */
export function parseDuration(text: string): number | null {
  const parts = text.trim().split(":");
  if (parts.length === 0 || parts.length > 3 || parts.some((p) => !/^\d+(\.\d+)?$/.test(p.trim()))) return null;
  if (parts.slice(0, -1).some((p) => p.includes("."))) return null;
  let seconds = 0;
  for (const p of parts) seconds = seconds * 60 + Number(p);
  return Math.round(seconds * 1000);
}

export function formatBytes(bytes: number): string {
  if (!Number.isFinite(bytes) || bytes < 0) return "–";
  if (bytes < 1024) return `${bytes} B`;
  const units = ["KB", "MB", "GB", "TB"];
  let value = bytes / 1024;
  let i = 0;
  while (value >= 1024 && i < units.length - 1) {
    value /= 1024;
    i++;
  }
  return `${value < 10 ? value.toFixed(1) : Math.round(value)} ${units[i]}`;
}

export function formatRate(framesPerSecond: number): string {
  if (!Number.isFinite(framesPerSecond) || framesPerSecond <= 0) return "–";
  return `${framesPerSecond < 10 ? framesPerSecond.toFixed(1) : Math.round(framesPerSecond)} /s`;
}

const dateTime = new Intl.DateTimeFormat(undefined, { dateStyle: "medium", timeStyle: "short" });
export function formatCreated(iso: string): string {
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? iso : dateTime.format(d);
}

export function formatCount(n: number): string {
  return n.toLocaleString("en-US");
}

/** A channel value as text: numbers trimmed to what they hold, booleans as words, text quoted. */
export function formatValue(value: ChannelValue | null | undefined, kind?: string): string {
  if (value === null || value === undefined) return "–";
  if (typeof value === "boolean") return value ? "true" : "false";
  if (typeof value === "number") {
    if (!Number.isFinite(value)) return String(value);
    return Number.isInteger(value) ? String(value) : String(Number(value.toFixed(6)));
  }
  return kind === "text" ? JSON.stringify(value) : value;
}

/** Percent of a part, 0 to 100, rounded down so 100 means really finished. */
export function percent(part: number, whole: number): number {
  if (!(whole > 0)) return 0;
  return Math.max(0, Math.min(100, Math.floor((part / whole) * 100)));
}
