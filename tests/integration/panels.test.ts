import { existsSync, readdirSync } from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { PHOTO_MAX_BYTES } from "../../shared/api/panels";
import { expectedAt } from "../../shared/expect";
import { importPanelJson } from "../../shared/panel";
import { panelForDeviceToken } from "../../server/routes/panels";
import { getText, makeAirframe, startBench, type Bench } from "./recordings-support";
import { getBytes, makePanelAirframe, putBytes, testDefinition, testImage, uploadRecording } from "./panels-support";

/** Panels API (issue 4): every route with good and bad input, against the real database and storage. */

let bench: Bench;
let base: string;
let airframeId: string;
let panelId: string;

beforeAll(async () => {
  bench = await startBench();
  base = `/api/workshops/${bench.workshopId}`;
  airframeId = await makePanelAirframe(bench, "Panel rig");
  const made = await bench.visitors.owner.post(`${base}/panels`, { airframeId, definition: testDefinition() });
  expect(made.status).toBe(201);
  panelId = made.body.id;
});
afterAll(async () => {
  await bench?.close();
});

const owner = () => bench.visitors.owner;
const builder = () => bench.visitors.builder;

describe("create, list, read", () => {
  it("creates a panel and summarises it", async () => {
    const detail = (await owner().get(`${base}/panels/${panelId}`)).body;
    expect(detail).toMatchObject({
      slug: "test-panel",
      name: "Test panel",
      airframeId,
      airframeName: "Panel rig",
      elementCount: 5,
      placeholderCount: 0,
      kinds: { lamp: 1, pointer: 2, readout: 1, lever: 1, breaker: 0, switch: 0, button: 0, encoder: 0 },
      hasPhoto: false,
      mirrorOf: null,
      createdBy: "Rec Owner",
    });
    // Stored with its defaults filled in (shared/panel's schema ran on the write).
    expect(detail.definition.elements[0].lagBudgetMs).toBe(150);
    expect(detail.definition.format).toBe("panelproof.panel");
    const list = (await owner().get(`${base}/panels`)).body as { id: string }[];
    expect(list.map((p) => p.id)).toContain(panelId);
    const filtered = (await owner().get(`${base}/panels?airframeId=${airframeId}`)).body as { airframeId: string }[];
    expect(filtered.every((p) => p.airframeId === airframeId)).toBe(true);
  });

  it("refuses an invalid definition with every wrong field's path", async () => {
    const definition = testDefinition("bad-panel");
    (definition.elements[0] as Record<string, unknown>).id = "Fire Lamp";
    (definition.elements[0] as { drive: unknown }).drive = { mode: "condition", on: { channel: "ias_kt", op: "gt" } };
    const reply = await builder().post(`${base}/panels`, { airframeId, definition });
    expect(reply.status).toBe(422);
    expect(reply.body.error.code).toBe("validation_failed");
    const paths = reply.body.error.issues.map((i: { path: string }) => i.path);
    expect(paths).toContain("body.definition.elements.0.id");
    expect(paths).toContain("body.definition.elements.0.drive.on.value");
    // A layout position naming no element.
    const stray = { ...testDefinition("stray-panel"), layout: { width: 10, height: 10, positions: { nowhere: { x: 1, y: 1 } } } };
    const strayReply = await builder().post(`${base}/panels`, { airframeId, definition: stray });
    expect(strayReply.status).toBe(422);
    expect(strayReply.body.error.issues[0].path).toBe("body.definition.layout.positions.nowhere");
  });

  it("refuses a binding to a channel the airframe does not have, naming the field", async () => {
    const definition = testDefinition("unknown-channel");
    (definition.elements[0] as { drive: unknown }).drive = { mode: "condition", on: { channel: "eng9.fire_warning" } };
    const reply = await builder().post(`${base}/panels`, { airframeId, definition });
    expect(reply.status).toBe(422);
    expect(reply.body.error.issues).toEqual([
      { path: "body.definition.elements.0.drive.on.channel", message: 'no channel "eng9.fire_warning" in the airframe\'s catalogue' },
    ]);
    // A value an enum channel can never hold.
    const wrongEnum = testDefinition("wrong-enum");
    wrongEnum.elements.push({ kind: "lamp", id: "gear-down", label: "GEAR DN", drive: { mode: "condition", on: { channel: "gear.handle", op: "eq", value: "DN" } } } as never);
    const enumReply = await builder().post(`${base}/panels`, { airframeId, definition: wrongEnum });
    expect(enumReply.status).toBe(422);
    expect(enumReply.body.error.issues[0].path).toBe("body.definition.elements.5.drive.on.value");
  });

  it("refuses a second panel with the same identifier, an unknown airframe and a malformed body", async () => {
    const again = await builder().post(`${base}/panels`, { airframeId, definition: testDefinition() });
    expect(again.status).toBe(409);
    expect(again.body.error.issues[0].path).toBe("body.definition.id");
    expect((await builder().post(`${base}/panels`, { airframeId: "no-such-airframe", definition: testDefinition("x-panel") })).status).toBe(404);
    const extra = await builder().post(`${base}/panels`, { airframeId, definition: testDefinition("y-panel"), colour: "red" });
    expect(extra.status).toBe(422);
    expect((await builder().post(`${base}/panels`, { definition: testDefinition("z-panel") })).body.error.issues[0].path).toBe("body.airframeId");
    const notJson = await builder().request("POST", `${base}/panels`, "{not json");
    expect(notJson.status).toBe(400);
  });
});

