import { z } from "zod";
import type { ConditionInput, ConditionOp } from "../../../shared/elements/bindings";
import { element, type Element, type ElementKind } from "../../../shared/elements/kinds";
import type { ChannelDefinition } from "../../../shared/recording/channels";
import { checkPanelChannels } from "../../../shared/panel/channel-check";

/**
 * The element form's model: the element's own shape (so zod's issue paths name form fields
 * directly: `drive.on.value`, `scale.points.2.angle`), with every input as text and a few lists
 * typed as comma-separated text. `toElement` turns it back into an element for the shared schema.
 */

export interface CondModel {
  channel: string;
  op: ConditionOp;
  /** One value, or a comma-separated list for op "in". */
  value: string;
}
export interface NumModel {
  channel: string;
  scale: string;
  offset: string;
}

export interface ElementModel {
  kind: ElementKind;
  id: string;
  label: string;
  placeholder: boolean;
  notes: string;
  lagBudgetMs: string;
  drive: { mode: "condition" | "latch"; on: CondModel; cautions: CondModel[]; acknowledge: CondModel };
  flash: { enabled: boolean; periodMs: string; when: CondModel };
  dimmer: NumModel;
  test: CondModel;
  power: CondModel;
  tolerance: { level: string; degrees: string; detents: string };
  gauge: string;
  value: NumModel;
  scale: {
    kind: "sweep" | "full-circle";
    interpolation: "linear" | "monotone-cubic";
    points: { value: string; angle: string }[];
    period: string;
    angleAtZero: string;
    turn: "clockwise" | "counterclockwise";
  };
  maxSlewDegPerSec: string;
  parkAngle: string;
  offFlag: boolean;
  display: "seven-segment" | "text";
  format: { width: string; pad: "zero" | "space"; decimals: string; sign: "negative" | "always" | "never"; prefix: string; suffix: string };
  blankWhen: CondModel;
  trip: CondModel;
  pulled: CondModel;
  positions: string;
  position: { channel: string; map: string };
  springReturn: { enabled: boolean; from: string; to: string; holdMs: string };
  lock: CondModel;
  pressed: CondModel;
  backlight: { enabled: boolean; drive: { on: CondModel }; dimmer: NumModel };
  detentsPerTurn: string;
  valuePerDetent: string;
  wrap: string;
}

const text = (v: unknown) => (v === undefined || v === null ? "" : String(v));
const emptyCond = (): CondModel => ({ channel: "", op: "true", value: "" });
const emptyNum = (): NumModel => ({ channel: "", scale: "", offset: "" });

function condModel(c: ConditionInput | undefined): CondModel {
  if (!c) return emptyCond();
  const op = c.op ?? "true";
  return { channel: c.channel, op, value: op === "in" ? (c.values ?? []).map(String).join(", ") : text(c.value) };
}

function numModel(n: { channel: string; transform?: { scale?: number; offset?: number } } | undefined): NumModel {
  if (!n) return emptyNum();
  return { channel: n.channel, scale: text(n.transform?.scale === 1 ? "" : n.transform?.scale), offset: text(n.transform?.offset === 0 ? "" : n.transform?.offset) };
}

const listText = (xs: readonly string[] | undefined) => (xs ?? []).join(", ");
const mapText = (m: Record<string, string> | undefined) =>
  Object.entries(m ?? {})
    .map(([k, v]) => `${k}=${v}`)
    .join(", ");

