import { expect, test, type Page } from "@playwright/test";
import { airframeWith, importedRecording, ownerOfNewWorkshop, panelFrom } from "./support";

/**
 * The run console's live features (issue 6) in the browser, with this browser as the virtual
 * panel: a fault injected from the console before play, the set-up check blocking play until
 * overridden, the input walk answered by moving the virtual panel's lever and pressing its button by hand, keys (arrow
 * steps, space pauses and plays, N goes to the next mismatch) and observation questions answered
 * by key and by click, ending in an observed mismatch.
 */


// An invented test rig: the FIRE warning lights from 2 s to 4 s; the gear lever goes up at 2 s; 16 s long.
const CHANNELS = [
  { name: "elec.master", kind: "boolean" },
  { name: "eng1.fire_warning", kind: "boolean" },
  { name: "gear.handle", kind: "enum", values: ["UP", "DOWN"] },
  { name: "xpdr.code", kind: "text", maxLength: 4 },
  { name: "clock.s", kind: "number", unit: "s" },
  { name: "annun.ack", kind: "boolean" },
];
// A clock readout ticks every second: the panel reports at each tick, and the bench's live judge
// settles mismatches as reports come in, so the live mismatch table fills while the run plays.
const EVENTS: Record<number, Record<string, unknown>> = {
  0: { "elec.master": true, "eng1.fire_warning": false, "gear.handle": "DOWN", "xpdr.code": "1200" },
  2000: { "eng1.fire_warning": true, "gear.handle": "UP" },
  3000: { "xpdr.code": "7700" },
  4000: { "eng1.fire_warning": false },
  16000: { "xpdr.code": "7000" },
};
const RECORDING = [
  JSON.stringify({ format: "panelproof-recording", version: 1, airframe: "Rig", channels: CHANNELS }),
  ...Array.from({ length: 17 }, (_, i) => JSON.stringify({ t: i * 1000, v: { "clock.s": i, ...(EVENTS[i * 1000] ?? {}) } })),
  "",
].join("\n");
const DEFINITION = {
  id: "console-rig",
  name: "Console rig",
  airframe: "rig",
  elements: [
    { kind: "lamp", id: "fire", label: "FIRE", drive: { mode: "condition", on: { channel: "eng1.fire_warning" } }, power: { channel: "elec.master" } },
    { kind: "readout", id: "xpdr", label: "XPDR", value: { channel: "xpdr.code" }, format: { width: 4 } },
    { kind: "lever", id: "gear", label: "GEAR", positions: ["up", "down"], position: { channel: "gear.handle", map: { UP: "up", DOWN: "down" } } },
    { kind: "readout", id: "clock", label: "CLOCK", value: { channel: "clock.s" }, format: { width: 2 } },
    { kind: "button", id: "ack", label: "ACK", pressed: { channel: "annun.ack" } },
  ],
};

/** Keys go to the console, not to a focused button (which takes space itself). */
const blur = (page: Page) => page.evaluate(() => (document.activeElement as HTMLElement | null)?.blur());


