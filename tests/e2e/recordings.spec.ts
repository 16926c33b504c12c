import { createSocket } from "node:dgram";
import { expect, test, type APIRequestContext, type Page } from "@playwright/test";
import { signUp, stamp } from "./support";

/**
 * Recordings in the browser (issue 3): upload a Panelproof file with a visible progress bar and
 * see its channels plotted; a CSV read with the wrong delimiter is refused with where and why;
 * a viewer reads recordings but has no upload or change controls. Every test makes its own
 * people and workshop (the demo seed is not loaded in tests).
 *
 * Set SHOTS=/some/folder to keep a screenshot of each screen on the way.
 */

const shot = async (page: Page, name: string) => {
  if (process.env.SHOTS) await page.screenshot({ path: `${process.env.SHOTS}/${name}.png`, fullPage: true });
};

const AIRFRAME = "Kestrel K-1 (invented single)";

/** An invented recording: 2 minutes at 20 frames a second, a climb, the gear cycled, a caution lamp. */
function panelproofFile(): string {
  const header = {
    format: "panelproof-recording",
    version: 1,
    airframe: AIRFRAME,
    channels: [
      { name: "alt.baro_ft", kind: "number", unit: "ft", min: -1000, max: 30000 },
      { name: "ias_kt", kind: "number", unit: "kt", min: 0, max: 300 },
      { name: "gear.handle", kind: "enum", values: ["UP", "DOWN"] },
      { name: "annun.master_caution", kind: "boolean" },
      { name: "xpdr.code", kind: "text", maxLength: 4 },
    ],
    notes: "Invented for the end-to-end test.",
    source: "file",
  };
  const lines = [JSON.stringify(header)];
  lines.push(JSON.stringify({ t: 0, v: { "alt.baro_ft": 500, ias_kt: 90, "gear.handle": "DOWN", "annun.master_caution": false, "xpdr.code": "7000" } }));
  for (let i = 1; i <= 2400; i++) {
    const t = i * 50;
    const v: Record<string, unknown> = { "alt.baro_ft": 500 + Math.round(i * 0.5), ias_kt: 90 + (i % 40) / 4 };
    if (i === 400) v["gear.handle"] = "UP";
    if (i === 2000) v["gear.handle"] = "DOWN";
    if (i === 1200) v["annun.master_caution"] = true;
    if (i === 1260) v["annun.master_caution"] = false;
    lines.push(JSON.stringify({ t, v }));
  }
  return `${lines.join("\n")}\n`;
}


/** A new owner with a workshop and an airframe whose catalogue is empty. Returns the workshop id. */
async function ownerWithAirframe(page: Page, workshop: string): Promise<string> {
  await signUp(page, "Rowan Crimp", `owner-${stamp()}@panelproof.example`);
  await page.getByLabel("Workshop name").fill(workshop);
  await page.getByRole("button", { name: "Create workshop" }).click();
  await expect(page.getByRole("heading", { name: workshop })).toBeVisible();
  const workshopId = /\/w\/([^/]+)/.exec(page.url())![1];

  await page.getByRole("navigation", { name: "Workshop" }).getByRole("link", { name: "Recordings" }).click();
  await expect(page.getByText("No recordings yet.")).toBeVisible();
  await page.getByRole("link", { name: "Airframes and channels" }).click();
  const form = page.getByRole("form", { name: "New airframe" });
  await form.getByLabel("Airframe name").fill(AIRFRAME);
  await form.getByRole("button", { name: "Create airframe" }).click();
  await expect(page.getByRole("table", { name: "Airframes" }).getByRole("link", { name: AIRFRAME })).toBeVisible();
  await shot(page, "airframes");
  return workshopId;
}

async function openUpload(page: Page) {
  await page.getByRole("link", { name: "All recordings" }).click();
  await page.getByRole("button", { name: "Upload a file" }).click();
  return page.getByRole("form", { name: "Upload a recording" });
}

