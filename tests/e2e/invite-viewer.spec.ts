import { expect, test } from "@playwright/test";
import { stamp } from "./support";

test("a new builder starts a workshop and invites a viewer, who joins from the outbox and cannot invite", async ({ browser }) => {
  const ownerEmail = `owner-${stamp()}@panelproof.example`;
  const viewerEmail = `viewer-${stamp()}@panelproof.example`;

  // The first person signs up and starts a workshop.
  const ownerContext = await browser.newContext();
  const owner = await ownerContext.newPage();
  await owner.goto("/");
  await expect(owner).toHaveURL(/\/sign-in/);
  await owner.getByRole("link", { name: "Create an account" }).click();
  await owner.getByLabel("Your name").fill("Juno Solder");
  await owner.getByLabel("E-mail").fill(ownerEmail);
  await owner.getByLabel("Password").fill("hangar-lights-42");
  await owner.getByRole("button", { name: "Create account" }).click();
  await expect(owner.getByRole("heading", { name: "Your workshops" })).toBeVisible();
  await owner.getByLabel("Workshop name").fill("Shed Forward Panel");
  await owner.getByRole("button", { name: "Create workshop" }).click();
  await expect(owner.getByRole("heading", { name: "Shed Forward Panel" })).toBeVisible();
  await expect(owner.getByText("owner", { exact: true })).toBeVisible();

  // The owner invites a second address as viewer.
  await owner.getByRole("link", { name: "People" }).click();
  const inviteForm = owner.getByRole("form", { name: "Invite someone" });
  await inviteForm.getByLabel("E-mail address").fill(viewerEmail);
  await inviteForm.getByLabel("Role").selectOption("viewer");
  await inviteForm.getByRole("button", { name: "Send invitation" }).click();
  await expect(owner.getByText(`Invitation sent to ${viewerEmail}.`)).toBeVisible();
  await expect(owner.getByRole("list", { name: "Pending invitations" })).toContainText(viewerEmail);

  // The second person, not signed in, opens the invitation from the outbox.
  const viewerContext = await browser.newContext();
  const viewer = await viewerContext.newPage();
  await viewer.goto("/outbox");
  await viewer.getByRole("button", { name: new RegExp(`${viewerEmail}.*invites you to the Shed Forward Panel workshop`) }).click();
  await viewer.getByTestId("outbox-body").getByRole("link").click();
  await expect(viewer.getByRole("heading", { name: "Join Shed Forward Panel" })).toBeVisible();

  await viewer.getByRole("link", { name: "Create an account" }).click();
  await expect(viewer.getByLabel("E-mail")).toHaveValue(viewerEmail);
  await viewer.getByLabel("Your name").fill("Pip Watcher");
  await viewer.getByLabel("Password").fill("quiet-dials-77");
  await viewer.getByRole("button", { name: "Create account" }).click();
  await viewer.getByRole("button", { name: "Join the workshop" }).click();

  await expect(viewer.getByRole("heading", { name: "Shed Forward Panel" })).toBeVisible();
  await expect(viewer.getByText("viewer", { exact: true }).first()).toBeVisible();
  await viewer.getByRole("link", { name: "People" }).click();
  await expect(viewer.getByRole("cell", { name: "Pip Watcher (you)" })).toBeVisible();
  // A viewer sees the people but no invitation form and no role controls.
  await expect(viewer.getByRole("form", { name: "Invite someone" })).toHaveCount(0);
  await expect(viewer.getByRole("button", { name: "Send invitation" })).toHaveCount(0);
  await expect(viewer.getByRole("combobox")).toHaveCount(0);
  await viewer.screenshot({ path: ".data/test-results/viewer-people.png", fullPage: true });

  // The owner now sees the viewer among the people.
  await owner.reload();
  await expect(owner.getByRole("cell", { name: "Pip Watcher" })).toBeVisible();
  await ownerContext.close();
  await viewerContext.close();
});

test("the demo sign-in is refused with a wrong password and says so", async ({ page }) => {
  await page.goto("/sign-in");
  await page.getByLabel("E-mail").fill(`nobody-${stamp()}@panelproof.example`);
  await page.getByLabel("Password").fill("not-the-password");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("alert")).toContainText("Invalid email or password");
});

test("a forgotten password is reset from the outbox link", async ({ browser }) => {
  const email = `forget-${stamp()}@panelproof.example`;
  const context = await browser.newContext();
  const page = await context.newPage();
  await page.goto("/sign-up");
  await page.getByLabel("Your name").fill("Ash Forgetful");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill("old-password-11");
  await page.getByRole("button", { name: "Create account" }).click();
  await expect(page.getByRole("heading", { name: "Your workshops" })).toBeVisible();
  await page.getByRole("button", { name: "Sign out" }).click();

  await page.getByRole("link", { name: "Forgot your password?" }).click();
  await page.getByLabel("E-mail").fill(email);
  await page.getByRole("button", { name: "Send the link" }).click();
  await expect(page.getByRole("status")).toContainText("a link to choose a new password is on its way");

  await page.goto("/outbox");
  await page.getByRole("button", { name: new RegExp(`${email}.*Reset your Panelproof password`) }).click();
  await page.getByTestId("outbox-body").getByRole("link").click();
  await page.getByLabel("New password").fill("new-password-22");
  await page.getByRole("button", { name: "Save the new password" }).click();
  await expect(page.getByText("Your password is changed.")).toBeVisible();

  await page.getByRole("link", { name: "Sign in" }).click();
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill("new-password-22");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("heading", { name: "Your workshops" })).toBeVisible();
  await context.close();
});
