import type { ConditionInput } from "../../elements/bindings";
import { mirrorPanel } from "../mirror";
import { panel, type Panel, type PanelInput } from "../schema";
import { DEMO_AIRFRAME_ID } from "./airframe";

/**
 * Demo panels for the invented Marlin TX-2. Together they cover every element kind, a dual-pointer
 * gauge, a full-circle pointer, a master-caution latch, a breaker row, a placeholder panel and a
 * mirrored pair. Invented layouts and labels; no real aircraft's panel list.
 */

const bus: ConditionInput = { channel: "elec.master" };
const lampTest: ConditionInput = { channel: "annun.test" };

const warningPanelInput: PanelInput = {
  id: "glareshield-warnings",
  name: "Glareshield warnings",
  airframe: DEMO_AIRFRAME_ID,
  description: "Fire lamps, gear unsafe, cautions and the master caution latch with its lit button.",
  elements: [
    { kind: "lamp", id: "fire-left", label: "FIRE L", drive: { mode: "condition", on: { channel: "eng1.fire_warning" } }, flash: { periodMs: 500 }, power: bus, test: lampTest },
    { kind: "lamp", id: "fire-right", label: "FIRE R", drive: { mode: "condition", on: { channel: "eng2.fire_warning" } }, flash: { periodMs: 500 }, power: bus, test: lampTest },
    { kind: "lamp", id: "gear-unsafe", label: "GEAR", drive: { mode: "condition", on: { channel: "gear.unsafe_lamp" } }, power: bus, test: lampTest },
    { kind: "lamp", id: "low-fuel-left", label: "LOW FUEL L", drive: { mode: "condition", on: { channel: "annun.low_fuel_l" } }, power: bus, test: lampTest },
    { kind: "lamp", id: "low-fuel-right", label: "LOW FUEL R", drive: { mode: "condition", on: { channel: "annun.low_fuel_r" } }, power: bus, test: lampTest },
    { kind: "lamp", id: "gen-fail", label: "GEN", drive: { mode: "condition", on: { channel: "annun.gen_fail" } }, power: bus, test: lampTest },
    {
      kind: "lamp",
      id: "master-caution",
      label: "MASTER CAUTION",
      drive: {
        mode: "latch",
        cautions: [{ channel: "annun.low_fuel_l" }, { channel: "annun.low_fuel_r" }, { channel: "annun.gen_fail" }, { channel: "gear.unsafe_lamp" }],
        acknowledge: { channel: "annun.caution_ack" },
      },
      flash: { periodMs: 800 },
      power: bus,
      test: lampTest,
    },
    {
      kind: "button",
      id: "caution-reset",
      label: "CAUTION RESET",
      pressed: { channel: "annun.caution_ack" },
      backlight: { drive: { mode: "condition", on: { channel: "elec.master" } }, dimmer: { channel: "elec.panel_dimmer_pct", transform: { scale: 0.01 } } },
      power: bus,
    },
    { kind: "switch", id: "lamp-test", label: "LAMP TEST", positions: ["off", "test"], position: { channel: "annun.test" }, springReturn: { from: ["test"], to: "off", holdMs: 5000 } },
  ],
  layout: {
    width: 240,
    height: 60,
    positions: {
      "fire-left": { x: 20, y: 20 },
      "fire-right": { x: 50, y: 20 },
      "gear-unsafe": { x: 80, y: 20 },
      "low-fuel-left": { x: 110, y: 20 },
      "low-fuel-right": { x: 140, y: 20 },
      "gen-fail": { x: 170, y: 20 },
      "master-caution": { x: 210, y: 20 },
      "caution-reset": { x: 210, y: 45 },
      "lamp-test": { x: 20, y: 45 },
    },
  },
  photo: { markers: { "fire-left": { x: 0.08, y: 0.33 }, "master-caution": { x: 0.87, y: 0.33 } } },
  link: { kind: "serial" },
};

const airspeedPoints = [
  { value: 0, angle: 0 },
  { value: 40, angle: 0 },
  { value: 60, angle: 35 },
  { value: 80, angle: 85 },
  { value: 100, angle: 140 },
  { value: 140, angle: 215 },
  { value: 200, angle: 290 },
  { value: 250, angle: 330 },
];