test("a builder uploads a Panelproof file, watches its import progress and sees its channels plotted", async ({ page }) => {
  await ownerWithAirframe(page, "Loft Overhead Panel");
  const form = await openUpload(page);
  await form.getByLabel("File", { exact: true }).setInputFiles({ name: "evening-circuit.ppr.jsonl", mimeType: "application/x-ndjson", buffer: Buffer.from(panelproofFile()) });
  await expect(form.getByLabel("Name", { exact: true })).toHaveValue("evening-circuit");
  await form.getByLabel("Name", { exact: true }).fill("Evening circuit");
  await form.getByLabel("Airframe").selectOption({ label: `${AIRFRAME} (0 channels)` });
  // A new airframe's catalogue is empty, so new channels are added as drafts by default.
  await expect(form.getByLabel(/Add unknown channels as drafts/)).toBeChecked();
  await shot(page, "recordings-upload-form");
  await form.getByRole("button", { name: "Upload and import" }).click();

  // The import's progress bar: bytes and frames, in words and as a bar, kept after it finishes.
  const bar = page.getByRole("progressbar", { name: "Import of Evening circuit" });
  await expect(bar).toBeVisible();
  await expect(bar).toHaveAttribute("aria-valuenow", "100", { timeout: 30_000 });
  const row = page.getByRole("listitem", { name: "Import of Evening circuit" });
  await expect(row.getByText("done", { exact: true })).toBeVisible();
  await expect(row).toContainText(/2,401 frames/);
  await shot(page, "recordings-list");

  // It survives a reload: the imports list comes from the server.
  await page.reload();
  await expect(page.getByRole("progressbar", { name: "Import of Evening circuit" })).toHaveAttribute("aria-valuenow", "100");
  const table = page.getByRole("table", { name: "Recordings" });
  await expect(table.getByRole("link", { name: "Evening circuit" })).toBeVisible();
  await expect(table).toContainText("ready");
  await expect(table).toContainText("02:00.0");

  await table.getByRole("link", { name: "Evening circuit" }).click();
  await expect(page.getByRole("heading", { name: "Evening circuit" })).toBeVisible();
  const channels = page.getByRole("table", { name: "Channels of this recording" });
  await expect(channels.getByRole("row")).toHaveCount(6);
  await expect(channels.getByRole("row", { name: /alt\.baro_ft/ })).toContainText("500 to 1700 ft");
  // Enum channels say how often each named value is set.
  await expect(channels.getByRole("row", { name: /gear\.handle/ })).toContainText(/UP ×\d+, DOWN ×\d+|DOWN ×\d+, UP ×\d+/);
  // The uploaded file itself comes back under its own name.
  const original = page.getByRole("link", { name: "Download the uploaded original" });
  const [download] = await Promise.all([page.waitForEvent("download"), original.click()]);
  expect(download.suggestedFilename()).toBe("evening-circuit.ppr.jsonl");

  // Plotted: a strip with a drawn canvas per chosen channel.
  for (const name of ["alt.baro_ft", "ias_kt", "gear.handle", "annun.master_caution"]) {
    await expect(page.getByTestId(`strip-${name}`).locator("canvas")).toBeVisible();
  }
  // Hovering reads every plotted value at the cursor.
  const strip = page.getByTestId("strip-alt.baro_ft").locator(".u-over");
  const box = (await strip.boundingBox())!;
  await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
  await expect(page.getByTestId("cursor-time")).toHaveText(/^01:0\d\.\d$/);
  await expect(page.getByTestId("cursor-value-gear.handle")).toHaveText("UP");

  // Every channel (text too) at a typed instant, read from the server.
  await page.getByLabel("Instant (mm:ss.s)").fill("01:00.0");
  await page.getByRole("button", { name: "Read", exact: true }).click();
  await expect(page.getByTestId("value-at-alt.baro_ft")).toHaveText(/^1100\s*ft$/);
  await expect(page.getByTestId("value-at-annun.master_caution")).toHaveText("true");
  await expect(page.getByTestId("value-at-xpdr.code")).toHaveText('"7000"');
  await shot(page, "recording-page");

  // Zoom: drag across a strip; the shown stretch narrows.
  await page.mouse.move(box.x + box.width * 0.25, box.y + 20);
  await page.mouse.down();
  await page.mouse.move(box.x + box.width * 0.5, box.y + 20, { steps: 5 });
  await page.mouse.up();
  await expect(page.getByRole("button", { name: "Show the whole recording" })).toBeVisible();
  await shot(page, "recording-page-zoomed");

  // The upload added its channels to the empty catalogue as drafts; a builder confirms one.
  await page.getByRole("link", { name: "Airframes and channels" }).click();
  await page.getByRole("link", { name: AIRFRAME }).click();
  const catalogue = page.getByRole("table", { name: "Channel catalogue" });
  await expect(catalogue.getByRole("row")).toHaveCount(6);
  await expect(page.getByText("5 drafts to confirm")).toBeVisible();
  await catalogue.getByRole("button", { name: "Confirm gear.handle" }).click();
  await catalogue.getByRole("button", { name: "Edit alt.baro_ft" }).click();
  await catalogue.getByLabel("Description").fill("Barometric altitude");
  await catalogue.getByRole("button", { name: "Apply" }).click();
  await shot(page, "airframe-catalogue-unsaved");
  await page.getByRole("button", { name: "Save catalogue" }).click();
  await expect(page.getByText("Catalogue saved.")).toBeVisible();
  await expect(page.getByText("4 drafts to confirm")).toBeVisible();
  await expect(catalogue.getByRole("row", { name: /alt\.baro_ft/ })).toContainText("Barometric altitude");
  await shot(page, "airframe-catalogue");
});

