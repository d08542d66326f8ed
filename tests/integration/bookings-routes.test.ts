// The follow-up diary's routes: the worklist with proposals, booking a proposal in one action,
// move / cancel / attended / missed with versions, a missed film raising the overdue flag (and the
// consultant's notice), the calendar file, the travel figures and the send log; who may do what.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeTestDb, testDb } from "../support/db";
import { makeEpisode, makePatient, makeTeam, TEST_PASSWORD, type TestTeam } from "../support/fixtures";
import { anonymous, signIn, type Client } from "../support/http";
import { icsEvent, mailsTo, waitFor } from "../support/eml";
import { addDays, clinicDate } from "@/lib/clinic-time";

let team: TestTeam;
let other: TestTeam;
let c: Record<"nurse" | "registrar" | "consultant" | "admin" | "outsider", Client>;
let episodeId: string;
let today: string;
const DAY = 86_400_000;

interface Proposal { key: string; kind: string; source: string; flagId: string | null; dueOn: string; proposedOn: string; proposedAt: string; reason: string; moves: { bookingId: string; version: number } | null }
interface Worklist {
  today: string;
  needing: { episodeId: string; proposals: Proposal[] }[];
  needingChecked: { checked: number; active: number } | null;
  coming: { id: string; episodeId: string; version: number; lastMessage: { template: string; status: string } | null }[];
  missed: { id: string; episodeId: string; state: string; unmarked: boolean }[];
}
interface BookingBody { booking: { id: string; state: string; version: number; scheduled_at: string; location: string }; message: { id: string; status: string } | null; flagsRaised?: { id: string; rule: string }[] }

const worklist = async (who: Client = c.nurse) => (await (await who.get("/api/bookings")).json()) as Worklist;
const count = async (table: string, where: Record<string, unknown>) => Number((await testDb()(table).where(where).count<{ n: string }[]>({ n: "*" }))[0]?.n ?? 0);

beforeAll(async () => {
  team = await makeTeam("bookings");
  other = await makeTeam("bookings-other");
  today = clinicDate(new Date());
  const p = await makePatient(team, { family_name: "Diarytest", email: "diary.test@example.org", email_consent: true, email_consent_at: new Date() });
  // Observed episode presented and discharged 3 days ago: the protocol film falls 14 days after discharge.
  episodeId = (await makeEpisode(team, p.id, { presented_on: addDays(today, -3), discharged_on: addDays(today, -3) })).id;
  const s = await Promise.all([
    signIn(team.users.nurse.email, TEST_PASSWORD),
    signIn(team.users.registrar.email, TEST_PASSWORD),
    signIn(team.users.consultant.email, TEST_PASSWORD),
    signIn(team.users.admin.email, TEST_PASSWORD),
    signIn(other.users.nurse.email, TEST_PASSWORD),
  ]);
  c = { nurse: s[0], registrar: s[1], consultant: s[2], admin: s[3], outsider: s[4] };
});

afterAll(async () => {
  await closeTestDb();
});

