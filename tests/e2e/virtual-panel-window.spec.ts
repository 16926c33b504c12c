import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { expect, test, type Page } from "@playwright/test";
import { airframeWith, importedRecording, ownerOfNewWorkshop, panelFrom } from "./support";
import { demoChannels } from "../../shared/panel/demo/airframe";
import { flightGauges } from "../../shared/panel/demo/panels";

/**
 * Issue 5's path: a virtual panel open in one page and the run console in another. The builder
 * opens the panel in its own window from the console, presses play in the console, and sees the
 * panel follow (its needles move); the console leaves the link to that window and draws what it
 * shows. Closing the window hands the panel back to the console.
 */
const DEMO_FLIGHT = fileURLToPath(new URL("../../recordings/demo-pattern-flight.ppr.jsonl", import.meta.url));


const angleOf = (page: Page, pointer: string) => page.locator(`[data-pointer="${pointer}"]`).first().getAttribute("data-angle");

test("a virtual panel in its own window follows the run played from the console", async ({ page, context }) => {
  test.setTimeout(150_000);
  const { workshopId, api } = await ownerOfNewWorkshop(page, "Ines Harness", "window-owner", "Two Window Bench");
  const airframeId = await airframeWith(page, api, "Marlin TX-2 (invented twin)", demoChannels);
  const recordingId = await importedRecording(page, api, airframeId, "Pattern flight", readFileSync(DEMO_FLIGHT), { addDraftChannels: true });
  const panelId = await panelFrom(page, api, airframeId, flightGauges);
  const made = await page.request.post(`${api}/runs`, { data: { name: "Gauges in a second window", recordingId, speed: 4, links: [{ kind: "virtual", panelId }] } });
  expect(made.status()).toBe(201);
  const runId = (await made.json()).id as string;

  // The console first: it hosts the panel until a window of its own takes it.
  await page.goto(`/w/${workshopId}/runs/${runId}`);
  await expect(page.getByRole("heading", { name: "Gauges in a second window" })).toBeVisible();
  await expect(page.getByTestId(`link-${panelId}`)).toContainText("● connected", { timeout: 20_000 });

  // Open the panel in its own window (a second page of the same browser).
  const [panelPage] = await Promise.all([context.waitForEvent("page"), page.getByRole("link", { name: "Open in its own window" }).click()]);
  await expect(panelPage.getByRole("heading", { name: /^Virtual panel: / })).toBeVisible();
  await expect(panelPage.getByTestId("virtual-link-state")).toContainText("● connected to the bench", { timeout: 20_000 });
  await expect(page.getByTestId(`link-${panelId}`)).toContainText("played in its own window", { timeout: 10_000 });

  // Play from the console; the window's needles move, and the console draws what the window shows.
  const before = await angleOf(panelPage, "airspeed");
  await page.getByRole("button", { name: "▶ Play" }).click();
  await expect.poll(() => angleOf(panelPage, "airspeed"), { timeout: 30_000 }).not.toBe(before);
  await expect.poll(async () => Number(await angleOf(page, "airspeed")), { timeout: 10_000 }).toBeGreaterThan(Number(before ?? 0));
  await expect(page.getByRole("status", { name: "Run state" }).locator("[data-state]")).toHaveAttribute("data-state", /playing|finished/);

  // The window closes: the console takes the panel back.
  await panelPage.close();
  await expect(page.getByTestId(`link-${panelId}`)).toContainText("this browser", { timeout: 15_000 });
  await page.getByRole("button", { name: "■ Stop and judge" }).click();
  await expect(page.getByRole("status", { name: "Run state" }).locator("[data-state]")).toHaveAttribute("data-state", "finished", { timeout: 30_000 });
});
