import { execFileSync } from "node:child_process";
import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { channelList } from "../../../shared/recording/channels";
import { ELEMENT_KINDS } from "../../../shared/elements/kinds";
import {
  checkPanelChannels,
  deviceHeader,
  exportPanelJson,
  importPanelJson,
  mirrorPanel,
  mirroredId,
  panelChannels,
  panel,
  parsePanel,
} from "../../../shared/panel";
import { demoChannels, demoPanels, flightGauges, navBezelLeft, navBezelRight, warningPanel, weatherPlaceholder } from "../../../shared/panel/demo";

describe("panel schema", () => {
  it("names every wrong field with its path", () => {
    const result = parsePanel({
      id: "Bad Id",
      name: "x",
      airframe: "marlin-tx2",
      elements: [
        { kind: "lamp", id: "fire", label: "FIRE", drive: { mode: "condition", on: { channel: "eng.fire", op: "gt" } } },
        { kind: "lamp", id: "fire", label: "FIRE 2", drive: { mode: "condition", on: { channel: "eng.fire" } } },
      ],
      layout: { width: 100, height: 50, positions: { ghost: { x: 1, y: 2 } } },
    });
    expect(result.ok).toBe(false);
    if (result.ok) return;
    expect(result.problems.map((p) => p.path)).toEqual(["id", "elements.0.drive.on.value", "elements.1.id", "layout.positions.ghost"]);
    expect(result.problems[2].message).toBe('duplicate element id "fire" (first at elements.0)');
  });

  it("round-trips through JSON export and import", () => {
    for (const p of demoPanels) {
      const text = exportPanelJson(p);
      const back = importPanelJson(text);
      expect(back.ok).toBe(true);
      if (back.ok) expect(back.panel).toEqual(p);
    }
    expect(importPanelJson("{ not json")).toMatchObject({ ok: false, problems: [{ path: "" }] });
  });

  it("numbers channels in the order elements first bind them", () => {
    expect(panelChannels(warningPanel).slice(0, 4)).toEqual(["eng1.fire_warning", "annun.test", "elec.master", "eng2.fire_warning"]);
  });

  it("parses the complete example in docs/panel-format.md", () => {
    const doc = readFileSync(path.resolve(__dirname, "../../../docs/panel-format.md"), "utf8");
    const example = doc.match(/<!-- example: complete -->\s*```json\n([\s\S]*?)```/);
    expect(example).not.toBeNull();
    const result = importPanelJson(example![1]);
    if (!result.ok) throw new Error(JSON.stringify(result.problems));
    const kinds = new Set(result.panel.elements.map((e) => e.kind));
    expect([...kinds].sort()).toEqual([...ELEMENT_KINDS].sort());
  });
});

describe("binding check against the airframe's catalogue", () => {
  it("finds unknown channels, thresholds on non-numbers and values an enum never takes", () => {
    const channels = channelList.parse([
      { name: "gear.handle", kind: "enum", values: ["UP", "DOWN"] },
      { name: "eng.fire", kind: "boolean" },
      { name: "ias_kt", kind: "number" },
    ]);
    const parsed = parsePanel({
      id: "p",
      name: "p",
      airframe: "a",
      elements: [
        { kind: "lamp", id: "a", label: "A", drive: { mode: "condition", on: { channel: "gear.handle", op: "eq", value: "DN" } } },
        { kind: "lamp", id: "b", label: "B", drive: { mode: "condition", on: { channel: "eng.fire", op: "gt", value: 1 } } },
        { kind: "pointer", id: "c", label: "C", value: { channel: "eng.fire" }, scale: { kind: "full-circle", period: 10 } },
        { kind: "breaker", id: "d", label: "D", trip: { channel: "cb.missing" } },
      ],
    });
    if (!parsed.ok) throw new Error("fixture must parse");
    expect(checkPanelChannels(parsed.panel, channels).map((p) => p.path)).toEqual([
      "elements.0.drive.on.value",
      "elements.1.drive.on.op",
      "elements.1.drive.on.value",
      "elements.2.value.channel",
      "elements.3.trip.channel",
    ]);
  });
});

