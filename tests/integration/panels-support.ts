import sharp from "sharp";
import { expect } from "vitest";
import type { Reply } from "../support/test-server";
import { Visitor } from "../support/test-server";
import { cookieOf, makeAirframe, postBytes, waitForImport, type Bench } from "./recordings-support";

/** Shared by the panels integration tests: a catalogue, a definition using it, a recording of it. */

export const PANEL_CHANNELS = [
  { name: "elec.master", kind: "boolean" },
  { name: "eng1.fire_warning", kind: "boolean" },
  { name: "alt.baro_ft", kind: "number", unit: "ft", min: -1000, max: 30000 },
  { name: "ias_kt", kind: "number", unit: "kt", min: 0, max: 300 },
  { name: "gear.handle", kind: "enum", values: ["UP", "DOWN"] },
  { name: "xpdr.code", kind: "text", maxLength: 4 },
];

/** An invented panel using every channel above: a lamp, two pointers, a readout and a lever. */
export function testDefinition(id = "test-panel", name = "Test panel") {
  return {
    id,
    name,
    airframe: "rig",
    elements: [
      { kind: "lamp", id: "fire", label: "FIRE", drive: { mode: "condition", on: { channel: "eng1.fire_warning" } }, power: { channel: "elec.master" } },
      { kind: "pointer", id: "alt-100", label: "altimeter 100-ft pointer", value: { channel: "alt.baro_ft" }, scale: { kind: "full-circle", period: 1000 } },
      {
        kind: "pointer",
        id: "airspeed",
        label: "airspeed pointer",
        value: { channel: "ias_kt" },
        scale: { kind: "sweep", points: [{ value: 0, angle: 0 }, { value: 200, angle: 300 }] },
      },
      { kind: "readout", id: "xpdr", label: "XPDR", value: { channel: "xpdr.code" }, format: { width: 4 } },
      { kind: "lever", id: "gear", label: "GEAR", positions: ["up", "down"], position: { channel: "gear.handle", map: { UP: "up", DOWN: "down" } } },
    ],
    layout: { width: 200, height: 100, positions: { fire: { x: 20, y: 20 }, "alt-100": { x: 80, y: 50, rotation: 10 } } },
  };
}

/** A recording of the test airframe: the FIRE lamp's warning never comes on. */
export const PANEL_RECORDING = `{"format":"panelproof-recording","version":1,"airframe":"Rig","channels":${JSON.stringify(PANEL_CHANNELS)}}
{"t":0,"v":{"elec.master":true,"eng1.fire_warning":false,"alt.baro_ft":320,"ias_kt":0,"gear.handle":"DOWN","xpdr.code":"1200"}}
{"t":1000,"v":{"alt.baro_ft":445,"ias_kt":60}}
{"t":2000,"v":{"alt.baro_ft":600,"ias_kt":100,"gear.handle":"UP"}}
{"t":4000,"v":{"ias_kt":90}}
`;

export async function makePanelAirframe(bench: Bench, name: string): Promise<string> {
  return makeAirframe(bench, name, PANEL_CHANNELS);
}

export async function uploadRecording(bench: Bench, airframeId: string, text = PANEL_RECORDING, name = "Panel flight"): Promise<string> {
  const owner = bench.visitors.owner;
  const up = await postBytes(owner, `/api/workshops/${bench.workshopId}/recordings/uploads?name=${encodeURIComponent(name)}&airframeId=${airframeId}&format=ppr`, text);
  expect(up.status).toBe(202);
  const { job } = await waitForImport(owner, bench.workshopId, up.body.id);
  expect(job.state).toBe("done");
  return job.recordingId as string;
}

/** PUTs raw bytes with a chosen Content-Type, like the browser's photo upload. */
export async function putBytes(visitor: Visitor, urlPath: string, bytes: Uint8Array, contentType = "application/octet-stream"): Promise<Reply> {
  const headers: Record<string, string> = { origin: visitor.baseUrl, "content-type": contentType };
  const cookie = cookieOf(visitor);
  if (cookie) headers.cookie = cookie;
  const response = await fetch(visitor.baseUrl + urlPath, { method: "PUT", headers, body: Buffer.from(bytes) });
  const text = await response.text();
  let body: unknown = text;
  try {
    body = text ? JSON.parse(text) : null;
  } catch {
    /* not JSON */
  }
  return { status: response.status, body, headers: response.headers };
}

export async function getBytes(visitor: Visitor, urlPath: string): Promise<{ status: number; bytes: Buffer; headers: Headers }> {
  const headers: Record<string, string> = { origin: visitor.baseUrl };
  const cookie = cookieOf(visitor);
  if (cookie) headers.cookie = cookie;
  const response = await fetch(visitor.baseUrl + urlPath, { headers });
  return { status: response.status, bytes: Buffer.from(await response.arrayBuffer()), headers: response.headers };
}

/** A plain test image made by sharp itself. */
export function testImage(width: number, height: number, format: "jpeg" | "png" | "webp" = "jpeg"): Promise<Buffer> {
  const img = sharp({ create: { width, height, channels: 3, background: { r: 40, g: 44, b: 48 } } });
  return (format === "jpeg" ? img.jpeg() : format === "png" ? img.png() : img.webp()).toBuffer();
}

/**
 * An invented flight on the test rig (the channels above): the FIRE warning comes on at 2 s and
 * goes off at 4 s, the transponder code changes at 3 s, the gear goes up at 2 s; airspeed never
 * above 100 kt; pointers step (frames more than 250 ms apart). Eight seconds long.
 */
export const RIG_FLIGHT = `{"format":"panelproof-recording","version":1,"airframe":"Rig","channels":${JSON.stringify(PANEL_CHANNELS)}}
{"t":0,"v":{"elec.master":true,"eng1.fire_warning":false,"alt.baro_ft":320,"ias_kt":0,"gear.handle":"DOWN","xpdr.code":"1200"}}
{"t":1000,"v":{"alt.baro_ft":445,"ias_kt":60}}
{"t":2000,"v":{"eng1.fire_warning":true,"alt.baro_ft":600,"ias_kt":100,"gear.handle":"UP"}}
{"t":3000,"v":{"xpdr.code":"7700"}}
{"t":4000,"v":{"eng1.fire_warning":false,"ias_kt":90}}
{"t":6000,"v":{"alt.baro_ft":700}}
{"t":8000,"v":{"ias_kt":80}}
`;
