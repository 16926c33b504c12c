import { ELEMENT_KINDS, type ElementKind } from "../../shared/elements/kinds";
import type { PanelSummary } from "../../shared/api/panels";
import type { ChannelDefinition } from "../../shared/recording/channels";
import { checkPanelChannels, parsePanel, type Panel } from "../../shared/panel";
import { HttpError } from "../http/errors";

/**
 * Every write of a definition goes through here: shared/panel's schema first, then the bindings
 * against the airframe's channel catalogue. A refusal is 422 with every problem's field path,
 * prefixed by where the definition came from (`body.definition.elements.3.trip.channel`).
 */
export function validDefinition(input: unknown, catalogue: readonly ChannelDefinition[], where = "body.definition"): Panel {
  const parsed = parsePanel(input);
  const prefix = (path: string) => (path ? `${where}.${path}` : where);
  if (!parsed.ok) {
    const issues = parsed.problems.map((p) => ({ path: prefix(p.path), message: p.message }));
    throw new HttpError("validation_failed", `${issues[0].path}: ${issues[0].message}`, issues);
  }
  const problems = checkPanelChannels(parsed.panel, catalogue);
  if (problems.length) {
    const issues = problems.map((p) => ({ path: prefix(p.path), message: p.message }));
    throw new HttpError("validation_failed", `${issues[0].path}: ${issues[0].message}`, issues);
  }
  return parsed.panel;
}

/** The stored photo's key is the server's to set: whatever a client sends is replaced. */
export function withPhotoKey(p: Panel, photoKey: string | null): Panel {
  const markers = p.photo?.markers ?? {};
  if (!photoKey && !p.photo) return p;
  const photo: NonNullable<Panel["photo"]> = photoKey ? { photoKey, markers } : { markers };
  return { ...p, photo };
}

/** For export: a definition travels without the storage key of this server's photo. */
export function withoutPhotoKey(p: Panel): Panel {
  if (!p.photo) return p;
  return { ...p, photo: { markers: p.photo.markers } };
}

export function kindCounts(p: Panel): PanelSummary["kinds"] {
  const counts = Object.fromEntries(ELEMENT_KINDS.map((k) => [k, 0])) as Record<ElementKind, number>;
  for (const el of p.elements) counts[el.kind]++;
  return counts;
}

/** A slug with a suffix, cut so the whole stays within the 40 characters a definition id may have. */
export function suffixedSlug(base: string, suffix: string): string {
  return `${base.slice(0, 40 - suffix.length).replace(/-+$/, "")}${suffix}`;
}

/**
 * The default slug and element suffix of a mirror: `...-left` becomes `...-right` and back;
 * anything else gets `-right`.
 */
export function mirrorNames(slug: string): { slug: string; elementSuffix: string } {
  if (slug.endsWith("-left")) return { slug: `${slug.slice(0, -5)}-right`, elementSuffix: "-right" };
  if (slug.endsWith("-right")) return { slug: `${slug.slice(0, -6)}-left`, elementSuffix: "-left" };
  return { slug: suffixedSlug(slug, "-right"), elementSuffix: "-right" };
}