describe("demo panels", () => {
  it("use only the demo airframe's channels, correctly", () => {
    const catalogue = channelList.parse(demoChannels);
    for (const p of demoPanels) expect(checkPanelChannels(p, catalogue), p.id).toEqual([]);
  });

  it("cover every kind, a dual-pointer gauge, a full-circle pointer, a latch, a breaker row, a placeholder panel and a mirrored pair", () => {
    const all = demoPanels.flatMap((p) => p.elements);
    expect(new Set(all.map((e) => e.kind))).toEqual(new Set(ELEMENT_KINDS));
    expect(demoPanels.length).toBeGreaterThanOrEqual(5);
    const fuelFlow = flightGauges.elements.filter((e) => e.kind === "pointer" && e.gauge === "fuel-flow");
    expect(fuelFlow).toHaveLength(2);
    expect(flightGauges.elements.some((e) => e.kind === "pointer" && e.scale.kind === "full-circle" && e.scale.period === 1000)).toBe(true);
    expect(warningPanel.elements.some((e) => e.kind === "lamp" && e.drive.mode === "latch")).toBe(true);
    expect(demoPanels.some((p) => p.elements.length >= 4 && p.elements.every((e) => e.kind === "breaker"))).toBe(true);
    expect(weatherPlaceholder.elements.every((e) => e.placeholder)).toBe(true);
    expect(navBezelRight.elements.map((e) => e.id)).toEqual(navBezelLeft.elements.map((e) => `${e.id}-right`));
  });
});

describe("mirrorPanel", () => {
  it("mirrors layout and markers, suffixes ids and keeps bindings unless mapped or overridden", () => {
    const right = mirrorPanel(warningPanel, {
      idSuffix: "-r",
      channelMap: { "eng1.fire_warning": "eng2.fire_warning" },
      overrides: { "gear-unsafe": { label: "GEAR (R)" } },
    });
    expect(right.id).toBe("glareshield-warnings-r");
    expect(right.name).toBe("Glareshield warnings (mirror)");
    expect(right.layout!.positions["fire-left-r"]).toEqual({ x: 240 - 20, y: 20, rotation: 0 });
    expect(right.photo!.markers["fire-left-r"].x).toBeCloseTo(1 - 0.08, 12);
    const fire = right.elements[0];
    expect(fire.kind === "lamp" && fire.drive.mode === "condition" && fire.drive.on.channel).toBe("eng2.fire_warning");
    expect(right.elements[2].label).toBe("GEAR (R)");
    expect(right.elements[3]).toEqual({ ...warningPanel.elements[3], id: "low-fuel-left-r" });
    expect(right.link).toEqual({ kind: "serial" });
  });

  it("swaps a side already in an id instead of adding a second one (x-left becomes x-right)", () => {
    expect(mirroredId("x-left", "-right")).toBe("x-right");
    expect(mirroredId("x-right", "-left")).toBe("x-left");
    expect(mirroredId("x-right", "-right")).toBe("x-left"); // the mirror of the right one is on the left
    expect(mirroredId("range-knob", "-right")).toBe("range-knob-right");
    expect(mirroredId("x-left", "-b")).toBe("x-left-b"); // not a side: appended as before
    expect(mirroredId("-left", "-right")).toBe("-left-right"); // nothing before the side to keep

    // The glareshield has fire-left and fire-right: mirrored to the right they swap names, so ids
    // stay unique, and layout, markers and bindings follow each element.
    const right = mirrorPanel(warningPanel, { idSuffix: "-right" });
    const ids = right.elements.map((e) => e.id);
    expect(ids).toContain("fire-right");
    expect(ids).toContain("fire-left");
    expect(ids.some((id) => /-(left|right)-(left|right)$/.test(id))).toBe(false);
    expect(new Set(ids).size).toBe(ids.length);
    const mirroredFireLeft = right.elements[warningPanel.elements.findIndex((e) => e.id === "fire-left")];
    expect(mirroredFireLeft.id).toBe("fire-right");
    expect(mirroredFireLeft.kind === "lamp" && mirroredFireLeft.drive.mode === "condition" && mirroredFireLeft.drive.on.channel).toBe("eng1.fire_warning");
    expect(right.layout!.positions["fire-right"]).toEqual({ x: 240 - 20, y: 20, rotation: 0 });
    expect(right.photo!.markers["fire-right"].x).toBeCloseTo(1 - 0.08, 12);
    expect(right.id).toBe("glareshield-warnings-right");
    expect(mirrorPanel(navBezelLeft, { idSuffix: "-right" }).id).toBe("nav-bezel-right");
  });

  it("refuses a mirror whose renamed ids would collide, naming the element", () => {
    const both = panel.parse({ ...warningPanel, elements: [warningPanel.elements[0], { ...warningPanel.elements[0], id: "fire" }], layout: undefined, photo: undefined });
    // fire-left -> fire-right, fire -> fire-right: two elements with one id.
    expect(() => mirrorPanel(both, { idSuffix: "-right" })).toThrow(/duplicate element id \\"fire-right\\"/);
  });

  it("mirrors rotations, and mirroring twice gives the layout back", () => {
    const back = mirrorPanel(navBezelRight, { idSuffix: "-x" });
    expect(navBezelRight.layout!.positions["mode-right"].rotation).toBe(-15);
    expect(back.layout!.positions["mode-right-x"]).toEqual(navBezelLeft.layout!.positions.mode);
  });
});

