import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { expect, test } from "@playwright/test";
import sharp from "sharp";
import { airframeWith, importedRecording, ownerOfNewWorkshop, panelFrom } from "./support";
import { demoChannels } from "../../shared/panel/demo/airframe";
import { warningPanel } from "../../shared/panel/demo/panels";

/**
 * Runs in the browser (issues 5 and 6): a builder sets up a run of the demo flight into the
 * warning panel over a virtual link with two injected faults, plays it to the end in the console
 * while this browser plays the panel, sees exactly the two faulty elements marked and listed,
 * shares the report (opened in a fresh, signed-out context) and downloads the JUnit file. The two are
 * also marked on the photo of the real panel, at their markers.
 */

const DEMO_FLIGHT = fileURLToPath(new URL("../../recordings/demo-pattern-flight.ppr.jsonl", import.meta.url));


test("a builder replays a flight into a virtual panel with two faults, sees them, shares the report and downloads JUnit", async ({ page, browser }) => {
  test.setTimeout(180_000);
  const { api } = await ownerOfNewWorkshop(page, "Ada Solder", "run-owner", "Garage Bench Runs");

  // Airframe, catalogue, the demo flight and the warning panel, through the API.
  const airframeId = await airframeWith(page, api, "Marlin TX-2 (invented twin)", demoChannels);
  await importedRecording(page, api, airframeId, "Pattern flight", readFileSync(DEMO_FLIGHT), { addDraftChannels: true });
  const panelId = await panelFrom(page, api, airframeId, warningPanel);
  // A photo of the real panel with markers on the two elements the faults will hit, and one more.
  const photo = await sharp(Buffer.from(`<svg xmlns="http://www.w3.org/2000/svg" width="1200" height="400"><rect width="1200" height="400" fill="#2a2f34"/></svg>`)).png().toBuffer();
  expect((await page.request.put(`${api}/panels/${panelId}/photo`, { headers: { "content-type": "image/png" }, data: photo })).status()).toBe(200);
  const markers = { "fire-left": { x: 0.2, y: 0.5 }, "gen-fail": { x: 0.5, y: 0.5 }, "fire-right": { x: 0.8, y: 0.5 } };
  expect((await page.request.put(`${api}/panels/${panelId}/markers`, { data: { markers } })).status()).toBe(200);

  // Set up the run through the UI: virtual link, two faults on two elements, speed 8.
  await page.getByRole("navigation", { name: "Workshop" }).getByRole("link", { name: "Runs" }).click();
  await expect(page.getByText("No runs yet.")).toBeVisible();
  await page.getByRole("link", { name: "Set up a run" }).click();
  await page.getByLabel("Run name").fill("Warnings with two faults");
  await expect(page.getByLabel("Recording")).toHaveValue(/.+/);
  await page.getByLabel("Speed").selectOption("4");
  // A browser on a busy two-core machine answers within tens of ms; at 4x that is four times later in recording time.
  await page.getByLabel("Lag budget (ms)").fill("1000");
  const link = page.getByRole("group", { name: "Panel 1" });
  await expect(link.getByLabel("Link")).toHaveValue("virtual");
  const faults = link.getByRole("group", { name: "Injected faults" });
  await faults.getByLabel("Fault", { exact: true }).selectOption("lamp_stuck");
  await faults.getByLabel("Element", { exact: true }).selectOption("fire-left");
  await faults.getByLabel("Stuck").selectOption("lit");
  await faults.getByRole("button", { name: "Add the fault" }).click();
  await faults.getByLabel("Fault", { exact: true }).selectOption("lamp_inverted");
  await faults.getByLabel("Element", { exact: true }).selectOption("gen-fail");
  await faults.getByRole("button", { name: "Add the fault" }).click();
  await expect(faults.getByRole("list", { name: "Faults to inject" }).getByRole("listitem")).toHaveCount(2);
  await page.getByRole("button", { name: "Create the run" }).click();

  // The console: this browser joins as the virtual panel; play to the end.
  await expect(page.getByRole("heading", { name: "Warnings with two faults" })).toBeVisible();
  const runId = /\/runs\/([^/]+)$/.exec(page.url())![1];
  await expect(page.getByTestId(`link-${panelId}`)).toContainText("virtual link: ● connected", { timeout: 20_000 });
  await page.getByRole("button", { name: "▶ Play" }).click();
  await expect(page.getByRole("status", { name: "Run state" }).locator("[data-state]")).toHaveAttribute("data-state", "finished", { timeout: 90_000 });

  // Exactly the two faulty elements are marked on the drawing and listed.
  const failing = page.getByRole("list", { name: "Failing elements of Glareshield warnings" });
  await expect(failing.getByRole("listitem")).toHaveCount(2);
  await expect(page.getByTestId("failing-fire-left")).toBeVisible();
  await expect(page.getByTestId("failing-gen-fail")).toBeVisible();
  await expect(page.locator('[data-testid^="fail-mark-"]')).toHaveCount(2);
  await expect(page.getByTestId("fail-mark-fire-left")).toBeAttached();
  await expect(page.getByTestId("fail-mark-gen-fail")).toBeAttached();
  // The same two on the photo of the real panel: ringed, crossed and labelled at their markers.
  await page.getByRole("radiogroup", { name: "Show Glareshield warnings as" }).getByRole("radio", { name: "Photo with markers" }).click();
  await expect(page.getByRole("img", { name: "Photo of Glareshield warnings" })).toBeVisible();
  await expect(page.getByTestId("photo-fail-fire-left")).toContainText("✕ FAIL FIRE L");
  await expect(page.getByTestId("photo-fail-gen-fail")).toContainText("✕ FAIL GEN");
  await expect(page.getByTestId("photo-mark-fire-right")).toBeAttached();
  await expect(page.locator('[data-testid^="photo-fail-"]')).toHaveCount(2);
  // SHOTS=/some/folder keeps a picture of it.
  if (process.env.SHOTS) await page.getByTestId("panel-photo-live").screenshot({ path: `${process.env.SHOTS}/runs-photo-marks.png` });
  const table = page.getByRole("table", { name: "Mismatches" });
  await expect
    .poll(() => table.locator("tbody tr[data-element]").evaluateAll((rows) => [...new Set(rows.map((r) => r.getAttribute("data-element")))].sort()), { timeout: 15_000 })
    .toEqual(["fire-left", "gen-fail"]);

  // The report: statuses in words, a share link shown once, the JUnit file.
  await page.getByRole("link", { name: "Open the report" }).click();
  await expect(page.getByTestId("verdict")).toContainText("Not passed");
  await expect(page.getByTestId("report-element-fire-left")).toContainText("FAIL");
  await expect(page.getByTestId("report-element-gen-fail")).toContainText("FAIL");
  await page.getByRole("button", { name: "Make a share link" }).click();
  const shareUrl = await page.getByRole("textbox", { name: "Share link" }).inputValue();
  expect(shareUrl).toMatch(/\/shared\/[A-Za-z0-9_-]{20,}$/);

  const stranger = await browser.newContext();
  const reader = await stranger.newPage();
  await reader.goto(new URL(shareUrl).pathname);
  await expect(reader.getByRole("heading", { name: "Warnings with two faults" })).toBeVisible();
  await expect(reader.getByTestId("report-element-fire-left")).toContainText("FAIL");
  await expect(reader.getByTestId("report-element-gen-fail")).toContainText("FAIL");

  const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "⤓ Download JUnit XML" }).click()]);
  expect(download.suggestedFilename()).toBe(`run-${runId}.junit.xml`);
  const xml = readFileSync(await download.path(), "utf8");
  expect(xml).toContain("<testsuite");
  expect(xml).toContain("fire-left");
  expect(xml).toContain("<failure");

  // Revoked: the public page says so.
  await page.getByRole("button", { name: "Revoke" }).click();
  await expect(page.getByRole("table", { name: "Share links" })).toContainText("revoked");
  await reader.reload();
  await expect(reader.getByRole("heading", { name: "■ This share link was revoked" })).toBeVisible();
  await stranger.close();
});
