// Clinic wall-clock time: bookings are made and printed in the hospital's time zone, stored in UTC.
// Pure: nothing here reads the clock; `now` is passed in.

// Also imported by browser code, where there is no process.env: the server passes the zone along.
export const CLINIC_TIME_ZONE = (typeof process !== "undefined" ? process.env.CLINIC_TIME_ZONE : undefined) ?? "Europe/London";

const DATE_RE = /^(\d{4})-(\d{2})-(\d{2})$/;
const TIME_RE = /^([01]\d|2[0-3]):([0-5]\d)$/;

// Intl formatters are costly to build: one per zone (and style), kept.
const formatters = new Map<string, Intl.DateTimeFormat>();
function formatter(key: string, make: () => Intl.DateTimeFormat): Intl.DateTimeFormat {
  let f = formatters.get(key);
  if (!f) {
    f = make();
    formatters.set(key, f);
  }
  return f;
}

function parts(at: Date, timeZone: string) {
  const f = formatter(`parts:${timeZone}`, () =>
    new Intl.DateTimeFormat("en-GB", {
      timeZone,
      year: "numeric",
      month: "2-digit",
      day: "2-digit",
      hour: "2-digit",
      minute: "2-digit",
      second: "2-digit",
      hourCycle: "h23",
    }),
  );
  const out: Record<string, number> = {};
  for (const p of f.formatToParts(at)) if (p.type !== "literal") out[p.type] = Number(p.value);
  return { y: out.year ?? 0, mo: out.month ?? 0, d: out.day ?? 0, h: out.hour ?? 0, mi: out.minute ?? 0, s: out.second ?? 0 };
}

/** The calendar date (YYYY-MM-DD) at the clinic at instant `at`. */
export function clinicDate(at: Date, timeZone = CLINIC_TIME_ZONE): string {
  const p = parts(at, timeZone);
  return `${String(p.y).padStart(4, "0")}-${String(p.mo).padStart(2, "0")}-${String(p.d).padStart(2, "0")}`;
}

/** The clinic's wall-clock time HH:MM at instant `at`. */
export function clinicTime(at: Date, timeZone = CLINIC_TIME_ZONE): string {
  const p = parts(at, timeZone);
  return `${String(p.h).padStart(2, "0")}:${String(p.mi).padStart(2, "0")}`;
}

/** Minutes the zone is ahead of UTC at instant `at` (60 in British Summer Time). */
function offsetMinutes(at: Date, timeZone: string): number {
  const p = parts(at, timeZone);
  const asUtc = Date.UTC(p.y, p.mo - 1, p.d, p.h, p.mi, p.s);
  return Math.round((asUtc - Math.floor(at.getTime() / 1000) * 1000) / 60_000);
}

/**
 * The instant of a wall-clock date and time at the clinic. In the hour skipped when clocks go
 * forward the time is read with the earlier offset (09:30 bookings never meet it).
 */
export function clinicWallTimeToUtc(date: string, time: string, timeZone = CLINIC_TIME_ZONE): Date {
  const dm = DATE_RE.exec(date);
  const tm = TIME_RE.exec(time);
  if (!dm || !tm) throw new RangeError(`Not a clinic date and time: ${date} ${time}`);
  const naive = Date.UTC(Number(dm[1]), Number(dm[2]) - 1, Number(dm[3]), Number(tm[1]), Number(tm[2]));
  const first = offsetMinutes(new Date(naive), timeZone);
  const guess = naive - first * 60_000;
  const second = offsetMinutes(new Date(guess), timeZone);
  return new Date(naive - second * 60_000);
}

/** Adds whole days to a YYYY-MM-DD date. */
export function addDays(date: string, days: number): string {
  const m = DATE_RE.exec(date);
  if (!m) throw new RangeError(`Not a date: ${date}`);
  return new Date(Date.UTC(Number(m[1]), Number(m[2]) - 1, Number(m[3])) + days * 86_400_000).toISOString().slice(0, 10);
}

const MONTHS = ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"];

/** "20 Nov 2026" for a YYYY-MM-DD date (the calendar date as written, no zone involved). */
export function dateWords(date: string): string {
  const m = DATE_RE.exec(date);
  if (!m) throw new RangeError(`Not a date: ${date}`);
  return `${Number(m[3])} ${MONTHS[Number(m[2]) - 1]} ${m[1]}`;
}

/** Whole days from date a to date b (b - a). */
export function daysBetween(a: string, b: string): number {
  const ma = DATE_RE.exec(a);
  const mb = DATE_RE.exec(b);
  if (!ma || !mb) throw new RangeError(`Not dates: ${a}, ${b}`);
  return Math.round((Date.UTC(Number(mb[1]), Number(mb[2]) - 1, Number(mb[3])) - Date.UTC(Number(ma[1]), Number(ma[2]) - 1, Number(ma[3]))) / 86_400_000);
}

/** "Tuesday 15 December 2026 at 09:30" in clinic time, for letters and e-mails. */
export function appointmentWords(at: Date, timeZone = CLINIC_TIME_ZONE): string {
  return `${dayWords(at, "long", timeZone)} at ${clinicTime(at, timeZone)}`;
}

/** "Tue 15 Dec" in clinic time, for subjects and short lists. */
export function shortDayWords(at: Date, timeZone = CLINIC_TIME_ZONE): string {
  return dayWords(at, "short", timeZone);
}

// Built from parts so that the wording does not depend on the ICU version's punctuation.
function dayWords(at: Date, style: "long" | "short", timeZone: string): string {
  const f = formatter(`day:${style}:${timeZone}`, () => new Intl.DateTimeFormat("en-GB", { weekday: style, day: "numeric", month: style, ...(style === "long" ? { year: "numeric" } : {}), timeZone }));
  const p: Record<string, string> = {};
  for (const x of f.formatToParts(at)) if (x.type !== "literal") p[x.type] = x.value;
  return [p.weekday, p.day, p.month, p.year].filter(Boolean).join(" ");
}