describe("deviceHeader", () => {
  it("lists element and channel indices, and compiles as C", () => {
    const dir = mkdtempSync(path.join(tmpdir(), "panelproof-header-"));
    for (const p of demoPanels) {
      const header = deviceHeader(p);
      const file = path.join(dir, `${p.id}.h`);
      writeFileSync(file, header);
      // The header must stand alone, and its numbers must be usable in constant expressions.
      const probe = path.join(dir, `${p.id}.c`);
      writeFileSync(probe, `#include "${file}"\n#include "${file}"\nstatic const unsigned counts[] = { PP_ELEMENT_COUNT, PP_CHANNEL_COUNT };\nint main(void) { return (int)counts[0] - (int)PP_ELEMENT_COUNT; }\n`);
      execFileSync("gcc", ["-fsyntax-only", "-Wall", "-Werror", "-x", "c", file]);
      execFileSync("gcc", ["-fsyntax-only", "-Wall", "-Werror", "-x", "c", probe]);
    }
    const header = deviceHeader(warningPanel);
    expect(header).toContain("#define PP_EL_FIRE_LEFT 0u");
    expect(header).toContain("#define PP_EL_MASTER_CAUTION 6u");
    expect(header).toContain("#define PP_EL_LAMP_TEST_POS_TEST 1u");
    expect(header).toContain("#define PP_CH_ENG1_FIRE_WARNING 0u /* eng1.fire_warning */");
    expect(header).toContain(`#define PP_ELEMENT_COUNT ${warningPanel.elements.length}u`);
  });

  it("keeps names unique and comments closed whatever the labels say", () => {
    const parsed = parsePanel({
      id: "odd",
      name: "Odd */ name",
      airframe: "a",
      elements: [
        { kind: "lamp", id: "a-b", label: "ends */ here", drive: { mode: "condition", on: { channel: "a.b_c" } } },
        { kind: "lamp", id: "a-b-2", label: "x", drive: { mode: "condition", on: { channel: "a_b.c" } } },
      ],
    });
    if (!parsed.ok) throw new Error("fixture must parse");
    const header = deviceHeader(parsed.panel);
    expect(header).toContain("PP_CH_A_B_C 0u");
    expect(header).toContain("PP_CH_A_B_C_2 1u");
    const dir = mkdtempSync(path.join(tmpdir(), "panelproof-header-"));
    const file = path.join(dir, "odd.h");
    writeFileSync(file, header);
    execFileSync("gcc", ["-fsyntax-only", "-Wall", "-Werror", "-x", "c", file]);
  });
});
