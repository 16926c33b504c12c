import type { ElementInput } from "../elements/kinds";
import { panel, type Panel } from "./schema";

export interface MirrorOptions {
  /** Added to the panel id and to every element id: "-right" makes `pfd-bezel-right`, `range-knob-right`. */
  idSuffix: string;
  /** The mirrored panel's id. Default: the original's id with the suffix. */
  id?: string;
  /** The mirrored panel's name. Default: the original's name with " (mirror)". */
  name?: string;
  /** Channels the mirrored side reads instead (`efis.left.range` -> `efis.right.range`). */
  channelMap?: Record<string, string>;
  /** Per original element id, fields that differ on the mirrored side (shallow merge, re-validated). */
  overrides?: Record<string, Partial<ElementInput>>;
}

/** Replaces every `channel` field in a binding tree through `map`. Bindings are data, so a walk finds them all. */
function renameChannels<T>(value: T, map: Record<string, string>): T {
  if (Array.isArray(value)) return value.map((v) => renameChannels(v, map)) as T;
  if (value && typeof value === "object") {
    const out: Record<string, unknown> = {};
    for (const [k, v] of Object.entries(value)) {
      out[k] = k === "channel" && typeof v === "string" && Object.hasOwn(map, v) ? map[v] : renameChannels(v, map);
    }
    return out as T;
  }
  return value;
}

/**
 * The mirror image of a panel: the right-hand display bezel built from the left-hand definition.
 * Layout x positions and rotations are mirrored about the panel's vertical centre line, photo
 * markers likewise (a starting point until the mirrored panel's own photo is marked), element and
 * panel ids get the suffix, and bindings stay the same unless `channelMap` or `overrides` say
 * otherwise. Element order is kept, so both boards share element indices.
 */
export function mirrorPanel(source: Panel, options: MirrorOptions): Panel {
  const map = options.channelMap ?? {};
  const suffix = options.idSuffix;
  const elements = source.elements.map((el) => {
    const renamed = renameChannels(el, map);
    const override = options.overrides?.[el.id] ?? {};
    return { ...renamed, ...override, id: `${el.id}${suffix}` };
  });
  const layout = source.layout && {
    ...source.layout,
    positions: Object.fromEntries(
      Object.entries(source.layout.positions).map(([id, pos]) => [
        `${id}${suffix}`,
        { x: source.layout!.width - pos.x, y: pos.y, rotation: pos.rotation === 0 ? 0 : -pos.rotation },
      ]),
    ),
  };
  const photo = source.photo && {
    markers: Object.fromEntries(Object.entries(source.photo.markers).map(([id, m]) => [`${id}${suffix}`, { x: 1 - m.x, y: m.y }])),
  };
  // A different board: keep how it is connected, not which address it has.
  const link = source.link && { kind: source.link.kind };
  return panel.parse({
    ...source,
    id: options.id ?? `${source.id}${suffix}`,
    name: options.name ?? `${source.name} (mirror)`,
    elements,
    layout,
    photo,
    link,
  });
}
