import { zodResolver } from "@hookform/resolvers/zod";
import { useId, useMemo, useRef, useState, type ReactNode } from "react";
import { useFieldArray, useForm, useWatch, type Resolver, type UseFormRegister, type Control } from "react-hook-form";
import { CONDITION_OPS } from "../../../shared/elements/bindings";
import type { Element, ElementKind } from "../../../shared/elements/kinds";
import type { ChannelDefinition } from "../../../shared/recording/channels";
import { Button } from "../../components/ui";
import { checkModel, elementFormSchema, toModel, type ElementModel, type FieldProblem } from "./element-model";
import { KIND_WORDS } from "./words";

/**
 * The element form: one per kind, built with react-hook-form and the zod resolver over the shared
 * element schema, then the airframe's channel catalogue. Every problem is shown beside its field,
 * and listed at the foot with its path so nothing the schema says is ever hidden.
 */

function setAt(target: Record<string, any>, path: string, message: string) {
  const parts = path ? path.split(".") : ["root"];
  let node = target;
  for (const part of parts.slice(0, -1)) node = node[part] ??= {};
  const last = parts[parts.length - 1];
  if (!node[last]?.message) node[last] = { type: "custom", message };
}

interface Ctx {
  register: UseFormRegister<ElementModel>;
  /** The first problem at or under a field path. */
  errorAt: (path: string) => string | undefined;
  control: Control<ElementModel, unknown, Element>;
  channels: readonly ChannelDefinition[];
  readOnly: boolean;
}

const inputClass = (bad: boolean) => `rounded-md border bg-card px-2.5 py-1.5 text-ink ${bad ? "border-bad" : "border-rule"}`;

function Labelled({ label, error, hint, children, htmlFor }: { label: string; error?: string; hint?: string; children: ReactNode; htmlFor: string }) {
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={htmlFor} className="text-sm font-semibold text-ink">
        {label}
      </label>
      {children}
      {error ? (
        <p className="text-sm text-bad" role="alert">
          ✕ {error}
        </p>
      ) : (
        hint && <p className="text-xs text-ink-soft">{hint}</p>
      )}
    </div>
  );
}

function Text({ ctx, name, label, hint, type = "text", width = "" }: { ctx: Ctx; name: string; label: string; hint?: string; type?: string; width?: string }) {
  const id = useId();
  const error = ctx.errorAt(name);
  return (
    <Labelled label={label} error={error} hint={hint} htmlFor={id}>
      <input id={id} type={type} step="any" readOnly={ctx.readOnly} aria-invalid={error ? true : undefined} className={`${inputClass(!!error)} ${width}`} {...ctx.register(name as any)} />
    </Labelled>
  );
}

function Choice({ ctx, name, label, options, hint }: { ctx: Ctx; name: string; label: string; options: readonly (string | [string, string])[]; hint?: string }) {
  const id = useId();
  const error = ctx.errorAt(name);
  return (
    <Labelled label={label} error={error} hint={hint} htmlFor={id}>
      <select id={id} disabled={ctx.readOnly} aria-invalid={error ? true : undefined} className={inputClass(!!error)} {...ctx.register(name as any)}>
        {options.map((o) => {
          const [value, text] = typeof o === "string" ? [o, o] : o;
          return (
            <option key={value} value={value}>
              {text}
            </option>
          );
        })}
      </select>
    </Labelled>
  );
}

function Check({ ctx, name, label, hint }: { ctx: Ctx; name: string; label: string; hint?: string }) {
  return (
    <label className="flex items-start gap-2 text-sm">
      <input type="checkbox" disabled={ctx.readOnly} className="mt-1 accent-amber" {...ctx.register(name as any)} />
      <span>
        <span className="font-semibold">{label}</span>
        {hint && <span className="block text-xs text-ink-soft">{hint}</span>}
      </span>
    </label>
  );
}

function channelOptions(channels: readonly ChannelDefinition[], optional: boolean, only?: ChannelDefinition["kind"]): [string, string][] {
  const list = channels.filter((c) => !only || c.kind === only).map((c): [string, string] => [c.name, `${c.name} (${c.kind}${c.unit ? `, ${c.unit}` : ""})`]);
  return [[" ", optional ? "— none —" : "— choose a channel —"] as [string, string], ...list].map(([v, t]) => [v.trim(), t]);
}

const OP_WORDS: Record<(typeof CONDITION_OPS)[number], string> = {
  true: "is on / true",
  false: "is off / false",
  eq: "equals",
  ne: "differs from",
  gt: "is above",
  ge: "is at least",
  lt: "is below",
  le: "is at most",
  in: "is one of",
};