describe("replace, rename, duplicate, mirror, delete", () => {
  it("replaces the definition whole and refuses a bad one", async () => {
    const definition = testDefinition("test-panel", "Test panel");
    definition.elements.push({ kind: "breaker", id: "pitot", label: "PITOT", trip: { channel: "elec.master", op: "false" } } as never);
    const reply = await builder().request("PUT", `${base}/panels/${panelId}`, { definition });
    expect(reply.status).toBe(200);
    expect(reply.body.kinds.breaker).toBe(1);
    const bad = await builder().request("PUT", `${base}/panels/${panelId}`, { definition: { ...definition, elements: [{ kind: "gauge", id: "g", label: "G" }] } });
    expect(bad.status).toBe(422);
    expect(bad.body.error.issues[0].path).toBe("body.definition.elements.0.kind");
    const unknown = { ...definition, layout: undefined, elements: [{ kind: "breaker", id: "b", label: "B", trip: { channel: "cb.nowhere" } }] };
    const unknownReply = await builder().request("PUT", `${base}/panels/${panelId}`, { definition: unknown });
    expect(unknownReply.status).toBe(422);
    expect(unknownReply.body.error.issues[0].path).toBe("body.definition.elements.0.trip.channel");
    // Nothing changed by the refusals.
    expect((await owner().get(`${base}/panels/${panelId}`)).body.elementCount).toBe(6);
  });

  it("renames (the definition's name follows)", async () => {
    const reply = await builder().patch(`${base}/panels/${panelId}`, { name: "Left glareshield" });
    expect(reply.status).toBe(200);
    expect(reply.body.name).toBe("Left glareshield");
    expect(reply.body.definition.name).toBe("Left glareshield");
    expect((await builder().patch(`${base}/panels/${panelId}`, { name: "  " })).status).toBe(422);
  });

  it("duplicates with a free identifier each time", async () => {
    const first = await builder().post(`${base}/panels/${panelId}/duplicate`);
    expect(first.status).toBe(201);
    expect(first.body.slug).toBe("test-panel-copy");
    expect(first.body.name).toBe("Left glareshield (copy)");
    expect(first.body.definition.id).toBe("test-panel-copy");
    const second = await builder().post(`${base}/panels/${panelId}/duplicate`);
    expect(second.body.slug).toBe("test-panel-copy-2");
    const named = await builder().post(`${base}/panels/${panelId}/duplicate`, { slug: "spare-panel", name: "Spare" });
    expect(named.body).toMatchObject({ slug: "spare-panel", name: "Spare" });
    const clash = await builder().post(`${base}/panels/${panelId}/duplicate`, { slug: "spare-panel" });
    expect(clash.status).toBe(409);
    expect((await builder().post(`${base}/panels/${panelId}/duplicate`, { slug: "Not A Slug" })).status).toBe(422);
  });

  it("mirrors: positions mirrored, ids suffixed, bindings mapped, the original remembered", async () => {
    const reply = await builder().post(`${base}/panels/${panelId}/mirror`, { channelMap: {} });
    expect(reply.status).toBe(201);
    expect(reply.body.slug).toBe("test-panel-right");
    expect(reply.body.mirrorOf).toBe(panelId);
    const def = reply.body.definition;
    expect(def.elements.map((e: { id: string }) => e.id).slice(0, 2)).toEqual(["fire-right", "alt-100-right"]);
    // x becomes width - x; rotations change sign (docs/panel-format.md, Mirrored panels).
    expect(def.layout.positions["fire-right"]).toEqual({ x: 180, y: 20, rotation: 0 });
    expect(def.layout.positions["alt-100-right"]).toEqual({ x: 120, y: 50, rotation: -10 });
    // A mirror of a "-left" panel is its "-right" one.
    const left = await builder().post(`${base}/panels`, { airframeId, definition: testDefinition("bezel-left", "Bezel, left") });
    const right = await builder().post(`${base}/panels/${left.body.id}/mirror`, { name: "Bezel, right", channelMap: { "eng1.fire_warning": "elec.master" } });
    expect(right.body).toMatchObject({ slug: "bezel-right", name: "Bezel, right" });
    expect(right.body.definition.elements[0].drive.on.channel).toBe("elec.master");
    // Mapping onto a channel the airframe lacks is refused with the field.
    const bad = await builder().post(`${base}/panels/${left.body.id}/mirror`, { slug: "bezel-other", channelMap: { "eng1.fire_warning": "eng2.fire_warning" } });
    expect(bad.status).toBe(422);
    expect(bad.body.error.issues[0].path).toBe("definition.elements.0.drive.on.channel");
  });

  it("deletes a panel, its photo and tokens; a mirror keeps its definition", async () => {
    const made = await builder().post(`${base}/panels`, { airframeId, definition: testDefinition("short-lived") });
    const id = made.body.id;
    const mirror = await builder().post(`${base}/panels/${id}/mirror`);
    expect((await putBytes(builder(), `${base}/panels/${id}/photo`, await testImage(40, 30))).status).toBe(200);
    const photoDir = path.join(bench.storageDir, "workshops", bench.workshopId, "panels", id);
    expect(readdirSync(photoDir)).toHaveLength(1);
    expect((await builder().post(`${base}/panels/${id}/tokens`, { label: "bench board" })).status).toBe(201);
    expect((await builder().delete(`${base}/panels/${id}`)).status).toBe(204);
    expect((await builder().get(`${base}/panels/${id}`)).status).toBe(404);
    expect(existsSync(photoDir) ? readdirSync(photoDir) : []).toHaveLength(0);
    const left = await builder().get(`${base}/panels/${mirror.body.id}`);
    expect(left.status).toBe(200);
    expect(left.body.mirrorOf).toBeNull();
    expect((await builder().delete(`${base}/panels/${id}`)).status).toBe(404);
  });
});

