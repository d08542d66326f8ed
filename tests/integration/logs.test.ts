/**
 * The server's log ($RIMWATCH_SERVER_LOG, everything `next start` printed while the whole suite ran)
 * must never hold a patient's identity: no name, hospital number or e-mail address of any patient in
 * the database (the invented demo patients of db/demo and every patient the tests made), and none of
 * the identity written into test DICOM headers. Runs after every other integration file, faults
 * included (vitest.config.mts gives it the last group), so the log has seen errors, refusals and
 * outages.
 */
import { existsSync, readFileSync } from "node:fs";
import { afterAll, describe, expect, it } from "vitest";
import { closeTestDb, testDb } from "../support/db";
import { inventedIdentity } from "../support/dicom-fixtures";

afterAll(closeTestDb);

const escape = (s: string) => s.replace(/[.*+?^${}()|[\]\\]/g, "\\$&");

describe("the server log", () => {
  it("holds no patient's name, hospital number or e-mail address", async () => {
    const file = process.env.RIMWATCH_SERVER_LOG;
    expect(file, "RIMWATCH_SERVER_LOG is set by scripts/test.sh").toBeTruthy();
    expect(existsSync(file ?? ""), `${file} exists`).toBe(true);
    const log = readFileSync(file ?? "", "utf8");
    // The file is the live server's: it has at least Next's start-up lines.
    expect(log).toMatch(/Next\.js|Ready|started/i);

    const patients = await testDb()("patients").select<{ family_name: string; given_name: string; hospital_number: string; email: string | null; phone: string | null }[]>(
      "family_name",
      "given_name",
      "hospital_number",
      "email",
      "phone",
    );
    expect(patients.length, "the suite made patients, and the demo data has some").toBeGreaterThan(3);
    const secrets = new Map<string, string>();
    for (const p of patients) {
      secrets.set(p.hospital_number, "hospital number");
      if (p.email) secrets.set(p.email, "patient e-mail");
      if (p.phone && p.phone.replace(/\D/g, "").length >= 7) secrets.set(p.phone, "patient phone");
      // Names as words (a short given name such as "Alex" could be part of another word).
      for (const [name, what] of [[p.family_name, "family name"], [p.given_name, "given name"]] as const) if (name.trim().length >= 4) secrets.set(name.trim(), what);
      secrets.set(`${p.family_name}, ${p.given_name}`, "full name");
    }
    secrets.set(inventedIdentity.patientName, "DICOM Patient's Name");
    secrets.set(inventedIdentity.patientName.replace("^", " "), "DICOM Patient's Name");
    secrets.set(inventedIdentity.patientId, "DICOM Patient ID");
    secrets.set(inventedIdentity.accessionNumber, "DICOM Accession Number");

    const found: string[] = [];
    for (const [secret, what] of secrets) {
      const re = new RegExp(`(^|[^A-Za-z0-9])${escape(secret)}($|[^A-Za-z0-9])`);
      const m = re.exec(log);
      if (m) {
        const at = m.index;
        found.push(`${what} "${secret}": …${log.slice(Math.max(0, at - 60), at + secret.length + 60).replace(/\s+/g, " ")}…`);
      }
    }
    console.log(`server log: ${log.length} characters checked against ${secrets.size} identifiers of ${patients.length} patients`);
    expect(found).toEqual([]);
  });
});
