import type { ElementInput } from "../elements/kinds";
import { panel, type Panel } from "./schema";

export interface MirrorOptions {
  /**
   * Added to the panel id and to every element id: "-right" makes `pfd-bezel-right`,
   * `range-knob-right`. When it names a side ("-left" or "-right"), an id that already ends in a
   * side has its side swapped instead (see mirroredId): `fire-left` becomes `fire-right`.
   */
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

const SIDES: Record<string, string> = { "-left": "-right", "-right": "-left" };

/**
 * An element's (or panel's) id on the mirrored side. With a side suffix, an id ending in a side
 * swaps it (`x-left` -> `x-right`, `x-right` -> `x-left`: the mirror of the left one is on the
 * right), so it never reads `x-left-right`; other ids, and every id under a suffix that is not a
 * side ("-copy", "-b"), get the suffix appended.
 */
export function mirroredId(id: string, suffix: string): string {
  if (Object.hasOwn(SIDES, suffix)) {
    for (const [side, other] of Object.entries(SIDES)) {
      if (id.endsWith(side) && id.length > side.length) return id.slice(0, -side.length) + other;
    }
  }
  return `${id}${suffix}`;
}

/**
 * The mirror image of a panel: the right-hand display bezel built from the left-hand definition.
 * Layout x positions and rotations are mirrored about the panel's vertical centre line, photo
 * markers likewise (a starting point until the mirrored panel's own photo is marked), element and
 * panel ids get the suffix (or their side swapped, mirroredId), and bindings stay the same unless `channelMap` or `overrides` say
 * otherwise. Element order is kept, so both boards share element indices.
 */
export function mirrorPanel(source: Panel, options: MirrorOptions): Panel {
  const map = options.channelMap ?? {};
  const suffix = options.idSuffix;
  const elements = source.elements.map((el) => {
    const renamed = renameChannels(el, map);
    const override = options.overrides?.[el.id] ?? {};
    return { ...renamed, ...override, id: mirroredId(el.id, suffix) };
  });
  const layout = source.layout && {
    ...source.layout,
    positions: Object.fromEntries(
      Object.entries(source.layout.positions).map(([id, pos]) => [
        mirroredId(id, suffix),
        { x: source.layout!.width - pos.x, y: pos.y, rotation: pos.rotation === 0 ? 0 : -pos.rotation },
      ]),
    ),
  };
  const photo = source.photo && {
    markers: Object.fromEntries(Object.entries(source.photo.markers).map(([id, m]) => [mirroredId(id, suffix), { x: 1 - m.x, y: m.y }])),
  };
  // A different board: keep how it is connected, not which address it has.
  const link = source.link && { kind: source.link.kind };
  return panel.parse({
    ...source,
    id: options.id ?? mirroredId(source.id, suffix),
    name: options.name ?? `${source.name} (mirror)`,
    elements,
    layout,
    photo,
    link,
  });
}