test("a builder composes a scenario, sees a problem pointed at its step and line, and saves it as a recording", async ({ page }) => {
  await ownerWithAirframe(page, "Bench Scenario Lab");
  await page.getByRole("link", { name: "Compose a scenario" }).click();
  await expect(page.getByRole("status").filter({ hasText: "Valid:" })).toContainText(/frames over 00:40\.0/);
  await expect(page.getByTestId("strip-gear.position").locator("canvas")).toBeVisible();
  await shot(page, "scenario-editor");

  // A ramp past the channel's maximum: the problem names the step's path and its line.
  const editor = page.getByLabel("Scenario (JSON)");
  const text = await editor.inputValue();
  const line = text.split("\n").findIndex((l) => l.includes('"to": 1500')) + 1;
  await editor.fill(text.replace('"to": 1500', '"to": 99999'));
  const problems = page.getByRole("list", { name: "Scenario problems" });
  await expect(problems).toContainText("tracks[1].steps[0].ramp.to");
  await expect(problems).toContainText("99999 is above the channel's maximum 30000");
  await expect(problems.getByRole("button", { name: `line ${line}` })).toBeVisible();
  await expect(page.getByRole("button", { name: "Save as recording" })).toBeDisabled();
  await shot(page, "scenario-editor-problem");

  await editor.fill(text);
  await expect(page.getByRole("status").filter({ hasText: "Valid:" })).toBeVisible();
  const save = page.getByRole("form", { name: "Save as recording" });
  await save.getByLabel("Airframe").selectOption({ label: AIRFRAME });
  await save.getByRole("button", { name: "Save as recording" }).click();
  await expect(page.getByRole("heading", { name: "Gear and flap cycle" })).toBeVisible();
  await expect(page.getByText("scenario", { exact: true })).toBeVisible();
  await expect(page.getByTestId("strip-alt.baro_ft").locator("canvas")).toBeVisible();
});