const fuelFlowScale = {
  kind: "sweep" as const,
  points: [
    { value: 0, angle: -135 },
    { value: 400, angle: 135 },
  ],
};

const flightGaugesInput: PanelInput = {
  id: "flight-gauges",
  name: "Flight and engine gauges",
  airframe: DEMO_AIRFRAME_ID,
  description: "Airspeed, a two-pointer altimeter with its setting readout, and a dual-pointer fuel flow gauge.",
  elements: [
    {
      kind: "pointer",
      id: "airspeed",
      label: "airspeed pointer",
      gauge: "airspeed",
      value: { channel: "ias_kt" },
      scale: { kind: "sweep", interpolation: "monotone-cubic", points: airspeedPoints },
      maxSlewDegPerSec: 240,
      motor: {
        fullStepsPerTurn: 1080,
        microstepping: 4,
        sweep: { kind: "limited", minDegrees: 0, maxDegrees: 315 },
        maxStepsPerSecond: 2400,
        accelerationStepsPerSecond2: 12000,
      },
    },
    {
      kind: "pointer",
      id: "altimeter-100ft",
      label: "altimeter 100-ft pointer",
      gauge: "altimeter",
      value: { channel: "alt.baro_ft" },
      scale: { kind: "full-circle", period: 1000 },
      maxSlewDegPerSec: 720,
      power: bus,
      parkAngle: 0,
    },
    {
      kind: "pointer",
      id: "altimeter-1000ft",
      label: "altimeter 1,000-ft pointer",
      gauge: "altimeter",
      value: { channel: "alt.baro_ft" },
      scale: { kind: "full-circle", period: 10000 },
      maxSlewDegPerSec: 72,
      power: bus,
      parkAngle: 0,
    },
    {
      kind: "readout",
      id: "altimeter-setting",
      label: "altimeter setting",
      display: "seven-segment",
      value: { channel: "alt.setting_hpa" },
      format: { width: 4, pad: "space" },
      power: bus,
      test: lampTest,
    },
    { kind: "pointer", id: "fuel-flow-left", label: "fuel flow L pointer", gauge: "fuel-flow", value: { channel: "eng1.fuel_flow_kgh" }, scale: fuelFlowScale, maxSlewDegPerSec: 180, power: bus },
    { kind: "pointer", id: "fuel-flow-right", label: "fuel flow R pointer", gauge: "fuel-flow", value: { channel: "eng2.fuel_flow_kgh" }, scale: fuelFlowScale, maxSlewDegPerSec: 180, power: bus },
    {
      kind: "readout",
      id: "fuel-flow-total",
      label: "fuel flow total",
      display: "seven-segment",
      value: { channel: "eng1.fuel_flow_kgh" },
      format: { width: 3, pad: "zero" },
      power: bus,
      notes: "Shows the left flow until the airframe exposes a total channel.",
    },
  ],
};

const breakers = [
  ["fuel-pump-left", "FUEL PUMP L", { channel: "cb.fuel_pump_l", op: "eq", value: "TRIPPED" }, "cb.pulled.fuel_pump_l"],
  ["fuel-pump-right", "FUEL PUMP R", { channel: "cb.fuel_pump_r", op: "eq", value: "TRIPPED" }, "cb.pulled.fuel_pump_r"],
  ["pitot-heat", "PITOT HEAT", { channel: "cb.pitot_heat" }, "cb.pulled.pitot_heat"],
  ["nav-lights", "NAV LTS", { channel: "cb.nav_lights" }, "cb.pulled.nav_lights"],
] as const;

const breakerRowInput: PanelInput = {
  id: "breaker-row",
  name: "Side console breaker row",
  airframe: DEMO_AIRFRAME_ID,
  elements: breakers.map(([id, label, trip, pulled]) => ({
    kind: "breaker" as const,
    id,
    label,
    trip: { ...trip },
    pulled: { channel: pulled },
  })),
  layout: { width: 160, height: 30, positions: Object.fromEntries(breakers.map(([id], i) => [id, { x: 20 + i * 40, y: 15 }])) },
};

