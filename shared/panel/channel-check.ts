import type { Condition } from "../elements/bindings";
import type { Element } from "../elements/kinds";
import type { ChannelDefinition } from "../recording/channels";
import type { Panel, PanelProblem } from "./schema";

/**
 * Checks a panel's bindings against its airframe's channel catalogue: every channel must exist,
 * thresholds need number channels, compared values must be the channel's kind (and one of an enum's
 * values), numeric sources need number channels. Paths are the definition's field paths.
 */
export function checkPanelChannels(p: Pick<Panel, "elements">, channels: readonly ChannelDefinition[]): PanelProblem[] {
  const byName = new Map(channels.map((c) => [c.name, c]));
  const problems: PanelProblem[] = [];
  const known = (name: string, path: string): ChannelDefinition | undefined => {
    const c = byName.get(name);
    if (!c) problems.push({ path: `${path}.channel`, message: `no channel "${name}" in the airframe's catalogue` });
    return c;
  };
  const checkCondition = (cond: Condition | undefined, path: string) => {
    if (!cond) return;
    const c = known(cond.channel, path);
    if (!c) return;
    const compared = cond.op === "in" ? (cond.values ?? []) : cond.value !== undefined ? [cond.value] : [];
    if ((cond.op === "gt" || cond.op === "ge" || cond.op === "lt" || cond.op === "le") && c.kind !== "number") {
      problems.push({ path: `${path}.op`, message: `"${cond.op}" compares numbers, but ${c.name} is a ${c.kind} channel` });
    }
    compared.forEach((v, i) => {
      const where = cond.op === "in" ? `${path}.values.${i}` : `${path}.value`;
      const ok =
        c.kind === "number" ? typeof v === "number" : c.kind === "boolean" ? typeof v === "boolean" : c.kind === "enum" ? typeof v === "string" && c.values.includes(v) : typeof v === "string";
      if (!ok) {
        const expected = c.kind === "enum" ? `one of ${c.values.join(", ")}` : `a ${c.kind}`;
        problems.push({ path: where, message: `${JSON.stringify(v)} can never match ${c.name}, which holds ${expected}` });
      }
    });
  };
  const checkNumeric = (source: { channel: string } | undefined, path: string) => {
    if (!source) return;
    const c = known(source.channel, path);
    if (c && c.kind !== "number") problems.push({ path: `${path}.channel`, message: `${c.name} is a ${c.kind} channel; this binding needs a number` });
  };
  const checkLamp = (l: Pick<Extract<Element, { kind: "lamp" }>, "drive" | "flash" | "dimmer" | "test">, path: string) => {
    if (l.drive.mode === "condition") checkCondition(l.drive.on, `${path}.drive.on`);
    else {
      l.drive.cautions.forEach((c, i) => checkCondition(c, `${path}.drive.cautions.${i}`));
      checkCondition(l.drive.acknowledge, `${path}.drive.acknowledge`);
    }
    checkCondition(l.flash?.when, `${path}.flash.when`);
    checkNumeric(l.dimmer, `${path}.dimmer`);
    checkCondition(l.test, `${path}.test`);
  };
  p.elements.forEach((el, i) => {
    const at = `elements.${i}`;
    switch (el.kind) {
      case "lamp":
        checkLamp(el, at);
        checkCondition(el.power, `${at}.power`);
        break;
      case "pointer":
        checkNumeric(el.value, `${at}.value`);
        checkCondition(el.power, `${at}.power`);
        break;
      case "readout":
        known(el.value.channel, `${at}.value`);
        checkCondition(el.power, `${at}.power`);
        checkCondition(el.blankWhen, `${at}.blankWhen`);
        checkCondition(el.test, `${at}.test`);
        break;
      case "breaker":
        checkCondition(el.trip, `${at}.trip`);
        checkCondition(el.pulled, `${at}.pulled`);
        break;
      case "switch":
      case "lever":
        known(el.position.channel, `${at}.position`);
        if (el.kind === "lever") checkCondition(el.lock, `${at}.lock`);
        break;
      case "button":
        checkCondition(el.pressed, `${at}.pressed`);
        if (el.backlight) checkLamp(el.backlight, `${at}.backlight`);
        checkCondition(el.power, `${at}.power`);
        break;
      case "encoder":
        checkNumeric(el.value, `${at}.value`);
        break;
    }
  });
  return problems;
}
