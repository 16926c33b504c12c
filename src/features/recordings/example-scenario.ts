/**
 * The scenario the editor starts from: an invented short circuit for the invented Marlin TX-2
 * twin that cycles the gear and flaps, flashes a caution and tests the lamps. Every step kind
 * appears once so a builder can copy from it (docs/scenario-format.md has the full rules).
 */
export const EXAMPLE_SCENARIO = `{
  "format": "panelproof-scenario",
  "version": 1,
  "name": "Gear and flap cycle",
  "description": "Invented: lamp test, gear up and down with its unsafe lamp, flaps in steps, a flashing caution.",
  "airframe": "Marlin TX-2 (invented twin)",
  "sampleRateHz": 10,
  "decimals": 1,
  "durationMs": 40000,
  "channels": [
    { "name": "alt.baro_ft", "kind": "number", "unit": "ft", "min": -1000, "max": 30000 },
    { "name": "ias_kt", "kind": "number", "unit": "kt", "min": 0, "max": 300 },
    { "name": "flaps.position_deg", "kind": "number", "unit": "deg", "min": 0, "max": 35 },
    { "name": "gear.handle", "kind": "enum", "values": ["UP", "DOWN"] },
    { "name": "gear.position", "kind": "enum", "values": ["UP", "TRANSIT", "DOWN"] },
    { "name": "gear.unsafe_lamp", "kind": "boolean" },
    { "name": "annun.master_caution", "kind": "boolean" },
    { "name": "annun.test", "kind": "boolean" }
  ],
  "initial": {
    "alt.baro_ft": 400,
    "ias_kt": 95,
    "flaps.position_deg": 10,
    "gear.handle": "DOWN",
    "gear.position": "DOWN",
    "gear.unsafe_lamp": false,
    "annun.master_caution": false,
    "annun.test": false
  },
  "tracks": [
    { "channel": "annun.test", "steps": [{ "at": 1000, "pulse": { "value": true, "durationMs": 2000 } }] },
    {
      "channel": "alt.baro_ft",
      "steps": [
        { "at": 4000, "ramp": { "to": 1500, "durationMs": 14000 } },
        { "noise": { "amplitude": 15, "seed": "bumps", "durationMs": 8000 } },
        { "ramp": { "to": 600, "durationMs": 12000 } }
      ]
    },
    {
      "channel": "ias_kt",
      "steps": [
        { "at": 4000, "ramp": { "to": 120, "durationMs": 8000 } },
        { "oscillate": { "wave": "sine", "periodMs": 6000, "amplitude": 3, "durationMs": 18000 } },
        { "ramp": { "to": 90, "durationMs": 10000 } }
      ]
    },
    {
      "channel": "flaps.position_deg",
      "steps": [
        { "at": 9000, "ramp": { "to": 0, "durationMs": 4000 } },
        { "at": 27000, "ramp": { "to": 20, "durationMs": 5000 } },
        { "hold": 2000 },
        { "ramp": { "to": 35, "durationMs": 3000 } }
      ]
    },
    { "channel": "gear.handle", "steps": [{ "at": 6000, "set": "UP" }, { "at": 26000, "set": "DOWN" }] },
    {
      "channel": "gear.position",
      "steps": [
        { "at": 6000, "set": "TRANSIT" }, { "hold": 5000 }, { "set": "UP" },
        { "at": 26000, "set": "TRANSIT" }, { "hold": 6000 }, { "set": "DOWN" }
      ]
    },
    {
      "channel": "gear.unsafe_lamp",
      "steps": [
        { "at": 6000, "pulse": { "value": true, "durationMs": 5000 } },
        { "at": 26000, "pulse": { "value": true, "durationMs": 6000 } }
      ]
    },
    {
      "channel": "annun.master_caution",
      "steps": [{ "at": 19000, "repeat": { "times": 4, "steps": [{ "pulse": { "value": true, "durationMs": 500 } }, { "hold": 500 }] } }]
    }
  ]
}
`;