const pedestalInput: PanelInput = {
  id: "pedestal",
  name: "Centre pedestal",
  airframe: DEMO_AIRFRAME_ID,
  elements: [
    { kind: "switch", id: "engine-start", label: "ENG START", positions: ["OFF", "ON", "START"], position: { channel: "eng.start_switch" }, springReturn: { from: ["START"], to: "ON", holdMs: 3000 } },
    { kind: "lever", id: "gear-lever", label: "GEAR lever", positions: ["up", "down"], position: { channel: "gear.handle", map: { UP: "up", DOWN: "down" } }, lock: { channel: "gear.lock_engaged" } },
    { kind: "lever", id: "flap-lever", label: "FLAPS lever", positions: ["UP", "APP", "LAND"], position: { channel: "flaps.handle" } },
    { kind: "encoder", id: "heading-bug", label: "HDG encoder", detentsPerTurn: 24, value: { channel: "hdg.bug_deg" }, valuePerDetent: 1, wrap: 360 },
    {
      kind: "lamp",
      id: "pedestal-flood",
      label: "pedestal flood",
      drive: { mode: "condition", on: { channel: "elec.panel_dimmer_pct", op: "gt", value: 0 } },
      dimmer: { channel: "elec.panel_dimmer_pct", transform: { scale: 0.01, min: 0, max: 1 } },
      power: bus,
    },
    { kind: "readout", id: "transponder-code", label: "XPDR code", display: "seven-segment", value: { channel: "xpdr.code" }, format: { width: 4 }, power: { channel: "elec.avionics_bus" } },
  ],
};

const weatherPlaceholderInput: PanelInput = {
  id: "weather-display",
  name: "Weather display (screen behind a cut-out)",
  airframe: DEMO_AIRFRAME_ID,
  description: "Built and wired to nothing yet: listed so the inventory is complete, never judged.",
  elements: [
    { kind: "switch", id: "wx-power", label: "WX", positions: ["off", "on"], position: { channel: "wx.radar_on" }, placeholder: true },
    {
      kind: "pointer",
      id: "wx-tilt",
      label: "tilt pointer",
      value: { channel: "wx.tilt_deg" },
      scale: { kind: "sweep", points: [{ value: -15, angle: -60 }, { value: 15, angle: 60 }] },
      placeholder: true,
    },
    { kind: "lamp", id: "wx-standby", label: "STBY", drive: { mode: "condition", on: { channel: "wx.radar_on", op: "false" } }, placeholder: true },
  ],
};

const navBezelLeftInput: PanelInput = {
  id: "nav-bezel-left",
  name: "Navigation display bezel, left",
  airframe: DEMO_AIRFRAME_ID,
  elements: [
    { kind: "encoder", id: "range", label: "RANGE encoder", detentsPerTurn: 12, value: { channel: "nav.range_l_nm" }, valuePerDetent: 5 },
    { kind: "switch", id: "mode", label: "MODE selector", positions: ["ARC", "ROSE", "PLAN"], position: { channel: "nav.mode_l" } },
    { kind: "readout", id: "range-readout", label: "range", display: "text", value: { channel: "nav.range_l_nm" }, format: { width: 3 }, power: { channel: "elec.avionics_bus" } },
    { kind: "button", id: "brightness-test", label: "BRT TEST", pressed: { channel: "annun.test" } },
  ],
  layout: { width: 200, height: 160, positions: { range: { x: 20, y: 140 }, mode: { x: 60, y: 140, rotation: 15 }, "range-readout": { x: 20, y: 120 }, "brightness-test": { x: 180, y: 140 } } },
};

export const warningPanel: Panel = panel.parse(warningPanelInput);
export const flightGauges: Panel = panel.parse(flightGaugesInput);
export const breakerRow: Panel = panel.parse(breakerRowInput);
export const pedestal: Panel = panel.parse(pedestalInput);
export const weatherPlaceholder: Panel = panel.parse(weatherPlaceholderInput);
export const navBezelLeft: Panel = panel.parse(navBezelLeftInput);
/** The right bezel: the left one mirrored, reading the right-side channels. */
export const navBezelRight: Panel = mirrorPanel(navBezelLeft, {
  idSuffix: "-right",
  id: "nav-bezel-right",
  name: "Navigation display bezel, right",
  channelMap: { "nav.range_l_nm": "nav.range_r_nm", "nav.mode_l": "nav.mode_r" },
});

export const demoPanels: Panel[] = [warningPanel, flightGauges, breakerRow, pedestal, weatherPlaceholder, navBezelLeft, navBezelRight];
