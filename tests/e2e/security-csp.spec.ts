// The page Content Security Policy in a real browser: no script (Next's own inline ones included) is
// refused, every screen hydrates, and an injected inline script without the nonce does not run.
import { expect, test, type Page } from "@playwright/test";
import { signInAs } from "./support";

function watchViolations(page: Page): string[] {
  const seen: string[] = [];
  page.on("console", (m) => {
    if (/Content Security Policy|Refused to (execute|load|apply|connect)/i.test(m.text())) seen.push(m.text());
  });
  return seen;
}

test("every role's screens run under the policy without a single violation", async ({ page }) => {
  const violations = watchViolations(page);
  await page.goto("/sign-in");
  expect(violations).toEqual([]);
  for (const role of ["registrar", "consultant", "nurse"] as const) {
    await signInAs(page, role);
    for (const link of ["Patients", "Today"]) {
      const nav = page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: link });
      if (await nav.count()) {
        await nav.first().click();
        await page.waitForLoadState("networkidle");
      }
    }
    // Client-side navigation only works when React has hydrated, i.e. when Next's scripts ran.
    await expect(page.getByRole("button", { name: "Sign out" })).toBeVisible();
    await page.getByRole("button", { name: "Sign out" }).click();
    await expect(page).toHaveURL(/sign-in/);
  }
  expect(violations).toEqual([]);
});

test("a script injected into the page's HTML (as a stored or reflected XSS would) does not run", async ({ page }) => {
  const violations = watchViolations(page);
  // Rewrite the sign-in page on its way to the browser: same headers (so the same policy), plus an
  // inline script without the nonce, parsed as part of the HTML.
  await page.route("**/sign-in", async (route) => {
    const res = await route.fetch();
    const html = (await res.text()).replace("<body", '<script>window.injectedRan = true</script><body');
    await route.fulfill({ response: res, body: html });
  });
  await page.goto("/sign-in");
  await expect(page.getByRole("button", { name: "Sign in" })).toBeVisible();
  const ran = await page.evaluate(() => (window as unknown as { injectedRan?: boolean }).injectedRan === true);
  expect(ran).toBe(false);
  expect(violations.length).toBeGreaterThan(0);
});