describe("export", () => {
  it("exports the definition as JSON that imports back to the same panel", async () => {
    const file = await getText(bench.visitors.viewer, `${base}/panels/${panelId}/export.json`);
    expect(file.status).toBe(200);
    expect(file.headers.get("content-type")).toMatch(/application\/json/);
    expect(file.headers.get("content-disposition")).toBe('attachment; filename="test-panel.panel.json"');
    const parsed = importPanelJson(file.text);
    expect(parsed.ok).toBe(true);
    const detail = (await owner().get(`${base}/panels/${panelId}`)).body;
    if (parsed.ok) expect(parsed.panel.elements).toEqual(detail.definition.elements);
    // An exported file imports as a new panel once its identifier is free.
    const again = JSON.parse(file.text);
    again.id = "imported-panel";
    const imported = await builder().post(`${base}/panels`, { airframeId, definition: again });
    expect(imported.status).toBe(201);
  });

  it("exports a C header named after the panel", async () => {
    const file = await getText(bench.visitors.viewer, `${base}/panels/${panelId}/device-header.h`);
    expect(file.status).toBe(200);
    expect(file.headers.get("content-type")).toMatch(/^text\/x-c/);
    expect(file.headers.get("content-disposition")).toBe('attachment; filename="test-panel.h"');
    expect(file.text).toContain("#define PP_PANEL_ID \"test-panel\"");
    expect(file.text).toContain("#define PP_EL_FIRE 0u");
    expect(file.text).toContain("#define PP_EL_GEAR_POS_DOWN 1u");
    expect(file.text).toContain("#define PP_CH_ENG1_FIRE_WARNING 0u");
  });
});