test("a live capture counts what arrives over UDP, malformed and repeated messages included, and becomes a recording", async ({ page }) => {
  await ownerWithAirframe(page, "Desk Capture Rig");
  await page.getByRole("link", { name: "Capture live" }).click();
  const form = page.getByRole("form", { name: "Start a capture" });
  await form.getByLabel("Name", { exact: true }).fill("Kitchen-table circuit");
  await shot(page, "capture-start");
  await form.getByRole("button", { name: "Start listening" }).click();
  await expect(page.getByRole("heading", { name: "Kitchen-table circuit" })).toBeVisible();
  await expect(page.getByText("listening")).toBeVisible();
  const udp = await page.getByText(/^127\.0\.0\.1:\d+$/).textContent();
  const port = Number(udp!.split(":")[1]);
  const token = (await page.getByTestId("capture-token").textContent())!.trim();

  const socket = createSocket("udp4");
  const send = (message: string) => new Promise<void>((resolve, reject) => socket.send(message, port, "127.0.0.1", (e) => (e ? reject(e) : resolve())));
  for (let seq = 0; seq < 20; seq++) {
    await send(JSON.stringify({ token, seq, t: seq * 100, v: { "alt.baro_ft": 1000 + seq * 10, "gear.handle": seq < 10 ? "DOWN" : "UP" } }));
  }
  await send(JSON.stringify({ token, seq: 19, t: 1900, v: { "alt.baro_ft": 1190, "gear.handle": "UP" } }));
  await send("{not json");
  socket.close();

  await expect(page.getByTestId("capture-received")).toHaveText("22");
  await expect(page.getByTestId("capture-malformed")).toHaveText("1");
  await expect(page.getByTestId("capture-duplicates")).toHaveText("1");
  const latest = page.getByRole("table", { name: "Latest value of every channel" });
  await expect(latest.getByRole("row", { name: /alt\.baro_ft/ })).toContainText("1190");
  await expect(latest.getByRole("row", { name: /gear\.handle/ })).toContainText("UP");
  await expect(page.getByText("Last refused message")).toBeVisible();
  await shot(page, "capture-live");

  await page.getByRole("button", { name: "Stop and save as recording" }).click();
  await expect(page.getByText("saved as a recording")).toBeVisible();
  await page.getByRole("link", { name: "Open the recording →" }).click();
  await expect(page.getByRole("heading", { name: "Kitchen-table circuit" })).toBeVisible();
  await expect(page.getByText("live capture", { exact: true })).toBeVisible();
  // A Panelproof file is generated from the capture; there is no uploaded original to download.
  await expect(page.getByRole("link", { name: "Download the uploaded original" })).toHaveCount(0);

  // The capture page lists past captures with their counters and the recording each became.
  await page.getByRole("link", { name: "Capture live" }).click();
  const past = page.getByRole("table", { name: "Captures" });
  const row = past.getByRole("row", { name: "Capture Kitchen-table circuit" });
  await expect(row).toContainText("saved as a recording");
  await expect(row.getByRole("cell").nth(2)).toHaveText("22");
  await expect(row.getByRole("cell").nth(3)).toHaveText("1");
  await expect(row.getByRole("cell").nth(5)).toHaveText("1");
  await shot(page, "capture-list");
  await row.getByRole("link", { name: "Open the recording" }).click();
  await expect(page.getByRole("heading", { name: "Kitchen-table circuit" })).toBeVisible();
});

test("a builder cancels an upload while it is sending, and nothing is imported", async ({ page }) => {
  await ownerWithAirframe(page, "Cancelled Upload Rig");
  // Hold the upload in the browser so it is still sending when Cancel is pressed.
  let held = false;
  await page.route("**/recordings/uploads?**", () => {
    held = true; // never answered: the request only ends by being aborted
  });
  const form = await openUpload(page);
  await form.getByLabel("File", { exact: true }).setInputFiles({ name: "long-flight.ppr.jsonl", mimeType: "application/x-ndjson", buffer: Buffer.from(panelproofFile()) });
  await form.getByLabel("Airframe").selectOption({ label: `${AIRFRAME} (0 channels)` });
  await form.getByRole("button", { name: "Upload and import" }).click();
  await expect(form.getByRole("button", { name: "Sending…" })).toBeDisabled();
  await expect.poll(() => held).toBe(true);
  await form.getByRole("button", { name: "Cancel upload" }).click();
  await expect(form.getByTestId("upload-cancelled")).toContainText("Upload cancelled. Nothing was kept");
  await expect(form.getByRole("button", { name: "Upload and import" })).toBeEnabled();
  await expect(form.getByRole("button", { name: "Cancel upload" })).toHaveCount(0);
  await shot(page, "recordings-upload-cancelled");
  await page.unroute("**/recordings/uploads?**");
  await expect(page.getByRole("list", { name: "Recent imports" })).toHaveCount(0);
  await expect(page.getByText("No recordings yet.")).toBeVisible();
});

