import { expect, type Page } from "@playwright/test";
import { DEMO_PASSWORD, DEMO_USERS } from "../../db/demo/users";

export type DemoRole = "registrar" | "consultant" | "nurse" | "admin";

export function demoUser(role: DemoRole) {
  const u = DEMO_USERS.find((x) => x.team === "larkmoor" && x.role === role);
  if (!u) throw new Error(`no demo ${role}`);
  return u;
}

/** Signs in through the sign-in page, as a person would. */
export async function signInAs(page: Page, role: DemoRole) {
  const u = demoUser(role);
  await page.goto("/sign-in");
  await page.getByLabel("E-mail").fill(u.email);
  await page.getByLabel("Password").fill(DEMO_PASSWORD);
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("banner").getByText(u.name)).toBeVisible();
}