test("set-up check, input walk, keys and observations in the run console", async ({ page }) => {
  test.setTimeout(180_000);
  const { workshopId, api } = await ownerOfNewWorkshop(page, "Ada Solder", "console", "Larkfield Garage Cockpit Club");
  const airframeId = await airframeWith(page, api, "Console rig", CHANNELS);
  await importedRecording(page, api, airframeId, "Console flight", Buffer.from(RECORDING));
  const panelId = await panelFrom(page, api, airframeId, DEFINITION);

  // Set up: virtual link, speed 1, the FIRE lamp watched by eye.
  await page.goto(`/w/${workshopId}/runs/new`);
  await page.getByLabel("Run name").fill("Console checks");
  await page.getByLabel("Speed").selectOption("1");
  await page.getByLabel("Lag budget (ms)").fill("1000");
  const link = page.getByRole("group", { name: "Panel 1" });
  await link.getByRole("group", { name: "Watched by eye" }).getByLabel("FIRE").check();
  await page.getByRole("button", { name: "Create the run" }).click();
  await expect(page.getByRole("heading", { name: "Console checks" })).toBeVisible();
  await expect(page.getByTestId(`link-${panelId}`)).toContainText("virtual link: ● connected", { timeout: 20_000 });
  await expect(page.getByTestId(`observed-${panelId}`)).toContainText("FIRE");
  const state = page.getByRole("status", { name: "Run state" }).locator("[data-state]");
  const position = page.getByTestId("position");

  // A fault injected from the console, before play: the FIRE lamp stuck dark.
  await page.getByText("Injected faults (0)").click();
  const faults = page.getByRole("group", { name: "Injected faults" });
  await faults.getByLabel("Fault", { exact: true }).selectOption("lamp_stuck");
  await faults.getByLabel("Element", { exact: true }).selectOption("fire");
  await faults.getByLabel("Stuck").selectOption("dark");
  await faults.getByRole("button", { name: "Add the fault" }).click();
  await expect(page.getByLabel("Injected faults").first()).toContainText("lamp stuck on fire");

  // The set-up check: the lever as the recording starts, then moved up by hand.
  const setup = page.getByTestId("setup-check");
  await expect(setup).toContainText("the panel's inputs are where the recording starts");
  await page.getByLabel("Move GEAR").selectOption("up");
  await expect(page.getByTestId("setup-gear")).toHaveText("▲ GEAR lever is up, the recording starts down");
  await page.getByRole("button", { name: "▶ Play" }).click();
  await expect(setup).toContainText("Play waits until they agree.");
  await expect(state).not.toHaveAttribute("data-state", "playing");

  // The input walk: the lever rests up, so it asks down first, then up again.
  await page.getByLabel("Wait per step (s)").fill("20");
  await page.getByRole("button", { name: "Walk the inputs" }).click();
  const prompt = page.getByTestId("walk-prompt");
  await expect(prompt).toHaveText("Move the GEAR lever to down");
  await expect(page.getByRole("button", { name: "▶ Play" })).toBeDisabled();
  await page.getByLabel("Move GEAR").selectOption("down");
  await expect(prompt).toHaveText("Move the GEAR lever to up");
  await page.getByLabel("Move GEAR").selectOption("up");
  // A push button is pressed on the virtual panel by hand: the link says pressed, then let go.
  await expect(prompt).toHaveText("Press the ACK button");
  await page.getByRole("button", { name: "Press ACK" }).click();
  const results = page.getByRole("table", { name: "Input walk results" });
  await expect(results.locator('tr[data-result="pass"]')).toHaveCount(3);
  await expect(prompt).toHaveCount(0);

  // Keys: the right arrow steps one frame at a time.
  await blur(page);
  await page.keyboard.press("ArrowRight");
  await expect(state).toHaveAttribute("data-state", "paused");
  await page.keyboard.press("ArrowRight");
  await expect(position).toContainText("0:01.0 /");

  // Back to the start, where the lever (still up by hand) differs from the recording: play anyway.
  await page.getByLabel("Go to (m:ss.t or seconds)").fill("0");
  await page.getByRole("button", { name: "Go", exact: true }).click();
  await expect(position).toContainText("0:00.0 /");
  await expect(page.getByTestId("setup-gear")).toBeVisible();
  await page.getByRole("button", { name: "Play anyway" }).click();
  await expect(state).toHaveAttribute("data-state", "playing");

  // The first question, answered "no" with its key (the lamp is stuck dark).
  const question = page.getByTestId("observation-question");
  await expect(question).toHaveText("Is the FIRE lamp lit now?", { timeout: 20_000 });
  await expect(state).toHaveAttribute("data-state", "paused");
  // While paused, the lever goes down by hand (the recording has it up from 2 s): a mismatch begins.
  await page.getByLabel("Move GEAR").selectOption("down");
  await blur(page);
  await page.keyboard.press("n");
  await expect(question).toHaveCount(0);
  await expect(state).toHaveAttribute("data-state", "playing");
  // Space pauses and plays.
  await blur(page);
  await page.keyboard.press(" ");
  await expect(state).toHaveAttribute("data-state", "paused");
  await blur(page);
  await page.keyboard.press(" ");
  await expect(state).toHaveAttribute("data-state", "playing");
  await expect(question).toHaveText("Is the FIRE lamp dark now?", { timeout: 20_000 });
  // Back up by hand: the lever's mismatch ends here.
  await page.getByLabel("Move GEAR").selectOption("up");
  await page.getByRole("alertdialog", { name: "Observation" }).getByRole("button", { name: "Yes" }).click();
  await expect(question).toHaveCount(0);

  // N goes to the next mismatch: the lever down by hand from about 2.3 s, after going back to 1 s.
  const table = page.getByRole("table", { name: "Mismatches" });
  await expect(table.locator('tbody tr[data-element="gear"]')).toHaveCount(2, { timeout: 20_000 });
  await blur(page);
  await page.keyboard.press(" ");
  await expect(state).toHaveAttribute("data-state", "paused");
  await page.getByLabel("Go to (m:ss.t or seconds)").fill("1");
  await page.getByRole("button", { name: "Go", exact: true }).click();
  await expect(position).toContainText("0:01.0 /");
  await blur(page);
  await page.keyboard.press("n");
  await expect(position).toContainText(/0:02\.\d \//);
  await blur(page);
  await page.keyboard.press(" ");
  await expect(state).toHaveAttribute("data-state", "finished", { timeout: 60_000 });

  // The answers: a "no" is an observed mismatch, listed with the FIRE lamp; both answers kept.
  await expect(page.getByRole("table", { name: "Observation checkpoints" }).locator('tr[data-answer="no"]')).toHaveCount(1);
  await expect(page.getByRole("table", { name: "Observation checkpoints" }).locator('tr[data-answer="yes"]')).toHaveCount(1);
  await expect(table).toContainText("observed (answered no)");
  await expect(page.getByTestId("failing-fire")).toBeVisible();
});