test("a CSV read with the wrong delimiter is refused, saying where and why", async ({ page }) => {
  await ownerWithAirframe(page, "Garage Gear Panel");
  const form = await openUpload(page);
  const csv = "time [ms];alt.baro_ft [ft];gear.handle\n0;500;DOWN\n1000;520;DOWN\n2000;540;UP\n";
  await form.getByLabel("File", { exact: true }).setInputFiles({ name: "semicolons.csv", mimeType: "text/csv", buffer: Buffer.from(csv) });
  await expect(form.getByRole("radio", { name: "CSV" })).toBeChecked();
  await expect(form.getByTestId("csv-first-line")).toHaveText("time [ms];alt.baro_ft [ft];gear.handle");
  // Delimiter and decimal mark are never guessed: without them the form refuses.
  await form.getByLabel("Name", { exact: true }).fill("Semicolon file");
  await form.getByLabel("Airframe").selectOption({ label: `${AIRFRAME} (0 channels)` });
  await form.getByRole("button", { name: "Upload and import" }).click();
  await expect(form.getByRole("alert")).toContainText("delimiter and decimal mark");

  await form.getByLabel("Delimiter").selectOption("comma");
  await form.getByLabel("Decimal mark").selectOption("point");
  await shot(page, "recordings-upload-csv");
  await form.getByRole("button", { name: "Upload and import" }).click();

  const row = page.getByRole("listitem", { name: "Import of Semicolon file" });
  await expect(row.getByText("failed", { exact: true })).toBeVisible({ timeout: 30_000 });
  await expect(row.getByTestId("import-where")).toHaveText(/row 1/);
  await expect(row.getByTestId("import-why")).toContainText("choose ';' as the delimiter");
  await shot(page, "recordings-import-failed");
  // All or nothing: no recording was made. The table lists the failed import, with where and why, and nothing to open.
  const table = page.getByRole("table", { name: "Recordings" });
  const failed = table.getByRole("row", { name: /Semicolon file/ });
  await expect(failed.getByTestId("recording-failure")).toContainText("failed");
  await expect(failed.getByTestId("recording-failure")).toContainText(/Where: row 1/);
  await expect(failed.getByTestId("recording-failure")).toContainText("choose ';' as the delimiter");
  await expect(failed.getByRole("link")).toHaveCount(0);
});

async function post(request: APIRequestContext, path: string, data: unknown) {
  const response = await request.post(path, { data, headers: { origin: test.info().project.use.baseURL! } });
  expect(response.ok(), `${path}: ${response.status()} ${await response.text()}`).toBeTruthy();
  return response.json();
}

test("a viewer reads the recordings but sees no upload, compose, rename or delete", async ({ browser }) => {
  const ownerContext = await browser.newContext();
  const owner = await ownerContext.newPage();
  const workshopId = await ownerWithAirframe(owner, "Shared Pedestal Build");
  const airframes = await (await owner.request.get(`/api/workshops/${workshopId}/airframes`)).json();
  // A recording made quickly from a scenario, so the viewer has something to read.
  await post(owner.request, `/api/workshops/${workshopId}/recordings/from-scenario`, {
    name: "Lamp test only",
    airframeId: airframes[0].id,
    scenario: {
      format: "panelproof-scenario",
      version: 1,
      name: "Lamp test only",
      airframe: AIRFRAME,
      sampleRateHz: 10,
      channels: [{ name: "annun.test", kind: "boolean" }],
      initial: { "annun.test": false },
      tracks: [{ channel: "annun.test", steps: [{ at: 1000, pulse: { value: true, durationMs: 2000 } }] }],
    },
  });
  const viewerEmail = `viewer-${stamp()}@panelproof.example`;
  const invitation = await post(owner.request, `/api/workshops/${workshopId}/invitations`, { email: viewerEmail, role: "viewer" });

  const viewerContext = await browser.newContext();
  const viewer = await viewerContext.newPage();
  await signUp(viewer, "Sam Lookon", viewerEmail);
  await post(viewer.request, `/api/invitations/${invitation.id}/accept`, {});

  await viewer.goto(`/w/${workshopId}`);
  await viewer.getByRole("link", { name: "Open recordings →" }).click();
  const table = viewer.getByRole("table", { name: "Recordings" });
  await expect(table.getByRole("link", { name: "Lamp test only" })).toBeVisible();
  await expect(viewer.getByRole("button", { name: "Upload a file" })).toHaveCount(0);
  await expect(viewer.getByRole("link", { name: "Compose a scenario" })).toHaveCount(0);
  await expect(viewer.getByRole("link", { name: "Capture live" })).toHaveCount(0);
  await expect(table.getByRole("button")).toHaveCount(9); // only the sortable column headers
  await expect(table.getByRole("button", { name: /Rename|Delete/ })).toHaveCount(0);
  await shot(viewer, "recordings-viewer");

  await table.getByRole("link", { name: "Lamp test only" }).click();
  await expect(viewer.getByRole("heading", { name: "Lamp test only" })).toBeVisible();
  await expect(viewer.getByRole("link", { name: "Download Panelproof file" })).toBeVisible();
  await expect(viewer.getByRole("button", { name: "Rename" })).toHaveCount(0);
  await expect(viewer.getByRole("button", { name: "Delete" })).toHaveCount(0);
  await ownerContext.close();
  await viewerContext.close();
});
