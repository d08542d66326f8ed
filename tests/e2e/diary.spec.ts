// The follow-up diary in a browser: the demo team's clinic nurse finds a new episode under
// "Needing a booking", books its proposed repeat film (changing the time before confirming), sees it
// under the coming days, and finds the confirmation sent in the send log.
import { randomUUID } from "node:crypto";
import { expect, test } from "@playwright/test";
import { closeTestDb, testDb } from "../support/db";
import { addDays, clinicDate } from "../../lib/clinic-time";
import { signInAs } from "./support";

const FAMILY = `Ashworth-Quill`;
const tag = randomUUID().slice(0, 6);
const email = `noor.${tag}@example.org`;
let episodeId = "";

test.beforeAll(async () => {
  const k = testDb();
  const team = await k("teams").where({ name: "Larkmoor respiratory team" }).first<{ id: string }>("id");
  if (!team) throw new Error("demo team missing");
  const [p] = await k("patients")
    .insert({
      team_id: team.id, hospital_number: `LGH-E${tag.toUpperCase()}`, family_name: FAMILY, given_name: "Noor", date_of_birth: "1994-03-09", sex: "female",
      email, email_consent: true, email_consent_at: new Date(),
    })
    .returning<{ id: string }[]>("id");
  const today = clinicDate(new Date());
  const [e] = await k("episodes")
    .insert({ patient_id: p!.id, team_id: team.id, side: "left", presented_on: addDays(today, -4), discharged_on: addDays(today, -4), aetiology: "primary-spontaneous", management: "observation" })
    .returning<{ id: string }[]>("id");
  episodeId = e!.id;
});

test.afterAll(async () => {
  await closeTestDb();
});

test("the nurse books a proposed repeat film and sees the confirmation in the send log", async ({ page }) => {
  await signInAs(page, "nurse");
  await page.getByRole("link", { name: "Follow-up diary" }).click();
  await expect(page.getByRole("heading", { name: "Follow-up diary" })).toBeVisible();

  const item = page.getByTestId("needing").filter({ hasText: FAMILY });
  await expect(item).toBeVisible();
  // BTS 2010 review at 2-4 weeks; the default protocol is 14 days after discharge (4 days ago -> in 10 days)
  const due = addDays(clinicDate(new Date()), 10);
  await expect(item.getByTestId("proposal")).toContainText("Repeat film");
  await item.getByRole("button", { name: "Book this film" }).click();
  await expect(item.getByLabel("Date")).toHaveValue(due);
  await item.getByLabel("Time").fill("14:15");
  await item.getByLabel("Where").fill("X-ray department, ground floor, Larkmoor General Hospital");
  await item.getByRole("button", { name: "Confirm booking" }).click();

  await expect(page.getByRole("status")).toContainText(`Booked: ${FAMILY}, Noor`);
  await expect(page.getByRole("status")).toContainText(`An e-mail to ${email} is on its way.`);
  await expect(page.getByTestId("needing").filter({ hasText: FAMILY })).toHaveCount(0);
  const booked = page.getByTestId("booking").filter({ hasText: FAMILY });
  await expect(booked).toContainText("14:15");
  await expect(booked).toContainText("ground floor");

  const row = await testDb()("bookings").where({ episode_id: episodeId, state: "booked" }).first<{ scheduled_at: Date } | undefined>();
  expect(row).toBeDefined();
  expect(clinicDate(row!.scheduled_at)).toBe(due);

  // the mail.send worker of the app sends it; the send log shows it as sent
  await expect(async () => {
    await page.goto("/send-log");
    const line = page.getByTestId("message-row").filter({ hasText: email });
    await expect(line).toContainText("Booking confirmation");
    await expect(line.getByText("sent", { exact: true })).toBeVisible();
  }).toPass({ timeout: 30_000 });
});