/** A new element's starting point for each kind. */
export function newElement(kind: ElementKind, id: string): Record<string, unknown> {
  const base = { kind, id, label: "" };
  switch (kind) {
    case "lamp":
      return { ...base, drive: { mode: "condition", on: { channel: "", op: "true" } } };
    case "pointer":
      return { ...base, value: { channel: "" }, scale: { kind: "sweep", points: [{ value: 0, angle: 0 }, { value: 100, angle: 270 }] } };
    case "readout":
      return { ...base, value: { channel: "" }, format: { width: 4 } };
    case "breaker":
      return { ...base, trip: { channel: "", op: "true" } };
    case "switch":
      return { ...base, positions: ["OFF", "ON"], position: { channel: "" } };
    case "button":
      return { ...base, pressed: { channel: "", op: "true" } };
    case "encoder":
      return { ...base, detentsPerTurn: 24, value: { channel: "" }, valuePerDetent: 1 };
    case "lever":
      return { ...base, positions: ["UP", "DOWN"], position: { channel: "" } };
  }
}

/** The form's model for an element (or a new element's starting point). */
export function toModel(input: Record<string, unknown>): ElementModel {
  const el = input as Partial<Element> & Record<string, any>;
  const scale = el.scale;
  return {
    kind: el.kind as ElementKind,
    id: text(el.id),
    label: text(el.label),
    placeholder: !!el.placeholder,
    notes: text(el.notes),
    lagBudgetMs: text(el.lagBudgetMs),
    drive: {
      mode: el.drive?.mode ?? "condition",
      on: condModel(el.drive?.mode === "condition" ? el.drive.on : undefined),
      cautions: el.drive?.mode === "latch" ? el.drive.cautions.map(condModel) : [emptyCond()],
      acknowledge: condModel(el.drive?.mode === "latch" ? el.drive.acknowledge : undefined),
    },
    flash: { enabled: !!el.flash, periodMs: text(el.flash?.periodMs ?? 500), when: condModel(el.flash?.when) },
    dimmer: numModel(el.dimmer),
    test: condModel(el.test),
    power: condModel(el.power),
    tolerance: { level: text(el.tolerance?.level), degrees: text(el.tolerance?.degrees), detents: text(el.tolerance?.detents) },
    gauge: text(el.gauge),
    value: numModel(el.value),
    scale: {
      kind: scale?.kind ?? "sweep",
      interpolation: scale?.kind === "sweep" ? (scale.interpolation ?? "linear") : "linear",
      points: scale?.kind === "sweep" ? scale.points.map((p: { value: number; angle: number }) => ({ value: text(p.value), angle: text(p.angle) })) : [{ value: "0", angle: "0" }, { value: "100", angle: "270" }],
      period: scale?.kind === "full-circle" ? text(scale.period) : "1000",
      angleAtZero: scale?.kind === "full-circle" ? text(scale.angleAtZero ?? 0) : "0",
      turn: scale?.kind === "full-circle" ? (scale.turn ?? "clockwise") : "clockwise",
    },
    maxSlewDegPerSec: text(el.maxSlewDegPerSec),
    parkAngle: text(el.parkAngle),
    offFlag: el.offFlag ?? true,
    display: el.display ?? "seven-segment",
    format: {
      width: text(el.format?.width),
      pad: el.format?.pad ?? "space",
      decimals: text(el.format?.decimals ?? ""),
      sign: el.format?.sign ?? "negative",
      prefix: text(el.format?.prefix),
      suffix: text(el.format?.suffix),
    },
    blankWhen: condModel(el.blankWhen),
    trip: condModel(el.trip),
    pulled: condModel(el.pulled),
    positions: listText(el.positions),
    position: { channel: text(el.position?.channel), map: mapText(el.position?.map) },
    springReturn: {
      enabled: !!el.springReturn,
      from: listText(el.springReturn?.from),
      to: text(el.springReturn?.to),
      holdMs: text(el.springReturn?.holdMs ?? 1000),
    },
    lock: condModel(el.lock),
    pressed: condModel(el.pressed),
    backlight: {
      enabled: !!el.backlight,
      drive: { on: condModel(el.backlight?.drive?.mode === "condition" ? el.backlight.drive.on : undefined) },
      dimmer: numModel(el.backlight?.dimmer),
    },
    detentsPerTurn: text(el.detentsPerTurn),
    valuePerDetent: text(el.valuePerDetent),
    wrap: text(el.wrap),
  };
}