describe("the worklist and booking a proposal", () => {
  let bookingId: string;

  it("proposes the protocol film 14 days after discharge", async () => {
    const list = await worklist();
    const mine = list.needing.find((e) => e.episodeId === episodeId);
    // MacDuff A et al., BTS 2010: review 2-4 weeks after discharge; the default protocol uses 14 days
    expect(mine?.proposals.map((p) => [p.kind, p.dueOn])).toEqual([["protocol", addDays(today, 11)]]);
    expect((await anonymous().get("/api/bookings")).status).toBe(401);
    expect((await c.admin.get("/api/bookings")).status).toBe(403);
    expect((await c.registrar.get("/api/bookings")).status).toBe(200);
    const theirs = await worklist(c.outsider);
    expect(theirs.needing.find((e) => e.episodeId === episodeId)).toBeUndefined();
    expect(list.needingChecked).toBeNull();
  });

  it("says so when a team has more active episodes than one worklist checks", async () => {
    const many = await makeTeam("bookings-many");
    const patients = await testDb()("patients")
      .insert(Array.from({ length: 302 }, (_, i) => ({ team_id: many.id, hospital_number: `M${Date.now().toString(36).toUpperCase()}${i}`, family_name: "Manyfold", given_name: `Case${i}`, date_of_birth: "1980-01-01", sex: "unknown" })))
      .returning<{ id: string }[]>("id");
    await testDb()("episodes").insert(
      patients.map((p, i) => ({ patient_id: p.id, team_id: many.id, side: "left", presented_on: addDays(today, -(i % 40) - 1), aetiology: "primary-spontaneous", management: "observation", status: i === 301 ? "closed" : "active" })),
    );
    const nurse = await signIn(many.users.nurse.email, TEST_PASSWORD);
    const list = await worklist(nurse);
    // 301 active (one of the 302 is closed); the list checks the 300 that presented first and says so
    expect(list.needingChecked).toEqual({ checked: 300, active: 301 });
  });

  it("refuses bad input with field messages and writes nothing", async () => {
    const before = await count("bookings", { episode_id: episodeId });
    const past = await c.nurse.send("POST", "/api/bookings", { episodeId, scheduledAt: new Date(Date.now() - DAY).toISOString(), location: "X-ray" });
    expect(past.status).toBe(400);
    expect(((await past.json()) as { error: { fields: Record<string, string> } }).error.fields.scheduledAt).toMatch(/future/);
    const noPlace = await c.nurse.send("POST", "/api/bookings", { episodeId, scheduledAt: new Date(Date.now() + DAY).toISOString(), location: "" });
    expect(noPlace.status).toBe(400);
    expect(((await noPlace.json()) as { error: { fields: Record<string, string> } }).error.fields.location).toBeTruthy();
    const badJson = await c.nurse.fetch("/api/bookings", { method: "POST", headers: { "content-type": "application/json" }, body: "{" });
    expect(badJson.status).toBe(400);
    expect(await count("bookings", { episode_id: episodeId })).toBe(before);
  });

  it("lets only a nurse of the team book", async () => {
    const body = { episodeId, scheduledAt: new Date(Date.now() + 2 * DAY).toISOString(), location: "X-ray" };
    expect((await anonymous().send("POST", "/api/bookings", body)).status).toBe(401);
    expect((await c.registrar.send("POST", "/api/bookings", body)).status).toBe(403);
    expect((await c.outsider.send("POST", "/api/bookings", body)).status).toBe(404);
    expect(await count("bookings", { episode_id: episodeId })).toBe(0);
  });

  it("books the proposal in one action, with its confirmation recorded and audited", async () => {
    const p = (await worklist()).needing.find((e) => e.episodeId === episodeId)!.proposals[0]!;
    const res = await c.nurse.send("POST", "/api/bookings", { episodeId, kind: "repeat-film", source: p.source, reason: p.reason, dueOn: p.dueOn, scheduledAt: p.proposedAt, location: "Room 4, X-ray" });
    expect(res.status).toBe(201);
    const body = (await res.json()) as BookingBody;
    bookingId = body.booking.id;
    expect(body.booking).toMatchObject({ state: "booked", version: 1, location: "Room 4, X-ray" });
    expect(new Date(body.booking.scheduled_at).toISOString()).toBe(p.proposedAt);
    expect(body.message?.status).toBe("queued");
    expect(await count("messages", { booking_id: bookingId, template: "booking-confirmation" })).toBe(1);
    expect(await count("audit_log", { entity: "booking", entity_id: bookingId, action: "booking.create" })).toBe(1);

    const list = await worklist();
    expect(list.needing.find((e) => e.episodeId === episodeId)).toBeUndefined();
    expect(list.coming.find((b) => b.id === bookingId)?.lastMessage?.template).toBe("booking-confirmation");
  });

  it("refuses a second film ahead of the one booked", async () => {
    const res = await c.nurse.send("POST", "/api/bookings", { episodeId, scheduledAt: new Date(Date.now() + 3 * DAY).toISOString(), location: "X-ray" });
    expect(res.status).toBe(409);
    const body = (await res.json()) as { error: { message: string; details: { bookingId: string } } };
    expect(body.error.message).toMatch(/already has a booking/);
    expect(body.error.details.bookingId).toBe(bookingId);
  });

  it("moves against the version seen, and refuses a stale one", async () => {
    const at = new Date(Date.now() + 5 * DAY);
    at.setUTCSeconds(0, 0);
    const stale = await c.nurse.send("PATCH", `/api/bookings/${bookingId}`, { action: "move", version: 7, scheduledAt: at.toISOString() });
    expect(stale.status).toBe(409);
    const res = await c.nurse.send("PATCH", `/api/bookings/${bookingId}`, { action: "move", version: 1, scheduledAt: at.toISOString(), location: "Room 5, X-ray" });
    expect(res.status).toBe(200);
    const body = (await res.json()) as BookingBody;
    expect(body.booking).toMatchObject({ version: 2, location: "Room 5, X-ray" });
    expect(body.message?.status).toBe("queued");
    expect(await count("messages", { booking_id: bookingId, template: "booking-moved" })).toBe(1);
    expect(await count("audit_log", { entity: "booking", entity_id: bookingId, action: "booking.move" })).toBe(1);
    // the same version again is stale now
    expect((await c.nurse.send("PATCH", `/api/bookings/${bookingId}`, { action: "cancel", version: 1 })).status).toBe(409);
  });

  it("will not mark an appointment still ahead as attended", async () => {
    const res = await c.nurse.send("PATCH", `/api/bookings/${bookingId}`, { action: "attended", version: 2 });
    expect(res.status).toBe(400);
    expect(((await res.json()) as { error: { message: string } }).error.message).toMatch(/still ahead/);
  });

  it("serves the booking as a calendar file to the team only", async () => {
    const res = await c.nurse.get(`/api/bookings/${bookingId}/calendar`);
    expect(res.status).toBe(200);
    expect(res.headers.get("content-type")).toMatch(/^text\/calendar/);
    const ics = await res.text();
    const row = await testDb()("bookings").where({ id: bookingId }).first<{ scheduled_at: Date } | undefined>();
    // RFC 5545: DTSTART in UTC; SEQUENCE follows the booking's version (moved once: 2)
    expect(icsEvent(ics).DTSTART).toBe(row!.scheduled_at.toISOString().replace(/[-:]/g, "").replace(/\.\d{3}/, ""));
    expect(icsEvent(ics).SEQUENCE).toBe("2");
    expect((await c.outsider.get(`/api/bookings/${bookingId}/calendar`)).status).toBe(404);
    expect((await anonymous().get(`/api/bookings/${bookingId}/calendar`)).status).toBe(401);
  });

  it("cancels with a note of it to the patient; a cancelled booking cannot change again", async () => {
    expect((await c.outsider.send("PATCH", `/api/bookings/${bookingId}`, { action: "cancel", version: 2 })).status).toBe(404);
    expect((await c.registrar.send("PATCH", `/api/bookings/${bookingId}`, { action: "cancel", version: 2 })).status).toBe(403);
    const res = await c.nurse.send("PATCH", `/api/bookings/${bookingId}`, { action: "cancel", version: 2, reason: "Patient moving away" });
    expect(res.status).toBe(200);
    expect(((await res.json()) as BookingBody).booking.state).toBe("cancelled");
    expect(await count("messages", { booking_id: bookingId, template: "booking-cancelled" })).toBe(1);
    const again = await c.nurse.send("PATCH", `/api/bookings/${bookingId}`, { action: "attended", version: 3 });
    expect(again.status).toBe(409);
    // with the booking cancelled the protocol film is proposed again
    expect((await worklist()).needing.find((e) => e.episodeId === episodeId)?.proposals[0]?.kind).toBe("protocol");
  });
});

