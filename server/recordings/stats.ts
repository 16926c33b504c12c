import type { RecordingChannelStats } from "../../shared/api/recordings";
import type { ChannelDefinition, ChannelValue } from "../../shared/recording/channels";
import type { Frame } from "../../shared/recording/frames";

/** Distinct values listed per channel (booleans, enums, texts). */
const MAX_DISTINCT = 50;
/**
 * Distinct values counted per channel. Enum channels list their named values, which are
 * normally a handful; the bound only keeps a text channel of ever-new values from growing
 * without end.
 */
const MAX_COUNTED = 1000;

interface Running {
  changes: number;
  min: number;
  max: number;
  /** How many frames set each value, in first-seen order (not for numbers). */
  counts: Map<string | boolean, number>;
}

/**
 * Per-channel change counts, ranges and (enums) how often each named value was set, gathered
 * once while a recording is written so the recording page never has to decode every segment
 * to show them.
 */
export class ChannelStatsCollector {
  private readonly running = new Map<string, Running>();

  add(frame: Frame): void {
    const v = frame.v;
    for (const name in v) {
      const value: ChannelValue = v[name];
      let s = this.running.get(name);
      if (!s) this.running.set(name, (s = { changes: 0, min: Infinity, max: -Infinity, counts: new Map() }));
      s.changes++;
      if (typeof value === "number") {
        if (value < s.min) s.min = value;
        if (value > s.max) s.max = value;
      } else {
        const seen = s.counts.get(value);
        if (seen !== undefined) s.counts.set(value, seen + 1);
        else if (s.counts.size < MAX_COUNTED) s.counts.set(value, 1);
      }
    }
  }

  /** Stats in the order of the recording's channel list; channels never set have zero changes. */
  result(channels: readonly ChannelDefinition[]): RecordingChannelStats[] {
    return channels.map((c) => {
      const s = this.running.get(c.name);
      const numeric = c.kind === "number";
      return {
        name: c.name,
        kind: c.kind,
        unit: c.unit ?? null,
        changes: s?.changes ?? 0,
        min: numeric && s && s.changes > 0 && Number.isFinite(s.min) ? s.min : null,
        max: numeric && s && s.changes > 0 && Number.isFinite(s.max) ? s.max : null,
        distinct: numeric ? null : s ? [...s.counts.keys()].slice(0, MAX_DISTINCT) : [],
        // Every named value in the channel's own order, 0 for those the recording never sets.
        valueCounts: c.kind === "enum" ? c.values.map((value) => ({ value, count: s?.counts.get(value) ?? 0 })) : null,
      };
    });
  }
}