/** Text to a number when it is one; other text stays text, so the schema says what is wrong. */
function num(s: string): number | string | undefined {
  const t = s.trim();
  if (t === "") return undefined;
  const n = Number(t);
  return Number.isFinite(n) ? n : t;
}

function scalar(s: string, channel: ChannelDefinition | undefined): number | boolean | string {
  const t = s.trim();
  if (channel?.kind === "number") {
    const n = Number(t);
    return t !== "" && Number.isFinite(n) ? n : t;
  }
  if (channel?.kind === "boolean") return t === "true" ? true : t === "false" ? false : t;
  return t;
}

const splitList = (s: string) =>
  s
    .split(",")
    .map((x) => x.trim())
    .filter((x) => x !== "");

function compact<T extends Record<string, unknown>>(o: T): T {
  for (const k of Object.keys(o)) if (o[k] === undefined) delete o[k];
  return o;
}

/**
 * The element the model describes, over the original so fields the form does not show (a motor
 * profile, a readout's value map) are kept.
 */
export function toElement(m: ElementModel, catalogue: readonly ChannelDefinition[], original: Record<string, unknown> = {}): Record<string, unknown> {
  const byName = new Map(catalogue.map((c) => [c.name, c]));
  const cond = (c: CondModel, required: boolean): ConditionInput | undefined => {
    if (!c.channel && !required) return undefined;
    const ch = byName.get(c.channel);
    const out: Record<string, unknown> = { channel: c.channel, op: c.op };
    if (c.op === "in") out.values = splitList(c.value).map((v) => scalar(v, ch));
    else if (c.op !== "true" && c.op !== "false") out.value = c.value.trim() === "" ? undefined : scalar(c.value, ch);
    return compact(out) as ConditionInput;
  };
  const numeric = (n: NumModel, required: boolean) => {
    if (!n.channel && !required) return undefined;
    const scale = num(n.scale);
    const offset = num(n.offset);
    const previous = (original as any)?.value?.transform ?? {};
    const transform = scale === undefined && offset === undefined ? undefined : compact({ ...previous, scale, offset });
    return compact({ channel: n.channel, transform });
  };
  const common = {
    kind: m.kind,
    id: m.id.trim(),
    label: m.label.trim(),
    placeholder: m.placeholder,
    notes: m.notes.trim() || undefined,
    lagBudgetMs: num(m.lagBudgetMs),
  };
  const out: Record<string, unknown> = { ...original, ...common };
  const lampOutput = () => ({
    drive:
      m.drive.mode === "condition"
        ? { mode: "condition", on: cond(m.drive.on, true) }
        : { mode: "latch", cautions: m.drive.cautions.map((c) => cond(c, true)), acknowledge: cond(m.drive.acknowledge, true) },
    flash: m.flash.enabled ? compact({ periodMs: num(m.flash.periodMs), when: cond(m.flash.when, false) }) : undefined,
    dimmer: numeric(m.dimmer, false),
    test: cond(m.test, false),
  });
  switch (m.kind) {
    case "lamp":
      Object.assign(out, lampOutput(), {
        power: cond(m.power, false),
        tolerance: compact({ ...((original as any).tolerance ?? {}), level: num(m.tolerance.level) }),
      });
      break;
    case "pointer":
      Object.assign(out, {
        gauge: m.gauge.trim() || undefined,
        value: numeric(m.value, true),
        scale:
          m.scale.kind === "sweep"
            ? { kind: "sweep", interpolation: m.scale.interpolation, points: m.scale.points.map((p) => ({ value: num(p.value), angle: num(p.angle) })) }
            : { kind: "full-circle", period: num(m.scale.period), angleAtZero: num(m.scale.angleAtZero) ?? 0, turn: m.scale.turn },
        maxSlewDegPerSec: num(m.maxSlewDegPerSec),
        power: cond(m.power, false),
        parkAngle: num(m.parkAngle),
        offFlag: m.offFlag,
        tolerance: compact({ degrees: num(m.tolerance.degrees) }),
      });
      break;
    case "readout":
      Object.assign(out, {
        display: m.display,
        value: numeric(m.value, true),
        format: compact({
          ...((original as any).format ?? {}),
          width: num(m.format.width),
          pad: m.format.pad,
          decimals: num(m.format.decimals),
          sign: m.format.sign,
          prefix: m.format.prefix,
          suffix: m.format.suffix,
        }),
        power: cond(m.power, false),
        blankWhen: cond(m.blankWhen, false),
        test: cond(m.test, false),
      });
      break;
    case "breaker":
      Object.assign(out, { trip: cond(m.trip, true), pulled: cond(m.pulled, false) });
      break;
    case "switch":
    case "lever": {
      const map = Object.fromEntries(
        splitList(m.position.map).map((pair) => {
          const [k, ...rest] = pair.split("=");
          return [k.trim(), rest.join("=").trim()];
        }),
      );
      Object.assign(out, {
        positions: splitList(m.positions),
        position: compact({ channel: m.position.channel, map: Object.keys(map).length ? map : undefined }),
      });
      if (m.kind === "switch") {
        out.springReturn = m.springReturn.enabled ? { from: splitList(m.springReturn.from), to: m.springReturn.to.trim(), holdMs: num(m.springReturn.holdMs) } : undefined;
      } else out.lock = cond(m.lock, false);
      break;
    }
    case "button":
      Object.assign(out, {
        pressed: cond(m.pressed, true),
        backlight: m.backlight.enabled
          ? compact({ ...((original as any).backlight ?? {}), drive: { mode: "condition", on: cond(m.backlight.drive.on, true) }, dimmer: numeric(m.backlight.dimmer, false) })
          : undefined,
        power: cond(m.power, false),
      });
      break;
    case "encoder":
      Object.assign(out, {
        detentsPerTurn: num(m.detentsPerTurn),
        value: numeric(m.value, true),
        valuePerDetent: num(m.valuePerDetent),
        wrap: num(m.wrap),
        tolerance: compact({ detents: num(m.tolerance.detents) }),
      });
      break;
  }
  return compact(out);
}