/** A condition: channel, test and value, side by side. */
function ConditionFields({ ctx, name, label, optional = false, hint }: { ctx: Ctx; name: string; label: string; optional?: boolean; hint?: string }) {
  const op = useWatch({ control: ctx.control, name: `${name}.op` as any }) as string;
  const channel = useWatch({ control: ctx.control, name: `${name}.channel` as any }) as string;
  const def = ctx.channels.find((c) => c.name === channel);
  const valueHint =
    def?.kind === "enum" ? `one of ${def.values.join(", ")}` : def?.kind === "boolean" ? "true or false" : def?.kind === "number" ? `a number${def.unit ? ` in ${def.unit}` : ""}` : undefined;
  return (
    <fieldset className="rounded-md border border-rule px-3 pb-3">
      <legend className="px-1 text-sm font-semibold">
        {label}
        {optional && <span className="font-normal text-ink-soft"> (optional)</span>}
      </legend>
      {hint && <p className="mb-2 text-xs text-ink-soft">{hint}</p>}
      <div className="grid gap-3 sm:grid-cols-[2fr_1fr_1fr]">
        <Choice ctx={ctx} name={`${name}.channel`} label="Channel" options={channelOptions(ctx.channels, optional)} />
        <Choice ctx={ctx} name={`${name}.op`} label="Test" options={CONDITION_OPS.map((o) => [o, OP_WORDS[o]] as [string, string])} />
        {op !== "true" && op !== "false" ? (
          <Text ctx={ctx} name={`${name}.value`} label={op === "in" ? "Values (comma-separated)" : "Value"} hint={valueHint} />
        ) : (
          <div className="flex flex-col gap-1">
            <span className="text-sm font-semibold text-ink-soft">Value</span>
            <span className="py-1.5 text-sm text-ink-soft">none needed</span>
            {ctx.errorAt(`${name}.value`) && <p className="text-sm text-bad">✕ {ctx.errorAt(`${name}.value`)}</p>}
          </div>
        )}
      </div>
    </fieldset>
  );
}

function NumericFields({ ctx, name, label, optional = false, hint }: { ctx: Ctx; name: string; label: string; optional?: boolean; hint?: string }) {
  return (
    <fieldset className="rounded-md border border-rule px-3 pb-3">
      <legend className="px-1 text-sm font-semibold">
        {label}
        {optional && <span className="font-normal text-ink-soft"> (optional)</span>}
      </legend>
      {hint && <p className="mb-2 text-xs text-ink-soft">{hint}</p>}
      <div className="grid gap-3 sm:grid-cols-[2fr_1fr_1fr]">
        <Choice ctx={ctx} name={`${name}.channel`} label="Channel" options={channelOptions(ctx.channels, optional, "number")} />
        <Text ctx={ctx} name={`${name}.scale`} label="Multiply by" hint="default 1" />
        <Text ctx={ctx} name={`${name}.offset`} label="Then add" hint="default 0" />
      </div>
    </fieldset>
  );
}

function LampFields({ ctx }: { ctx: Ctx }) {
  const mode = useWatch({ control: ctx.control, name: "drive.mode" });
  const flash = useWatch({ control: ctx.control, name: "flash.enabled" });
  const cautions = useFieldArray({ control: ctx.control, name: "drive.cautions" });
  return (
    <>
      <Choice
        ctx={ctx}
        name="drive.mode"
        label="What lights it"
        options={[
          ["condition", "a condition: lit while it holds"],
          ["latch", "a caution latch: lit from any new caution until acknowledged"],
        ]}
      />
      {mode === "condition" ? (
        <ConditionFields ctx={ctx} name="drive.on" label="Lit while" />
      ) : (
        <>
          {cautions.fields.map((f, i) => (
            <div key={f.id} className="flex items-start gap-2">
              <div className="flex-1">
                <ConditionFields ctx={ctx} name={`drive.cautions.${i}`} label={`Caution ${i + 1}`} />
              </div>
              {!ctx.readOnly && cautions.fields.length > 1 && (
                <Button type="button" className="mt-4" onClick={() => cautions.remove(i)} aria-label={`Remove caution ${i + 1}`}>
                  Remove
                </Button>
              )}
            </div>
          ))}
          {ctx.errorAt("drive.cautions") && !cautions.fields.length && <p className="text-sm text-bad">✕ {ctx.errorAt("drive.cautions")}</p>}
          {!ctx.readOnly && (
            <Button type="button" className="self-start" onClick={() => cautions.append({ channel: "", op: "true", value: "" })}>
              Add a caution
            </Button>
          )}
          <ConditionFields ctx={ctx} name="drive.acknowledge" label="Acknowledged when" />
        </>
      )}
      <Check ctx={ctx} name="flash.enabled" label="Flashes when lit" />
      {flash && (
        <div className="grid gap-3 sm:grid-cols-[1fr_3fr]">
          <Text ctx={ctx} name="flash.periodMs" label="Flash period (ms)" type="number" />
          <ConditionFields ctx={ctx} name="flash.when" label="Flashes only while" optional hint="Absent: it always flashes while lit." />
        </div>
      )}
      <NumericFields ctx={ctx} name="dimmer" label="Dimmer" optional hint="The transformed value is the brightness, 0 to 1." />
      <ConditionFields ctx={ctx} name="test" label="Lamp test" optional hint="Lit at full brightness while this holds." />
    </>
  );
}

