import type { ChannelDefinition } from "../../recording/channels";

/**
 * The invented demo airframe, the Marlin TX-2 twin (the same invented airframe as the demo
 * recordings in recordings/). Its channels are those the demo recordings use plus the ones the demo
 * panels need; nothing here is a real aircraft's list.
 */
export const DEMO_AIRFRAME_ID = "marlin-tx2";

export const demoChannels: ChannelDefinition[] = [
  { name: "elec.master", kind: "boolean", description: "Battery master switch" },
  { name: "elec.avionics_bus", kind: "boolean", description: "Avionics bus powered" },
  { name: "elec.panel_dimmer_pct", kind: "number", unit: "%", min: 0, max: 100, description: "Panel lighting dimmer" },
  { name: "annun.test", kind: "boolean", description: "Annunciator lamp test held" },
  { name: "annun.master_caution", kind: "boolean", description: "Master caution (as the aircraft shows it)" },
  { name: "annun.caution_ack", kind: "boolean", description: "Master caution button pressed" },
  { name: "annun.low_fuel_l", kind: "boolean", description: "Left low fuel caution" },
  { name: "annun.low_fuel_r", kind: "boolean", description: "Right low fuel caution" },
  { name: "annun.gen_fail", kind: "boolean", description: "Generator failure caution" },
  { name: "eng1.fire_warning", kind: "boolean", description: "Left engine fire warning" },
  { name: "eng2.fire_warning", kind: "boolean", description: "Right engine fire warning" },
  { name: "eng1.rpm_pct", kind: "number", unit: "%", min: 0, max: 110, description: "Left engine speed" },
  { name: "eng2.rpm_pct", kind: "number", unit: "%", min: 0, max: 110, description: "Right engine speed" },
  { name: "eng1.fuel_flow_kgh", kind: "number", unit: "kg/h", min: 0, max: 400, description: "Left fuel flow" },
  { name: "eng2.fuel_flow_kgh", kind: "number", unit: "kg/h", min: 0, max: 400, description: "Right fuel flow" },
  { name: "eng.start_switch", kind: "enum", values: ["OFF", "ON", "START"], description: "Engine start switch" },
  { name: "ias_kt", kind: "number", unit: "kt", min: 0, max: 300, description: "Indicated airspeed" },
  { name: "alt.baro_ft", kind: "number", unit: "ft", min: -1000, max: 30000, description: "Barometric altitude" },
  { name: "alt.setting_hpa", kind: "number", unit: "hPa", min: 940, max: 1050, description: "Altimeter setting" },
  { name: "hdg.bug_deg", kind: "number", unit: "deg", min: 0, max: 360, description: "Heading bug" },
  { name: "gear.handle", kind: "enum", values: ["UP", "DOWN"], description: "Gear lever" },
  { name: "gear.lock_engaged", kind: "boolean", description: "Gear lever ground lock engaged" },
  { name: "gear.unsafe_lamp", kind: "boolean", description: "Gear unsafe lamp" },
  { name: "flaps.handle", kind: "enum", values: ["UP", "APP", "LAND"], description: "Flap lever" },
  { name: "cb.fuel_pump_l", kind: "enum", values: ["IN", "TRIPPED"], description: "Left fuel pump circuit breaker" },
  { name: "cb.fuel_pump_r", kind: "enum", values: ["IN", "TRIPPED"], description: "Right fuel pump circuit breaker" },
  { name: "cb.pitot_heat", kind: "boolean", description: "Pitot heat breaker tripped" },
  { name: "cb.nav_lights", kind: "boolean", description: "Navigation lights breaker tripped" },
  { name: "cb.pulled.fuel_pump_l", kind: "boolean", description: "Left fuel pump breaker pulled by hand" },
  { name: "cb.pulled.fuel_pump_r", kind: "boolean", description: "Right fuel pump breaker pulled by hand" },
  { name: "cb.pulled.pitot_heat", kind: "boolean", description: "Pitot heat breaker pulled by hand" },
  { name: "cb.pulled.nav_lights", kind: "boolean", description: "Navigation lights breaker pulled by hand" },
  { name: "xpdr.code", kind: "text", maxLength: 4, description: "Transponder code readout" },
  { name: "nav.range_l_nm", kind: "number", unit: "NM", min: 5, max: 160, description: "Left display range" },
  { name: "nav.range_r_nm", kind: "number", unit: "NM", min: 5, max: 160, description: "Right display range" },
  { name: "nav.mode_l", kind: "enum", values: ["ARC", "ROSE", "PLAN"], description: "Left display mode" },
  { name: "nav.mode_r", kind: "enum", values: ["ARC", "ROSE", "PLAN"], description: "Right display mode" },
  { name: "wx.radar_on", kind: "boolean", description: "Weather display powered" },
  { name: "wx.tilt_deg", kind: "number", unit: "deg", min: -15, max: 15, description: "Weather antenna tilt" },
  // Read by the firmware example's panel (firmware/examples/bench-panel/bench-panel.panel.json).
  { name: "annun.master_caution_lamp", kind: "enum", values: ["OFF", "STEADY", "FLASHING"], description: "Master caution lamp as commanded" },
  { name: "hyd.pressure_psi", kind: "number", unit: "psi", min: 0, max: 3000, description: "Hydraulic system pressure" },
  { name: "fuel.qty_lb", kind: "number", unit: "lb", min: 0, max: 5000, description: "Total fuel quantity" },
  { name: "lights.landing", kind: "enum", values: ["OFF", "TAXI", "LAND"], description: "Landing lights switch" },
];
