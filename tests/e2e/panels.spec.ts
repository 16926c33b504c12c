import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import sharp from "sharp";
import { expect, test, type Page } from "@playwright/test";
import { signUp, stamp } from "./support";
import { demoChannels } from "../../shared/panel/demo";

/**
 * Panels in the browser (issue 4): a builder describes a panel element by element (with inline
 * validation), uploads a photo of the real panel and drags a marker onto every element, previews
 * the panel against an uploaded recording at a chosen instant with what the recording never
 * reaches, and exports the device header; on the way it checks the pointer's motor against the
 * recording (motion demand) and drags an element to its place on the virtual layout; a viewer
 * then sees it all read-only and cannot move anything. The test database
 * has no demo seed: people, workshop, airframe and recording are made here.
 *
 * Set SHOTS=/some/folder to keep a screenshot of each screen on the way.
 */

const shot = async (page: Page, name: string) => {
  if (process.env.SHOTS) await page.screenshot({ path: `${process.env.SHOTS}/panels-${name}.png`, fullPage: true });
};

const DEMO_FLIGHT = fileURLToPath(new URL("../../recordings/demo-pattern-flight.ppr.jsonl", import.meta.url));


/** An invented photo of a panel: a dark plate with four light patches where the elements sit. */
async function panelPhoto(): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="2400" height="1200">
    <rect width="2400" height="1200" fill="#3b4147"/>
    <rect x="60" y="60" width="2280" height="1080" rx="40" fill="#2a2f34"/>
    ${[300, 800, 1400, 1950].map((x) => `<rect x="${x - 120}" y="480" width="240" height="240" rx="24" fill="#c9c2b0"/>`).join("")}
  </svg>`;
  return sharp(Buffer.from(svg)).png().toBuffer();
}

/** Adds one element through the form: kind, label, identifier, then `fill` for the kind's own fields. */
async function addElement(page: Page, kind: string, label: string, id: string, fill: (form: ReturnType<Page["getByRole"]>) => Promise<void>) {
  await page.getByRole("button", { name: "Add an element" }).click();
  await page.getByRole("group", { name: "Element kind" }).getByRole("button", { name: new RegExp(`^${kind}`) }).click();
  const form = page.getByRole("form", { name: `${kind} form` });
  await form.getByLabel("Label").fill(label);
  await form.getByLabel("Identifier").fill(id);
  await fill(form);
  await form.getByRole("button", { name: "Add to the panel" }).click();
  await expect(page.getByTestId(`element-row-${id}`)).toBeVisible();
}

test("a builder describes a panel, marks its photo, previews it against a recording and exports its header", async ({ page }) => {
  test.setTimeout(120_000);
  await signUp(page, "Ada Solder", `panel-owner-${stamp()}@panelproof.example`);
  await page.getByLabel("Workshop name").fill("Attic Glareshield Build");
  await page.getByRole("button", { name: "Create workshop" }).click();
  await expect(page.getByRole("heading", { name: "Attic Glareshield Build" })).toBeVisible();
  const workshopId = /\/w\/([^/]+)/.exec(page.url())![1];
  const api = `/api/workshops/${workshopId}`;

  // The airframe, its catalogue and the demo flight, through the API with the same session.
  const airframe = await page.request.post(`${api}/airframes`, { data: { name: "Marlin TX-2 (invented twin)" } });
  expect(airframe.status()).toBe(201);
  const airframeId = (await airframe.json()).id as string;
  expect((await page.request.put(`${api}/airframes/${airframeId}/channels`, { data: { channels: demoChannels } })).status()).toBe(200);
  const upload = await page.request.post(`${api}/recordings/uploads?name=Pattern%20flight&airframeId=${airframeId}&format=ppr&addDraftChannels=true`, {
    headers: { "content-type": "application/octet-stream" },
    data: readFileSync(DEMO_FLIGHT),
  });
  expect(upload.status()).toBe(202);
  const importId = (await upload.json()).id as string;
  await expect.poll(async () => (await (await page.request.get(`${api}/imports/${importId}`)).json()).state, { timeout: 30_000 }).toBe("done");

  // A new, empty panel.
  await page.getByRole("navigation", { name: "Workshop" }).getByRole("link", { name: "Panels" }).click();
  await expect(page.getByText("No panels described yet.")).toBeVisible();
  await shot(page, "empty-list");
  await page.getByRole("button", { name: "New panel" }).click();
  const newForm = page.getByRole("form", { name: "New panel" });
  await newForm.getByLabel("Name").fill("Overhead test strip");
  await expect(newForm.getByLabel("Identifier")).toHaveValue("overhead-test-strip");
  await shot(page, "new-panel");
  await newForm.getByRole("button", { name: "Create panel" }).click();
  await expect(page.getByRole("heading", { name: /Overhead test strip/ })).toBeVisible();

  // A lamp: first with a wrong identifier and no channel, refused beside each field.
  await page.getByRole("button", { name: "Add an element" }).click();
  await page.getByRole("group", { name: "Element kind" }).getByRole("button", { name: /^Lamp/ }).click();
  const lamp = page.getByRole("form", { name: "Lamp form" });
  await lamp.getByLabel("Label").fill("GEAR");
  await lamp.getByLabel("Identifier").fill("Gear Lamp");
  await lamp.getByRole("button", { name: "Add to the panel" }).click();
  await expect(lamp.getByText(/must be lowercase letters, digits and dashes/).first()).toBeVisible();
  await expect(lamp.getByRole("group", { name: "Lit while" })).toContainText(/✕/);
  await shot(page, "lamp-form-invalid");
  await lamp.getByLabel("Identifier").fill("gear-unsafe");
  await lamp.getByRole("group", { name: "Lit while" }).getByLabel("Channel").selectOption("gear.unsafe_lamp");
  await lamp.getByRole("button", { name: "Add to the panel" }).click();
  await expect(page.getByTestId("element-row-gear-unsafe")).toContainText("gear.unsafe_lamp");

  await addElement(page, "Lamp", "FIRE", "fire", async (form) => {
    await form.getByRole("group", { name: "Lit while" }).getByLabel("Channel").selectOption("eng1.fire_warning");
  });
  await addElement(page, "Pointer", "airspeed", "airspeed", async (form) => {
    await form.getByRole("group", { name: "Follows" }).getByLabel("Channel").selectOption("ias_kt");
    await form.getByLabel("Point 2 value").fill("200");
    await form.getByLabel("angle (°)").nth(1).fill("300");
  });
  await addElement(page, "Readout", "XPDR", "xpdr", async (form) => {
    await form.getByLabel("Shows the channel").selectOption("xpdr.code");
  });
  await expect(page.getByTestId("panel-drawing").locator("[data-element]")).toHaveCount(4);
  await shot(page, "elements");

  // The scale page of the pointer: the curve, and the steps for a typed value.
  await page.getByTestId("element-row-airspeed").getByRole("link", { name: "Scale and motor" }).click();
  await expect(page.getByTestId("scale-curve")).toBeVisible();
  await page.getByLabel("This pointer is driven by a stepper motor").check();
  await page.getByTestId("probe-value").fill("100");
  await expect(page.getByTestId("probe-result")).toContainText("150.00°");
  // 1,080 full steps a turn at 1/4 microstepping: 150 degrees is 1,800 steps (the form's default motor).
  await expect(page.getByTestId("probe-result")).toContainText("1800");
  await shot(page, "scale");
  await page.getByRole("button", { name: "Save scale and motor" }).click();
  await expect(page.getByText("Saved into the panel definition.")).toBeVisible();

  // Motion demand over the flight. The form's default motor: 1,080 full steps a turn at 1/4 is
  // 1/12 degree a step, so 2,400 steps/s is 200 deg/s and 12,000 steps/s^2 is 1,000 deg/s^2. The
  // flight's airspeed asks at most 15 deg/s (10 kt/s at 1.5 degrees a knot): it keeps up.
  const verdict = page.getByTestId("motion-verdict");
  await expect(page.getByTestId("motion-recording")).toContainText("Pattern flight");
  await expect(verdict).toContainText("Keeps up.");
  await expect(verdict).toContainText("15.0 °/s");
  await expect(verdict).toContainText("200.0 °/s");
  await expect(verdict).toContainText("1000.0 °/s²");
  // A motor of 5 steps/s (about 0.4 deg/s) cannot: it falls behind from the take-off roll until
  // long after, by 134 degrees at worst (shared/elements/scale motionDemand on the same flight).
  await page.getByLabel("Fastest steps per second").fill("5");
  await expect(page.getByText("These figures are for the saved motor profile")).toBeVisible();
  await page.getByRole("button", { name: "Save scale and motor" }).click();
  await expect(verdict).toContainText("Falls behind.");
  await expect(verdict.getByRole("list", { name: "Where the motor falls behind" })).toContainText("This motor falls behind by 134.0° during 00:06.0 to 01:30.0.");
  await expect(verdict).toContainText("0.4 °/s");
  await expect(verdict).toContainText("▲ over");
  await shot(page, "motion-demand");
  await page.getByRole("link", { name: "← Overhead test strip" }).click();

  // Drag the FIRE lamp to its place on the virtual layout: saved at once into the layout.
  const drawing = page.getByTestId("panel-drawing");
  const fireItem = drawing.locator('[data-element="fire"]');
  const before = { x: Number(await fireItem.getAttribute("data-x")), y: Number(await fireItem.getAttribute("data-y")) };
  const fireBox = (await fireItem.boundingBox())!;
  await page.mouse.move(fireBox.x + fireBox.width / 2, fireBox.y + fireBox.height / 2);
  await page.mouse.down();
  await page.mouse.move(fireBox.x + fireBox.width / 2 + 90, fireBox.y + fireBox.height / 2 + 40, { steps: 8 });
  await page.mouse.up();
  const placedPanelId = ((await (await page.request.get(`${api}/panels`)).json())[0].id) as string;
  await expect
    .poll(async () => (await (await page.request.get(`${api}/panels/${placedPanelId}`)).json()).definition.layout?.positions?.fire, { timeout: 15_000 })
    .toBeTruthy();
  const placedAt = (await (await page.request.get(`${api}/panels/${placedPanelId}`)).json()).definition.layout.positions.fire;
  expect(placedAt.x).toBeGreaterThan(before.x);
  expect(placedAt.y).toBeGreaterThan(before.y);
  // The drawing shows it where it was saved.
  await expect(fireItem).toHaveAttribute("data-x", placedAt.x.toFixed(1));
  await expect(fireItem).toHaveAttribute("data-y", placedAt.y.toFixed(1));
  await shot(page, "layout-placed");

  // The photo, then a marker dragged onto every element.
  await page.getByRole("button", { name: "Photo and markers" }).click();
  await page.getByTestId("photo-input").setInputFiles({ name: "strip.png", mimeType: "image/png", buffer: await panelPhoto() });
  const photo = page.getByRole("img", { name: "Photo of Overhead test strip" });
  await expect(photo).toBeVisible();
  await expect.poll(async () => photo.evaluate((img: HTMLImageElement) => img.naturalWidth)).toBe(2000); // scaled from 2,400
  await expect(page.getByText("0 of 4 marked")).toBeVisible();
  const area = page.getByTestId("photo-area");
  const box = (await area.boundingBox())!;
  const spots: Record<string, number> = { "gear-unsafe": 300, fire: 800, airspeed: 1400, xpdr: 1950 };
  for (const [id, x] of Object.entries(spots)) {
    const chip = (await page.locator(`[data-chip="${id}"]`).boundingBox())!;
    await page.mouse.move(chip.x + 20, chip.y + chip.height / 2);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width * (x / 2400), box.y + box.height * 0.5, { steps: 8 });
    await page.mouse.up();
    await expect(page.locator(`[data-marker="${id}"]`)).toBeVisible();
  }
  await expect(page.getByText("Every element marked")).toBeVisible();
  await page.getByRole("button", { name: "Save markers" }).click();
  await expect(page.getByText("Markers saved.")).toBeVisible();
  await shot(page, "photo-markers");
  const saved = await (await page.request.get(`${api}/panels`)).json();
  const panelId = saved[0].id as string;
  const detail = await (await page.request.get(`${api}/panels/${panelId}`)).json();
  expect(Object.keys(detail.definition.photo.markers).sort()).toEqual(["airspeed", "fire", "gear-unsafe", "xpdr"]);
  expect(detail.definition.photo.markers.fire.x).toBeCloseTo(800 / 2400, 1);

  // Preview against the flight at one minute: what every element should show, and what it never reaches.
  await page.getByRole("button", { name: "Preview" }).click();
  await expect(page.getByLabel("Recording")).toContainText("Pattern flight");
  const slider = page.getByLabel(/^Instant/);
  await expect(slider).toBeEnabled();
  await slider.fill("60000");
  await expect(page.getByTestId("preview-time")).toHaveText("01:00.0");
  await expect(page.getByTestId("expected-gear-unsafe")).toContainText("ON");
  await expect(page.getByTestId("expected-fire")).toContainText("OFF");
  await expect(page.getByTestId("expected-airspeed")).toContainText("142.5°");
  await expect(page.getByTestId("panel-drawing").locator('[data-readout="xpdr"]')).toHaveText("4521");
  const gaps = page.getByTestId("coverage-gaps");
  await expect(gaps).toContainText("FIRE lamp never lit");
  await expect(gaps).toContainText("airspeed pointer never above 48% of its scale");
  await shot(page, "preview");

  // The device header, named after the panel.
  const [download] = await Promise.all([page.waitForEvent("download"), page.getByTestId("export-header").click()]);
  expect(download.suggestedFilename()).toBe("overhead-test-strip.h");
  const header = readFileSync((await download.path())!, "utf8");
  expect(header).toContain('#define PP_PANEL_ID "overhead-test-strip"');
  expect(header).toContain("#define PP_EL_GEAR_UNSAFE 0u");
  expect(header).toContain("#define PP_EL_XPDR 3u");
  const [json] = await Promise.all([page.waitForEvent("download"), page.getByTestId("export-json").click()]);
  expect(json.suggestedFilename()).toBe("overhead-test-strip.panel.json");

  // Mirror it: the right-hand strip opens with its elements suffixed.
  await page.getByRole("button", { name: "Mirror" }).click();
  await shot(page, "mirror");
  await page.getByRole("form", { name: "Mirror the panel" }).getByRole("button", { name: "Make the mirrored panel" }).click();
  await expect(page.getByRole("heading", { name: /Overhead test strip \(mirror\)/ })).toBeVisible();
  await expect(page.getByTestId("element-row-gear-unsafe-right")).toBeVisible();

  // A viewer sees the panel, its photo and preview, and has no way to change them.
  const viewerEmail = `panel-viewer-${stamp()}@panelproof.example`;
  const invite = await page.request.post(`${api}/invitations`, { data: { email: viewerEmail, role: "viewer" } });
  expect(invite.status()).toBe(201);
  const invitationId = (await invite.json()).id as string;
  const viewer = await page.context().browser()!.newPage();
  await signUp(viewer, "Vic Viewer", viewerEmail);
  expect((await viewer.request.post(`/api/invitations/${invitationId}/accept`)).status()).toBe(200);
  await viewer.goto(`/w/${workshopId}/panels`);
  await expect(viewer.getByRole("button", { name: "New panel" })).toHaveCount(0);
  await viewer.getByRole("link", { name: "Overhead test strip", exact: true }).click();
  await expect(viewer.getByText("You are a viewer here")).toBeVisible();
  await expect(viewer.getByRole("button", { name: "Add an element" })).toHaveCount(0);
  await expect(viewer.getByRole("button", { name: "Mirror" })).toHaveCount(0);
  await expect(viewer.getByRole("button", { name: "Delete" })).toHaveCount(0);
  // Dragging on the virtual layout moves nothing for a viewer.
  const viewerFire = viewer.getByTestId("panel-drawing").locator('[data-element="fire"]');
  const viewerBefore = await viewerFire.getAttribute("data-x");
  const viewerBox = (await viewerFire.boundingBox())!;
  await viewer.mouse.move(viewerBox.x + viewerBox.width / 2, viewerBox.y + viewerBox.height / 2);
  await viewer.mouse.down();
  await viewer.mouse.move(viewerBox.x + viewerBox.width / 2 + 80, viewerBox.y + viewerBox.height / 2 + 30, { steps: 6 });
  await viewer.mouse.up();
  await expect(viewerFire).toHaveAttribute("data-x", viewerBefore!);
  const unchanged = (await (await viewer.request.get(`${api}/panels/${placedPanelId}`)).json()).definition.layout.positions.fire;
  expect(unchanged).toEqual(placedAt);
  await viewer.getByRole("button", { name: "View GEAR" }).click();
  await expect(viewer.getByRole("button", { name: "Add to the panel" })).toHaveCount(0);
  await expect(viewer.getByRole("button", { name: "Save the element" })).toHaveCount(0);
  await viewer.getByRole("button", { name: "Photo and markers" }).click();
  await expect(viewer.getByRole("img", { name: "Photo of Overhead test strip" })).toBeVisible();
  await expect(viewer.getByTestId("photo-input")).toHaveCount(0);
  await expect(viewer.getByRole("button", { name: "Save markers" })).toHaveCount(0);
  await shot(viewer, "viewer-photo");
  await viewer.close();
});
