import { z } from "zod";
import { element, elementChannels, elementId, type Element } from "../elements/kinds";

/**
 * A panel definition: the inventory of a real or virtual panel, imported and exported as JSON
 * (docs/panel-format.md). Element order matters: it gives the element indices of the link
 * protocol, and the order channels are first bound gives the channel indices.
 */

export const PANEL_FORMAT = "panelproof.panel";
export const PANEL_FORMAT_VERSION = 1;

const slug = z
  .string({ error: "must be a string" })
  .max(40, "must be at most 40 characters")
  .regex(/^[a-z][a-z0-9-]*$/, "must be lowercase letters, digits and dashes, starting with a letter");

const finite = z.number().refine(Number.isFinite, "must be a finite number");
const fraction = z.number().min(0, "must be between 0 and 1").max(1, "must be between 0 and 1");

/** Where an element is drawn on the SVG view, in the layout's own units (millimetres suit most builders). */
export const layoutPosition = z
  .object({
    x: finite,
    y: finite,
    /** Degrees clockwise, for elements mounted at an angle. */
    rotation: finite.default(0),
  })
  .strict();

export const panelLayout = z
  .object({
    width: z.number().positive("must be above 0"),
    height: z.number().positive("must be above 0"),
    unit: z.enum(["mm", "in", "px"]).default("mm"),
    positions: z.record(elementId, layoutPosition).default({}),
  })
  .strict();

/** Markers on a photo of the real panel, as fractions of its width and height (0,0 top left). */
export const photoMarkers = z
  .object({
    /** The stored photo's key, set when a photo is uploaded. */
    photoKey: z.string().max(200).optional(),
    markers: z.record(elementId, z.object({ x: fraction, y: fraction }).strict()).default({}),
  })
  .strict();

/**
 * How the panel is connected. Settled by the bench's link work; kept open here so a definition can
 * carry a builder's choice without this module knowing every link kind.
 */
export const linkSettings = z
  .object({
    kind: z.enum(["virtual", "serial", "rs485", "network"]).default("virtual"),
    /** RS-485 device address, 1..247 (docs/link-protocol.md). */
    address: z.number().int().min(1).max(247).optional(),
    options: z.record(z.string(), z.union([z.string(), z.number(), z.boolean()])).optional(),
  })
  .strict();

export const panel = z
  .object({
    format: z.literal(PANEL_FORMAT).default(PANEL_FORMAT),
    version: z.literal(PANEL_FORMAT_VERSION).default(PANEL_FORMAT_VERSION),
    id: slug,
    name: z.string().min(1, "must not be empty").max(80, "must be at most 80 characters"),
    /** The airframe whose channel catalogue the bindings use. */
    airframe: slug,
    description: z.string().max(1000).optional(),
    elements: z.array(element).max(1000, "at most 1000 elements"),
    layout: panelLayout.optional(),
    photo: photoMarkers.optional(),
    link: linkSettings.optional(),
  })
  .strict()
  .superRefine((p, ctx) => {
    const seen = new Map<string, number>();
    p.elements.forEach((el, i) => {
      const first = seen.get(el.id);
      if (first !== undefined) {
        ctx.addIssue({ code: "custom", path: ["elements", i, "id"], message: `duplicate element id "${el.id}" (first at elements.${first})` });
      } else seen.set(el.id, i);
    });
    for (const [where, record] of [
      ["layout", p.layout?.positions],
      ["photo", p.photo?.markers],
    ] as const) {
      for (const id of Object.keys(record ?? {})) {
        if (!seen.has(id)) {
          ctx.addIssue({
            code: "custom",
            path: [where, where === "layout" ? "positions" : "markers", id],
            message: `no element "${id}" on this panel`,
          });
        }
      }
    }
  });
export type Panel = z.infer<typeof panel>;
export type PanelInput = z.input<typeof panel>;

/** Channels the panel reads, each once, in the order the elements first bind them: the link's channel indices. */
export function panelChannels(p: { elements: readonly Element[] }): string[] {
  const out: string[] = [];
  const seen = new Set<string>();
  for (const el of p.elements) {
    for (const c of elementChannels(el)) {
      if (!seen.has(c)) {
        seen.add(c);
        out.push(c);
      }
    }
  }
  return out;
}

export interface PanelProblem {
  path: string;
  message: string;
}

/** Parses a panel, or lists every problem with its dotted field path (`elements.3.trip.channel`). */
export function parsePanel(input: unknown): { ok: true; panel: Panel } | { ok: false; problems: PanelProblem[] } {
  const result = panel.safeParse(input);
  if (result.success) return { ok: true, panel: result.data };
  return {
    ok: false,
    problems: result.error.issues.map((issue) => ({ path: issue.path.map(String).join("."), message: issue.message })),
  };
}

/** JSON text for export: the validated definition with its defaults filled in, two-space indented. */
export function exportPanelJson(p: Panel): string {
  return `${JSON.stringify(panel.parse(p), null, 2)}\n`;
}

export function importPanelJson(text: string): ReturnType<typeof parsePanel> {
  let data: unknown;
  try {
    data = JSON.parse(text);
  } catch (error) {
    return { ok: false, problems: [{ path: "", message: `not JSON: ${(error as Error).message}` }] };
  }
  return parsePanel(data);
}
