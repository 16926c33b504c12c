import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { expect, test, type Page } from "@playwright/test";
import { demoChannels } from "../../shared/panel/demo/airframe";
import { warningPanel } from "../../shared/panel/demo/panels";

/**
 * Runs in the browser (issues 5 and 6): a builder sets up a run of the demo flight into the
 * warning panel over a virtual link with two injected faults, plays it to the end in the console
 * while this browser plays the panel, sees exactly the two faulty elements marked and listed,
 * shares the report (opened in a fresh, signed-out context) and downloads the JUnit file.
 */

const stamp = () => `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 6)}`;
const DEMO_FLIGHT = fileURLToPath(new URL("../../recordings/demo-pattern-flight.ppr.jsonl", import.meta.url));

async function signUp(page: Page, name: string, email: string) {
  await page.goto("/sign-up");
  await page.getByLabel("Your name").fill(name);
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill("rivet-gauge-3141");
  await page.getByRole("button", { name: "Create account" }).click();
  await expect(page.getByRole("heading", { name: "Your workshops" })).toBeVisible();
}

test("a builder replays a flight into a virtual panel with two faults, sees them, shares the report and downloads JUnit", async ({ page, browser }) => {
  test.setTimeout(180_000);
  await signUp(page, "Ada Solder", `run-owner-${stamp()}@panelproof.example`);
  await page.getByLabel("Workshop name").fill("Garage Bench Runs");
  await page.getByRole("button", { name: "Create workshop" }).click();
  await expect(page.getByRole("heading", { name: "Garage Bench Runs" })).toBeVisible();
  const workshopId = /\/w\/([^/]+)/.exec(page.url())![1];
  const api = `/api/workshops/${workshopId}`;

  // Airframe, catalogue, the demo flight and the warning panel, through the API.
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
  const created = await page.request.post(`${api}/panels`, { data: { airframeId, definition: warningPanel } });
  expect(created.status()).toBe(201);
  const panelId = (await created.json()).id as string;

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
