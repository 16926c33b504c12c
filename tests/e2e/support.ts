import { expect, type Page } from "@playwright/test";

/**
 * What every browser test does before its own path: a fresh person and workshop, and the
 * airframe, recording and panel it needs made through the API (the paths that build those in
 * the UI have their own tests). Each test makes its own people, so tests never share data.
 */

/** A short unique suffix for e-mail addresses and names. */
export const stamp = () => `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 6)}`;

export const TEST_PASSWORD = "rivet-gauge-3141";

export async function signUp(page: Page, name: string, email: string) {
  await page.goto("/sign-up");
  await page.getByLabel("Your name").fill(name);
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(TEST_PASSWORD);
  await page.getByRole("button", { name: "Create account" }).click();
  await expect(page.getByRole("heading", { name: "Your workshops" })).toBeVisible();
}

/** Signs a new owner up and starts a workshop; answers its id and its API base path. */
export async function ownerOfNewWorkshop(page: Page, person: string, emailPrefix: string, workshop: string) {
  await signUp(page, person, `${emailPrefix}-${stamp()}@panelproof.example`);
  await page.getByLabel("Workshop name").fill(workshop);
  await page.getByRole("button", { name: "Create workshop" }).click();
  await expect(page.getByRole("heading", { name: workshop })).toBeVisible();
  const workshopId = /\/w\/([^/]+)/.exec(page.url())![1];
  return { workshopId, api: `/api/workshops/${workshopId}` };
}

/** An airframe with this channel catalogue; answers its id. */
export async function airframeWith(page: Page, api: string, name: string, channels: unknown[]): Promise<string> {
  const airframe = await page.request.post(`${api}/airframes`, { data: { name } });
  expect(airframe.status()).toBe(201);
  const airframeId = (await airframe.json()).id as string;
  expect((await page.request.put(`${api}/airframes/${airframeId}/channels`, { data: { channels } })).status()).toBe(200);
  return airframeId;
}

/** Uploads a Panelproof recording file and waits for its import; answers the recording's id. */
export async function importedRecording(page: Page, api: string, airframeId: string, name: string, bytes: Buffer, options: { addDraftChannels?: boolean } = {}): Promise<string> {
  const query = new URLSearchParams({ name, airframeId, format: "ppr", ...(options.addDraftChannels ? { addDraftChannels: "true" } : {}) });
  const upload = await page.request.post(`${api}/recordings/uploads?${query}`, { headers: { "content-type": "application/octet-stream" }, data: bytes });
  expect(upload.status()).toBe(202);
  const importId = (await upload.json()).id as string;
  await expect.poll(async () => (await (await page.request.get(`${api}/imports/${importId}`)).json()).state, { timeout: 30_000 }).toBe("done");
  return (await (await page.request.get(`${api}/imports/${importId}`)).json()).recordingId as string;
}

/** A panel from a definition; answers its id. */
export async function panelFrom(page: Page, api: string, airframeId: string, definition: unknown): Promise<string> {
  const created = await page.request.post(`${api}/panels`, { data: { airframeId, definition } });
  expect(created.status()).toBe(201);
  return (await created.json()).id as string;
}