export interface FieldProblem {
  path: string;
  message: string;
}

/**
 * Checks a model the way the server will: the shared element schema, identifier uniqueness in the
 * panel, then the bindings against the airframe's catalogue. Paths are element paths (form fields).
 */
export function checkModel(
  m: ElementModel,
  catalogue: readonly ChannelDefinition[],
  takenIds: ReadonlySet<string>,
  original?: Record<string, unknown>,
): { element?: Element; problems: FieldProblem[] } {
  const candidate = toElement(m, catalogue, original);
  const parsed = element.safeParse(candidate);
  const problems: FieldProblem[] = [];
  if (takenIds.has(String(candidate.id))) problems.push({ path: "id", message: `another element of this panel is already "${candidate.id}"` });
  if (!parsed.success) {
    for (const issue of parsed.error.issues) {
      const path = issue.path.map(String).join(".");
      // An empty channel choice: say what to do rather than the name rule.
      const value = issue.path.reduce<any>((node, key) => (node == null ? undefined : node[key as string]), candidate);
      const message = path.endsWith("channel") && value === "" ? "choose a channel" : issue.message;
      problems.push({ path, message });
    }
    return { problems };
  }
  for (const p of checkPanelChannels({ elements: [parsed.data] }, catalogue)) problems.push({ path: p.path.replace(/^elements\.0\./, ""), message: p.message });
  return problems.length ? { problems } : { element: parsed.data, problems };
}

/** The zod schema react-hook-form's zod resolver runs: the model turned into an element, then the shared schema. */
export function elementFormSchema(catalogue: readonly ChannelDefinition[], original?: Record<string, unknown>) {
  return z.preprocess((m) => toElement(m as ElementModel, catalogue, original), element);
}