describe("a missed film", () => {
  it("raises the overdue flag, tells the consultant who opted in, and asks for a new booking", async () => {
    await testDb()("users").where({ id: team.users.consultant.id }).update({ notify_on_flag: true });
    const p = await makePatient(team, { family_name: "Missedtest" });
    const e = await makeEpisode(team, p.id, { presented_on: addDays(today, -20), discharged_on: addDays(today, -18) });
    const [b] = await testDb()("bookings")
      .insert({ episode_id: e.id, team_id: team.id, source: "protocol", scheduled_at: new Date(Date.now() - 3 * DAY), location: "X-ray", created_by: team.users.nurse.id })
      .returning<{ id: string }[]>("id");
    expect((await worklist()).missed.find((m) => m.id === b!.id)).toMatchObject({ state: "booked", unmarked: true });

    const res = await c.nurse.send("PATCH", `/api/bookings/${b!.id}`, { action: "missed", version: 1 });
    expect(res.status).toBe(200);
    const body = (await res.json()) as BookingBody;
    expect(body.booking.state).toBe("missed");
    // overdue: the planned film is more than the 1-day grace late (common practice default setting)
    expect(body.flagsRaised?.map((f) => f.rule)).toContain("overdue");
    const flag = await testDb()("flags").where({ episode_id: e.id, rule: "overdue", state: "open" }).first<{ id: string } | undefined>();
    expect(flag).toBeDefined();
    expect(await count("audit_log", { entity: "booking", entity_id: b!.id, action: "booking.missed" })).toBe(1);
    const notice = await testDb()("messages").where({ flag_id: flag!.id, template: "flag-notice" }).first<{ id: string; recipient: string; status: string }>();
    expect(notice).toMatchObject({ recipient: team.users.consultant.email });
    // queued once the booking's transaction committed; the app's mail worker sends it
    await waitFor("the flag notice sent", async () => ((await testDb()("messages").where({ id: notice.id }).first<{ status: string }>())?.status === "sent" ? true : null));
    const [mail] = mailsTo(team.users.consultant.email);
    expect(mail?.subject).toMatch(/new flag on an episode you lead \(Repeat film overdue\)/);
    const text = mail?.parts.map((p) => p.body).join("\n") ?? "";
    expect(text).toContain(`/episodes/${e.id}`);
    // no patient details in e-mail to staff
    expect(text).not.toContain("Missedtest");

    const list = await worklist();
    expect(list.missed.find((m) => m.id === b!.id)?.state).toBe("missed");
    const proposal = list.needing.find((x) => x.episodeId === e.id)?.proposals[0];
    expect(proposal).toMatchObject({ kind: "flag", flagId: flag!.id, dueOn: today });
  });
});