describe("photo and markers", () => {
  it("scales a large photo to 2,000 px on its long side and serves it", async () => {
    const reply = await putBytes(builder(), `${base}/panels/${panelId}/photo`, await testImage(3000, 1500), "image/jpeg");
    expect(reply.status).toBe(200);
    expect(reply.body.hasPhoto).toBe(true);
    const photo = await getBytes(bench.visitors.viewer, `${base}/panels/${panelId}/photo`);
    expect(photo.status).toBe(200);
    expect(photo.headers.get("content-type")).toBe("image/jpeg");
    const meta = await sharp(photo.bytes).metadata();
    expect([meta.format, meta.width, meta.height]).toEqual(["jpeg", 2000, 1000]);
    // The storage key is the server's: not in exports.
    expect(reply.body.definition.photo.photoKey).toMatch(/^workshops\//);
    expect((await getText(owner(), `${base}/panels/${panelId}/export.json`)).text).not.toContain("photoKey");
  });

  it("judges the type by the bytes, not the header: a PNG labelled JPEG is stored as PNG", async () => {
    const reply = await putBytes(builder(), `${base}/panels/${panelId}/photo`, await testImage(300, 200, "png"), "image/jpeg");
    expect(reply.status).toBe(200);
    const photo = await getBytes(owner(), `${base}/panels/${panelId}/photo`);
    expect(photo.headers.get("content-type")).toBe("image/png");
    expect((await sharp(photo.bytes).metadata()).width).toBe(300); // small photos are not enlarged
    // Only one photo kept per panel.
    expect(readdirSync(path.join(bench.storageDir, "workshops", bench.workshopId, "panels", panelId))).toHaveLength(1);
    const webp = await putBytes(builder(), `${base}/panels/${panelId}/photo`, await testImage(64, 64, "webp"), "application/octet-stream");
    expect(webp.status).toBe(200);
    expect((await getBytes(owner(), `${base}/panels/${panelId}/photo`)).headers.get("content-type")).toBe("image/webp");
  });

  it("refuses other file types, broken images, empty and oversized photos", async () => {
    const gif = Buffer.from("GIF89a\x01\x00\x01\x00\x00\x00\x00;", "latin1");
    const wrong = await putBytes(builder(), `${base}/panels/${panelId}/photo`, gif, "image/jpeg");
    expect(wrong.status).toBe(422);
    expect(wrong.body.error.issues[0].path).toBe("body");
    expect(wrong.body.error.issues[0].message).toMatch(/not a JPEG, PNG or WebP/);
    const text = await putBytes(builder(), `${base}/panels/${panelId}/photo`, Buffer.from("hello, not a photo"), "image/png");
    expect(text.status).toBe(422);
    const broken = Buffer.concat([Buffer.from([0xff, 0xd8, 0xff, 0xe0]), Buffer.alloc(200, 7)]);
    expect((await putBytes(builder(), `${base}/panels/${panelId}/photo`, broken, "image/jpeg")).status).toBe(422);
    expect((await putBytes(builder(), `${base}/panels/${panelId}/photo`, Buffer.alloc(0), "image/jpeg")).status).toBe(422);
    const huge = Buffer.alloc(PHOTO_MAX_BYTES + 1, 0);
    huge.set([0xff, 0xd8, 0xff, 0xe0]);
    const over = await putBytes(builder(), `${base}/panels/${panelId}/photo`, huge, "image/jpeg");
    expect(over.status).toBe(413);
    expect(over.body.error.code).toBe("too_large");
    const asJson = await builder().request("PUT", `${base}/panels/${panelId}/photo`, { photo: "base64..." });
    expect(asJson.status).toBe(400);
    // The last good photo is still there.
    expect((await getBytes(owner(), `${base}/panels/${panelId}/photo`)).headers.get("content-type")).toBe("image/webp");
  });

  it("saves markers for the panel's elements and refuses others", async () => {
    const reply = await builder().request("PUT", `${base}/panels/${panelId}/markers`, { markers: { fire: { x: 0.1, y: 0.2 }, gear: { x: 0.9, y: 0.75 } } });
    expect(reply.status).toBe(200);
    expect(reply.body.definition.photo.markers).toEqual({ fire: { x: 0.1, y: 0.2 }, gear: { x: 0.9, y: 0.75 } });
    expect(reply.body.definition.photo.photoKey).toMatch(/^workshops\//);
    const unknown = await builder().request("PUT", `${base}/panels/${panelId}/markers`, { markers: { nowhere: { x: 0.1, y: 0.2 } } });
    expect(unknown.status).toBe(422);
    expect(unknown.body.error.issues[0].path).toBe("body.markers.nowhere");
    const outside = await builder().request("PUT", `${base}/panels/${panelId}/markers`, { markers: { fire: { x: 1.5, y: 0.2 } } });
    expect(outside.status).toBe(422);
    expect(outside.body.error.issues[0].path).toBe("body.markers.fire.x");
  });

  it("removes the photo; a panel without one answers 404 for it", async () => {
    const made = await builder().post(`${base}/panels`, { airframeId, definition: testDefinition("no-photo") });
    expect((await getBytes(owner(), `${base}/panels/${made.body.id}/photo`)).status).toBe(404);
    await putBytes(builder(), `${base}/panels/${made.body.id}/photo`, await testImage(50, 50));
    const removed = await builder().delete(`${base}/panels/${made.body.id}/photo`);
    expect(removed.status).toBe(200);
    expect(removed.body.hasPhoto).toBe(false);
    expect((await getBytes(owner(), `${base}/panels/${made.body.id}/photo`)).status).toBe(404);
  });
});

describe("expected timelines for a preview", () => {
  let recordingId: string;
  beforeAll(async () => {
    recordingId = await uploadRecording(bench, airframeId);
  });

  it("computes every element's timeline over the stored recording, and what it never reached", async () => {
    const reply = await bench.visitors.viewer.get(`${base}/panels/${panelId}/expected?recordingId=${recordingId}`);
    expect(reply.status).toBe(200);
    const view = reply.body;
    expect(view).toMatchObject({ panelId, recordingId, recordingName: "Panel flight", durationMs: 4000, frameCount: 4 });
    const byId = new Map(view.timelines.elements.map((e: { id: string }) => [e.id, e]));
    expect([...byId.keys()]).toEqual(["fire", "alt-100", "airspeed", "xpdr", "gear", "pitot"]);
    expect(expectedAt(byId.get("fire") as never, 3000).lamp).toEqual({ state: "off" });
    expect(expectedAt(byId.get("xpdr") as never, 3000).text).toBe("1200");
    expect(expectedAt(byId.get("gear") as never, 500).position).toBe("down");
    expect(expectedAt(byId.get("gear") as never, 2500).position).toBe("up");
    // Full circle, 1,000 ft a turn: 320 ft is 115.2 degrees (a fact of the trade: 360 degrees per 1,000 ft).
    expect(expectedAt(byId.get("alt-100") as never, 0).angle).toBeCloseTo(115.2, 6);
    expect(view.coverage.messages).toContain("FIRE lamp never lit");
    expect(view.coverage.messages.some((m: string) => /airspeed pointer never above 50% of its scale/.test(m))).toBe(true);
  });

  it("refuses a recording of another airframe, and one of another workshop", async () => {
    const other = await makeAirframe(bench, "Other rig", [{ name: "elec.master", kind: "boolean" }]);
    const otherRecording = await uploadRecording(
      bench,
      other,
      `{"format":"panelproof-recording","version":1,"airframe":"Other","channels":[{"name":"elec.master","kind":"boolean"}]}\n{"t":0,"v":{"elec.master":true}}\n`,
      "Other flight",
    );
    const reply = await owner().get(`${base}/panels/${panelId}/expected?recordingId=${otherRecording}`);
    expect(reply.status).toBe(422);
    expect(reply.body.error.issues[0].path).toBe("query.recordingId");
    expect((await owner().get(`${base}/panels/${panelId}/expected?recordingId=nope`)).status).toBe(404);
    expect((await owner().get(`${base}/panels/${panelId}/expected`)).status).toBe(422);
  });
});

describe("motion demand of a pointer's motor over a recording", () => {
  let recordingId: string;
  let motionPanel: string;
  /** 1 degree per step, no microstepping: steps and degrees are the same numbers. */
  const motor = (maxStepsPerSecond: number, accelerationStepsPerSecond2: number) => ({
    degreesPerFullStep: 1,
    microstepping: 1,
    sweep: { kind: "limited", minDegrees: 0, maxDegrees: 315 },
    maxStepsPerSecond,
    accelerationStepsPerSecond2,
  });
  const withMotor = (m: ReturnType<typeof motor> | undefined) => {
    const d = testDefinition("motion-panel", "Motion panel");
    d.elements = d.elements.map((e) => (e.id === "airspeed" ? { ...e, motor: m } : e)) as typeof d.elements;
    return d;
  };
  beforeAll(async () => {
    recordingId = await uploadRecording(bench, airframeId, undefined, "Motion flight");
    const made = await owner().post(`${base}/panels`, { airframeId, definition: withMotor(motor(30, 1000)) });
    expect(made.status).toBe(201);
    motionPanel = made.body.id;
  });
  const motion = (elementId: string, rec = recordingId) => bench.visitors.viewer.get(`${base}/panels/${motionPanel}/elements/${elementId}/motion?recordingId=${rec}`);

  it("says where a slow motor falls behind, by how much, against the peak speed and acceleration", async () => {
    // The airspeed pointer: 0..200 kt over 0..300 degrees, 1.5 degrees per knot. The recording
    // gives 0, 60, 100, 90 kt at 0, 1, 2, 4 s: angles 0, 90, 150, 135, so speeds 90, 60 and -7.5
    // degrees per second (peak 90), and speed changes of 30 over 1 s and 67.5 over 1.5 s between
    // the intervals' midpoints (peak 45 deg/s^2). Hand-computed, as is the rest.
    const reply = await motion("airspeed");
    expect(reply.status).toBe(200);
    const view = reply.body;
    expect(view).toMatchObject({ panelId: motionPanel, elementId: "airspeed", recordingId, recordingName: "Motion flight", channel: "ias_kt", sampleCount: 4, toleranceDegrees: 2 });
    expect(view.peakDegreesPerSecond).toBeCloseTo(90, 9);
    expect(view.peakDegreesPerSecond2).toBeCloseTo(45, 9);
    expect(view.motorMaxDegreesPerSecond).toBe(30);
    expect(view.motorAccelerationDegreesPerSecond2).toBe(1000);
    // The motor (30 deg/s, 1000 deg/s^2) starts chasing each sample's angle at that sample and is
    // judged at the next one (followTargets). Told 90 at 1 s: 0.03 s to reach 30 deg/s (0.45
    // degrees), then cruising, so at 2 s it is at 0.45 + 30 * 0.97 = 29.55, 60.45 behind; told 150
    // at 2 s, still at full speed, at 4 s it is at 29.55 + 60 = 89.55, again 60.45 behind.
    expect(view.keepsUp).toBe(false);
    expect(view.behindCount).toBe(1);
    expect(view.behind[0].startMs).toBe(2000);
    expect(view.behind[0].endMs).toBe(4000);
    expect([2000, 4000]).toContain(view.behind[0].worstAtMs); // two equal lags, up to rounding
    expect(view.behind[0].worstLagDegrees).toBeCloseTo(60.45, 6);
    expect(view.worstLagDegrees).toBeCloseTo(60.45, 6);
  });

  it("passes a motor fast enough for the flight", async () => {
    expect((await builder().request("PUT", `${base}/panels/${motionPanel}`, { definition: withMotor(motor(2000, 100000)) })).status).toBe(200);
    const view = (await motion("airspeed")).body;
    expect(view.keepsUp).toBe(true);
    expect(view.behind).toEqual([]);
    expect(view.worstLagDegrees).toBeLessThan(2);
    expect(view.peakDegreesPerSecond).toBeCloseTo(90, 9); // the demand is the recording's, whatever the motor
  });

  it("refuses elements that are not pointers with motors, unknown elements and foreign recordings", async () => {
    const lamp = await motion("fire");
    expect(lamp.status).toBe(422);
    expect(lamp.body.error.issues[0]).toEqual({ path: "params.elementId", message: '"fire" is a lamp; motion demand is for pointers' });
    const noMotor = await motion("alt-100");
    expect(noMotor.status).toBe(422);
    expect(noMotor.body.error.issues[0].message).toMatch(/has no motor profile/);
    expect((await motion("no-such-element")).status).toBe(404);
    const badId = await motion("Not_An_Id");
    expect(badId.status).toBe(422);
    expect(badId.body.error.issues[0].path).toBe("params.elementId");
    expect((await motion("airspeed", "nope")).status).toBe(404);
    const noQuery = await bench.visitors.viewer.get(`${base}/panels/${motionPanel}/elements/airspeed/motion`);
    expect(noQuery.status).toBe(422);
    expect(noQuery.body.error.issues[0].path).toBe("query.recordingId");
  });
});

describe("device tokens", () => {
  it("shows a token once, lists without it, and revokes it", async () => {
    const made = await builder().post(`${base}/panels/${panelId}/tokens`, { label: "glareshield board" });
    expect(made.status).toBe(201);
    expect(made.body.token).toMatch(/^ppd_[A-Za-z0-9_-]{32}$/);
    expect(made.body).toMatchObject({ label: "glareshield board", lastUsedAt: null, revokedAt: null });
    const list = (await bench.visitors.viewer.get(`${base}/panels/${panelId}/tokens`)).body;
    expect(list).toHaveLength(1);
    expect(list[0]).not.toHaveProperty("token");
    expect(JSON.stringify(list)).not.toContain(made.body.token);
    const db = bench.server.services.db;
    expect(await panelForDeviceToken(db, made.body.token)).toEqual({ panelId, workshopId: bench.workshopId });
    expect((await owner().get(`${base}/panels/${panelId}/tokens`)).body[0].lastUsedAt).not.toBeNull();
    const revoked = await builder().post(`${base}/panels/${panelId}/tokens/${made.body.id}/revoke`);
    expect(revoked.status).toBe(200);
    expect(revoked.body.revokedAt).not.toBeNull();
    expect(await panelForDeviceToken(db, made.body.token)).toBeNull();
    expect(await panelForDeviceToken(db, "ppd_guessed")).toBeNull();
    expect((await builder().post(`${base}/panels/${panelId}/tokens`, { label: "" })).status).toBe(422);
    expect((await builder().post(`${base}/panels/${panelId}/tokens/nope/revoke`)).status).toBe(404);
  });
});
