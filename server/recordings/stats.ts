import type { RecordingChannelStats } from "../../shared/api/recordings";
import type { ChannelDefinition, ChannelValue } from "../../shared/recording/channels";
import type { Frame } from "../../shared/recording/frames";

const MAX_DISTINCT = 50;

interface Running {
  changes: number;
  min: number;
  max: number;
  distinct: Set<string | boolean>;
}

/**
 * Per-channel change counts and ranges, gathered once while a recording is written so the
 * recording page never has to decode every segment to show them.
 */
export class ChannelStatsCollector {
  private readonly running = new Map<string, Running>();

  add(frame: Frame): void {
    const v = frame.v;
    for (const name in v) {
      const value: ChannelValue = v[name];
      let s = this.running.get(name);
      if (!s) this.running.set(name, (s = { changes: 0, min: Infinity, max: -Infinity, distinct: new Set() }));
      s.changes++;
      if (typeof value === "number") {
        if (value < s.min) s.min = value;
        if (value > s.max) s.max = value;
      } else if (s.distinct.size < MAX_DISTINCT) s.distinct.add(value);
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
        distinct: numeric ? null : s ? [...s.distinct] : [],
      };
    });
  }
}
