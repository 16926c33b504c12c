import type { SeriesView } from "../../../shared/api/recordings";
import type { ChannelDefinition, ChannelValue } from "../../../shared/recording/channels";
import type { Frame } from "../../../shared/recording/frames";

/**
 * Pure helpers between recording data and the plot: step series (a value holds from t[i] until
 * t[i+1]), values at an instant, and which channels can be drawn.
 */

export const MAX_PLOTTED = 8;

export interface StripChannel {
  name: string;
  kind: "number" | "boolean" | "enum" | "text";
  unit: string | null;
  /** Enum value names in index order (the series carries the index). */
  values?: readonly string[];
}

export interface StepSeries {
  t: number[];
  v: (number | null)[];
}

export const plottable = (c: Pick<StripChannel, "kind">) => c.kind !== "text";

/** Index of the last sample at or before `t` (-1 when `t` is before the first). */
export function lastIndexAtOrBefore(t: readonly number[], at: number): number {
  let lo = 0;
  let hi = t.length - 1;
  let found = -1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    if (t[mid] <= at) {
      found = mid;
      lo = mid + 1;
    } else hi = mid - 1;
  }
  return found;
}

/** The series' value at instant `at` under step semantics; null before the first sample. */
export function stepValueAt(series: StepSeries, at: number): number | null {
  const i = lastIndexAtOrBefore(series.t, at);
  return i < 0 ? null : series.v[i];
}

/** A plotted number back to what the channel holds: 0/1 to a boolean, an index to the enum's name. */
export function seriesValueToChannelValue(channel: StripChannel, value: number | null): ChannelValue | null {
  if (value === null) return null;
  if (channel.kind === "boolean") return value !== 0;
  if (channel.kind === "enum") return channel.values?.[value] ?? String(value);
  return value;
}

/** Extends a step series so its last value is drawn to the end of the window. */
export function extendToEnd(series: StepSeries, endMs: number): StepSeries {
  const n = series.t.length;
  if (n === 0 || series.t[n - 1] >= endMs) return series;
  return { t: [...series.t, endMs], v: [...series.v, series.v[n - 1]] };
}

/** Channel values as plot numbers: booleans 0/1, enums their index, text null. */
export function channelValueToNumber(channel: ChannelDefinition, value: ChannelValue): number | null {
  switch (channel.kind) {
    case "number":
      return typeof value === "number" ? value : null;
    case "boolean":
      return value === true ? 1 : 0;
    case "enum": {
      const i = channel.values.indexOf(String(value));
      return i < 0 ? null : i;
    }
    case "text":
      return null;
  }
}

/** Step series of the named channels from a frame list (the scenario editor generates frames in the browser). */
export function framesToSeries(frames: readonly Frame[], channels: readonly ChannelDefinition[], names: readonly string[]): SeriesView {
  const byName = new Map(channels.map((c) => [c.name, c]));
  const series: SeriesView["series"] = {};
  for (const name of names) series[name] = { t: [], v: [] };
  for (const frame of frames) {
    for (const name of names) {
      if (!(name in frame.v)) continue;
      const channel = byName.get(name);
      if (!channel) continue;
      series[name].t.push(frame.t);
      series[name].v.push(channelValueToNumber(channel, frame.v[name]));
    }
  }
  const last = frames.length ? frames[frames.length - 1].t : 0;
  return { fromMs: 0, toMs: last, series };
}

export function toStripChannel(c: ChannelDefinition | { name: string; kind: StripChannel["kind"]; unit: string | null; distinct?: unknown }): StripChannel {
  const unit = "unit" in c && c.unit ? c.unit : null;
  const values = c.kind === "enum" && "values" in c && Array.isArray(c.values) ? (c.values as string[]) : undefined;
  return { name: c.name, kind: c.kind, unit, values };
}

/** The first channels worth showing when a recording opens: numbers, then enums, then booleans. */
export function defaultPicks(channels: readonly StripChannel[], count = 4): string[] {
  const order = { number: 0, enum: 1, boolean: 2, text: 3 } as const;
  return [...channels]
    .filter(plottable)
    .sort((a, b) => order[a.kind] - order[b.kind])
    .slice(0, count)
    .map((c) => c.name);
}