function PointerFields({ ctx }: { ctx: Ctx }) {
  const kind = useWatch({ control: ctx.control, name: "scale.kind" });
  const points = useFieldArray({ control: ctx.control, name: "scale.points" });
  return (
    <>
      <NumericFields ctx={ctx} name="value" label="Follows" />
      <div className="grid gap-3 sm:grid-cols-3">
        <Text ctx={ctx} name="gauge" label="Gauge name" hint="Pointers with one gauge name share a dial." />
        <Text ctx={ctx} name="maxSlewDegPerSec" label="Top needle speed (°/s)" type="number" hint="Empty: the needle jumps." />
        <Text ctx={ctx} name="tolerance.degrees" label="Tolerance (°)" type="number" hint="default 2" />
      </div>
      <Choice
        ctx={ctx}
        name="scale.kind"
        label="Scale"
        options={[
          ["sweep", "between two stops, from a table of points"],
          ["full-circle", "full circle without stops (one turn per period)"],
        ]}
      />
      {kind === "sweep" ? (
        <fieldset className="rounded-md border border-rule px-3 pb-3">
          <legend className="px-1 text-sm font-semibold">Scale points (value → dial degrees, clockwise from 12 o'clock)</legend>
          <div className="mb-2 max-w-xs">
            <Choice ctx={ctx} name="scale.interpolation" label="Between points" options={[["linear", "straight lines"], ["monotone-cubic", "smooth, never overshooting"]]} />
          </div>
          <div className="flex flex-col gap-2">
            {points.fields.map((f, i) => (
              <div key={f.id} className="grid grid-cols-[1fr_1fr_auto] items-end gap-2">
                <Text ctx={ctx} name={`scale.points.${i}.value`} label={`Point ${i + 1} value`} type="number" />
                <Text ctx={ctx} name={`scale.points.${i}.angle`} label="angle (°)" type="number" />
                {!ctx.readOnly && (
                  <Button type="button" onClick={() => points.remove(i)} disabled={points.fields.length <= 2} aria-label={`Remove point ${i + 1}`}>
                    Remove
                  </Button>
                )}
              </div>
            ))}
          </div>
          {!ctx.readOnly && (
            <Button type="button" className="mt-2" onClick={() => points.append({ value: "", angle: "" })}>
              Add a point
            </Button>
          )}
        </fieldset>
      ) : (
        <div className="grid gap-3 sm:grid-cols-3">
          <Text ctx={ctx} name="scale.period" label="Value per turn" type="number" hint="1,000 for an altimeter's 100-ft pointer" />
          <Text ctx={ctx} name="scale.angleAtZero" label="Angle at value 0 (°)" type="number" />
          <Choice ctx={ctx} name="scale.turn" label="Turns" options={["clockwise", "counterclockwise"]} />
        </div>
      )}
      <ConditionFields ctx={ctx} name="power" label="Powered while" optional hint="Unpowered, the needle parks and the OFF flag shows." />
      <div className="grid gap-3 sm:grid-cols-2">
        <Text ctx={ctx} name="parkAngle" label="Park angle (°)" type="number" hint="Empty: the scale's first angle" />
        <Check ctx={ctx} name="offFlag" label="Shows an OFF flag when unpowered" />
      </div>
    </>
  );
}

function ReadoutFields({ ctx }: { ctx: Ctx }) {
  return (
    <>
      <Choice ctx={ctx} name="value.channel" label="Shows the channel" options={channelOptions(ctx.channels, false)} />
      <div className="grid gap-3 sm:grid-cols-3">
        <Choice ctx={ctx} name="display" label="Display" options={[["seven-segment", "seven-segment digits"], ["text", "text display"]]} />
        <Text ctx={ctx} name="format.width" label="Characters" type="number" />
        <Choice ctx={ctx} name="format.pad" label="Padding" options={[["space", "spaces"], ["zero", "zeros"]]} />
        <Text ctx={ctx} name="format.decimals" label="Decimals" type="number" hint="default 0" />
        <Choice ctx={ctx} name="format.sign" label="Sign" options={[["negative", "minus when negative"], ["always", "always + or −"], ["never", "never"]]} />
        <div className="grid grid-cols-2 gap-2">
          <Text ctx={ctx} name="format.prefix" label="Before" />
          <Text ctx={ctx} name="format.suffix" label="After" />
        </div>
      </div>
      <ConditionFields ctx={ctx} name="power" label="Powered while" optional />
      <ConditionFields ctx={ctx} name="blankWhen" label="Blank while" optional />
      <ConditionFields ctx={ctx} name="test" label="Display test" optional hint="Every digit lit while this holds (needs a character count)." />
    </>
  );
}

function PositionFields({ ctx, kind }: { ctx: Ctx; kind: "switch" | "lever" }) {
  const spring = useWatch({ control: ctx.control, name: "springReturn.enabled" });
  return (
    <>
      <Text ctx={ctx} name="positions" label="Positions (comma-separated, first to last)" hint="A boolean channel gives the first for false, the second for true; a number gives the position's index." />
      <div className="grid gap-3 sm:grid-cols-2">
        <Choice ctx={ctx} name="position.channel" label="Position from the channel" options={channelOptions(ctx.channels, false)} />
        <Text ctx={ctx} name="position.map" label="Renamed values (optional)" hint="value=position, e.g. UP=up, DOWN=down" />
      </div>
      {kind === "switch" ? (
        <>
          <Check ctx={ctx} name="springReturn.enabled" label="Spring-loaded" hint="Leaves some positions by itself." />
          {spring && (
            <div className="grid gap-3 sm:grid-cols-3">
              <Text ctx={ctx} name="springReturn.from" label="Springs back from" hint="comma-separated positions" />
              <Text ctx={ctx} name="springReturn.to" label="To" />
              <Text ctx={ctx} name="springReturn.holdMs" label="At the latest after (ms)" type="number" />
            </div>
          )}
        </>
      ) : (
        <ConditionFields ctx={ctx} name="lock" label="Locked while" optional />
      )}
    </>
  );
}

function ButtonFields({ ctx }: { ctx: Ctx }) {
  const lit = useWatch({ control: ctx.control, name: "backlight.enabled" });
  return (
    <>
      <ConditionFields ctx={ctx} name="pressed" label="Pressed while" />
      <Check ctx={ctx} name="backlight.enabled" label="Lit from within" />
      {lit && (
        <>
          <ConditionFields ctx={ctx} name="backlight.drive.on" label="Backlight lit while" />
          <NumericFields ctx={ctx} name="backlight.dimmer" label="Backlight dimmer" optional />
        </>
      )}
      <ConditionFields ctx={ctx} name="power" label="Backlight powered while" optional />
    </>
  );
}

function EncoderFields({ ctx }: { ctx: Ctx }) {
  return (
    <>
      <NumericFields ctx={ctx} name="value" label="Turns the channel" />
      <div className="grid gap-3 sm:grid-cols-4">
        <Text ctx={ctx} name="detentsPerTurn" label="Detents per turn" type="number" />
        <Text ctx={ctx} name="valuePerDetent" label="Change per detent" type="number" />
        <Text ctx={ctx} name="wrap" label="Wraps at" type="number" hint="e.g. 360 for a heading" />
        <Text ctx={ctx} name="tolerance.detents" label="Tolerance (detents)" type="number" hint="default 0" />
      </div>
    </>
  );
}

export interface ElementFormProps {
  /** The element being edited, or a new element's starting point. */
  initial: Record<string, unknown>;
  channels: readonly ChannelDefinition[];
  /** Ids of the panel's other elements. */
  takenIds: ReadonlySet<string>;
  /** Keeps fields the form does not show (a motor profile); absent for a new element. */
  original?: Record<string, unknown>;
  readOnly?: boolean;
  busy?: boolean;
  submitLabel: string;
  onSubmit: (el: Element) => void;
  onCancel: () => void;
}

export function ElementForm({ initial, channels, takenIds, original, readOnly = false, busy = false, submitLabel, onSubmit, onCancel }: ElementFormProps) {
  // Problems are kept here rather than read back from react-hook-form's nested errors: one list,
  // by field path, shown beside each field and in full at the foot of the form.
  const [problems, setProblems] = useState<FieldProblem[]>([]);
  const submitted = useRef(false);
  const resolver = useMemo<Resolver<ElementModel, unknown, Element>>(() => {
    const schemaResolver = zodResolver(elementFormSchema(channels, original) as any) as unknown as Resolver<ElementModel, unknown, Element>;
    return async (values, context, options) => {
      const result = await schemaResolver(values, context, options);
      // The same checks with full paths: the shared schema, a unique id, the airframe's channels.
      const found = checkModel(values, channels, takenIds, original).problems;
      const names = options.names as string[] | undefined;
      if (submitted.current || !names) setProblems(found);
      else {
        // Before the first submit, only the fields just left are judged.
        const mine = (p: FieldProblem) => names.some((n) => p.path === n || p.path.startsWith(`${n}.`));
        setProblems((prev) => [...prev.filter((p) => !mine(p)), ...found.filter(mine)]);
      }
      if (Object.keys(result.errors).length === 0 && found.length === 0) return result;
      const errors: Record<string, any> = { ...result.errors };
      for (const p of found) setAt(errors, p.path, p.message);
      return { values: {}, errors } as any;
    };
  }, [channels, takenIds, original]);
  const form = useForm<ElementModel, unknown, Element>({ resolver, defaultValues: toModel(initial), mode: "onSubmit", reValidateMode: "onChange" });
  const errorAt = (path: string) => problems.find((p) => p.path === path || p.path.startsWith(`${path}.`))?.message;
  const ctx: Ctx = { register: form.register, errorAt, control: form.control, channels, readOnly };
  const kind = initial.kind as ElementKind;

  return (
    <form
      noValidate
      onSubmit={(e) => {
        submitted.current = true;
        return form.handleSubmit((el) => onSubmit(el))(e);
      }}
      className="flex flex-col gap-4"
      aria-label={`${KIND_WORDS[kind].one} form`}
    >
      <div className="grid gap-3 sm:grid-cols-[1fr_1fr_auto]">
        <Text ctx={ctx} name="label" label="Label" hint="What you call it; coverage uses it (“FIRE lamp never lit”)." />
        <Text ctx={ctx} name="id" label="Identifier" hint="lowercase letters, digits and dashes; unique in the panel" />
        <Text ctx={ctx} name="lagBudgetMs" label="Lag budget (ms)" type="number" hint={`default ${KIND_WORDS[kind].lag}`} width="w-28" />
      </div>
      {kind === "lamp" && (
        <>
          <LampFields ctx={ctx} />
          <ConditionFields ctx={ctx} name="power" label="Powered while" optional hint="Dark without power, even in a lamp test." />
          <Text ctx={ctx} name="tolerance.level" label="Brightness tolerance (0–255)" type="number" hint="default 24" width="w-28" />
        </>
      )}
      {kind === "pointer" && <PointerFields ctx={ctx} />}
      {kind === "readout" && <ReadoutFields ctx={ctx} />}
      {kind === "breaker" && (
        <>
          <ConditionFields ctx={ctx} name="trip" label="The aircraft trips it when" />
          <ConditionFields ctx={ctx} name="pulled" label="Pulled out by hand while" optional />
        </>
      )}
      {(kind === "switch" || kind === "lever") && <PositionFields ctx={ctx} kind={kind} />}
      {kind === "button" && <ButtonFields ctx={ctx} />}
      {kind === "encoder" && <EncoderFields ctx={ctx} />}
      <Check ctx={ctx} name="placeholder" label="Placeholder" hint="Built but not connected: listed in every report, never judged." />
      <Text ctx={ctx} name="notes" label="Notes" />
      {problems.length > 0 && (
        <div role="alert" className="rounded-md border border-bad/40 bg-bad/5 px-3 py-2 text-sm text-bad">
          <p className="font-semibold">
            <span aria-hidden="true" className="mr-1 font-mono">▲</span>
            {problems.length === 1 ? "One thing to fix:" : `${problems.length} things to fix:`}
          </p>
          <ul className="mt-1 list-disc pl-5">
            {problems.map((p) => (
              <li key={p.path}>
                <span className="font-mono text-xs">{p.path}</span>: {p.message}
              </li>
            ))}
          </ul>
        </div>
      )}
      <div className="flex gap-2">
        {!readOnly && (
          <Button type="submit" tone="primary" disabled={busy}>
            {busy ? "Saving…" : submitLabel}
          </Button>
        )}
        <Button type="button" onClick={onCancel}>
          {readOnly ? "Close" : "Cancel"}
        </Button>
      </div>
    </form>
  );
}
