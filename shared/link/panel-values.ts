import type { ChannelValue as LinkValue } from "./messages";
import { LINK_MAX_TEXT_BYTES } from "./protocol";
import { utf8Length } from "./text";
import type { ChannelDefinition, ChannelValue } from "../recording/channels";

/**
 * Recording values to link values and back, for one panel. Channel index = position in
 * panelChannels(panel) (docs/link-protocol.md). Numbers go as int when they are whole and fit
 * 32 bits (exact), otherwise as float32; enums as the index into the channel's values as the
 * recording's catalogue lists them; text is cut to the link's 32 UTF-8 bytes.
 */
export class PanelValueMap {
  readonly index = new Map<string, number>();
  private readonly enums = new Map<string, readonly string[]>();

  constructor(
    readonly channels: readonly string[],
    definitions: readonly ChannelDefinition[],
  ) {
    channels.forEach((name, i) => this.index.set(name, i));
    for (const d of definitions) if (d.kind === "enum") this.enums.set(d.name, d.values);
  }

  toLink(name: string, value: ChannelValue): LinkValue | null {
    const channel = this.index.get(name);
    if (channel === undefined) return null;
    return linkValueOf(channel, value, this.enums.get(name));
  }

  /** Every value of `values` the panel reads, in channel order. */
  valuesOf(values: Readonly<Record<string, ChannelValue>>, all = false): LinkValue[] {
    const out: LinkValue[] = [];
    if (all) {
      for (let i = 0; i < this.channels.length; i++) {
        const v = values[this.channels[i]];
        if (v !== undefined) {
          const lv = linkValueOf(i, v, this.enums.get(this.channels[i]));
          if (lv) out.push(lv);
        }
      }
      return out;
    }
    for (const name in values) {
      const lv = this.toLink(name, values[name]);
      if (lv) out.push(lv);
    }
    return out;
  }

  /** The device side: a link value back to the recording value the behaviours bind. */
  fromLink(v: LinkValue): { name: string; value: ChannelValue } | null {
    const name = this.channels[v.channel];
    if (name === undefined) return null;
    if (v.kind === "enum") {
      const values = this.enums.get(name);
      return { name, value: values?.[v.value] ?? v.value };
    }
    return { name, value: v.value };
  }
}

function cutText(text: string): string {
  if (utf8Length(text) <= LINK_MAX_TEXT_BYTES) return text;
  let out = "";
  for (const ch of text) {
    if (utf8Length(out + ch) > LINK_MAX_TEXT_BYTES) break;
    out += ch;
  }
  return out;
}

export function linkValueOf(channel: number, value: ChannelValue, enumValues?: readonly string[]): LinkValue | null {
  if (typeof value === "boolean") return { channel, kind: "boolean", value };
  if (typeof value === "number") {
    if (!Number.isFinite(value)) return null;
    if (Number.isInteger(value) && value >= -0x80000000 && value <= 0x7fffffff) return { channel, kind: "int", value };
    if (Math.abs(value) > 3.4e38) return null;
    return { channel, kind: "float", value };
  }
  if (enumValues) {
    const i = enumValues.indexOf(value);
    if (i >= 0 && i <= 255) return { channel, kind: "enum", value: i };
  }
  return { channel, kind: "text", value: cutText(value) };
}
