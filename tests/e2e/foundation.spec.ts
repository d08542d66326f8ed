import { expect, test } from "@playwright/test";
import { demoUser, signInAs } from "./support";

test("each demo role signs in and lands on its own start page", async ({ page }) => {
  for (const role of ["registrar", "consultant", "nurse"] as const) {
    await signInAs(page, role);
    await expect(page.getByRole("heading", { level: 1 })).toContainText("Today");
    await expect(page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Patients" })).toBeVisible();
    await expect(page.getByText("Estimates support, and never replace, clinical judgement.")).toBeVisible();
    await page.getByRole("button", { name: "Sign out" }).click();
    await expect(page).toHaveURL(/sign-in/);
  }
  await signInAs(page, "admin");
  await expect(page.getByRole("heading", { name: "Users" })).toBeVisible();
  await expect(page.getByText(demoUser("nurse").email)).toBeVisible();
});

test("a wrong password is refused with a plain message", async ({ page }) => {
  await page.goto("/sign-in");
  await page.getByLabel("E-mail").fill(demoUser("nurse").email);
  await page.getByLabel("Password").fill("certainly-wrong-9");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByText("That e-mail and password do not match an active account.")).toBeVisible();
});

test("a page visited without a session goes to sign-in", async ({ page }) => {
  await page.goto("/patients");
  await expect(page).toHaveURL(/sign-in/);
});

test("the registrar registers a patient, sees field messages first, then starts an episode", async ({ page }) => {
  await signInAs(page, "registrar");
  await page.getByRole("link", { name: "Register a patient" }).first().click();
  await page.getByRole("button", { name: "Register patient" }).click();
  await expect(page.getByText("4 to 20 letters, digits or hyphens")).toBeVisible();

  const hn = `E2E-${Date.now().toString().slice(-6)}`;
  await page.getByLabel("Hospital number").fill(hn);
  await page.getByLabel("Date of birth").fill("1988-07-14");
  await page.getByLabel("Given name").fill("Wren");
  await page.getByLabel("Family name").fill("Abernethy-Cole");
  await page.getByLabel("Sex").selectOption("female");
  await page.getByRole("button", { name: "Register patient" }).click();
  await expect(page.getByRole("heading", { name: "Wren Abernethy-Cole" })).toBeVisible();

  await page.getByRole("link", { name: "Start an episode" }).click();
  await page.getByLabel("Side").selectOption("left");
  await page.getByLabel("Aetiology").selectOption("primary-spontaneous");
  await page.getByLabel("Management").selectOption("needle-aspiration");
  await page.getByRole("button", { name: "Start episode" }).click();
  await expect(page.getByRole("heading", { name: "Left pneumothorax" })).toBeVisible();

  await page.goto("/patients");
  await page.getByLabel("Search patients").fill(hn);
  await expect(page.getByRole("link", { name: "Abernethy-Cole, Wren" })).toBeVisible();
});