describe("travel figures", () => {
  it("give the cabin expansion and the flying date for the team only", async () => {
    const p = await makePatient(team, { family_name: "Traveltest" });
    const resolvedOn = addDays(today, -2);
    const e = await makeEpisode(team, p.id, { status: "resolved", resolved_on: resolvedOn });
    const res = await c.nurse.get(`/api/episodes/${e.id}/travel`);
    expect(res.status).toBe(200);
    const t = (await res.json()) as { figures: { cabin: { expansionFactor: number; pressureKPa: number }; flying: { state: string; earliestOn: string } } };
    // 75.26 kPa at 8,000 ft: ICAO Doc 7488 / US Standard Atmosphere 1976; x1.346 by Boyle's law
    expect(t.figures.cabin.pressureKPa).toBeCloseTo(75.26, 1);
    expect(t.figures.cabin.expansionFactor).toBeCloseTo(1.346, 3);
    // BTS air travel recommendations 2011: 7 days after the film that confirmed resolution
    expect(t.figures.flying).toMatchObject({ state: "from-date", earliestOn: addDays(resolvedOn, 7) });
    expect((await c.outsider.get(`/api/episodes/${e.id}/travel`)).status).toBe(404);
    expect((await anonymous().get(`/api/episodes/${e.id}/travel`)).status).toBe(401);
  });
});

describe("the send log", () => {
  it("pages the team's messages, newest first, and shows another team none of them", async () => {
    const page1 = (await (await c.nurse.get("/api/messages?pageSize=1&page=1")).json()) as { rows: { id: string; created_at: string }[]; total: number };
    const page2 = (await (await c.nurse.get("/api/messages?pageSize=1&page=2")).json()) as { rows: { id: string; created_at: string }[]; total: number };
    expect(page1.rows).toHaveLength(1);
    expect(page1.total).toBeGreaterThanOrEqual(3);
    expect(page2.rows[0]!.id).not.toBe(page1.rows[0]!.id);
    expect(new Date(page1.rows[0]!.created_at).getTime()).toBeGreaterThanOrEqual(new Date(page2.rows[0]!.created_at).getTime());
    const theirs = (await (await c.outsider.get("/api/messages")).json()) as { total: number };
    expect(theirs.total).toBe(0);
    expect((await c.nurse.get("/api/messages?pageSize=500")).status).toBe(400);
    expect((await c.admin.get("/api/messages")).status).toBe(403);
  });
});
