// When a film was taken, as an instant. DICOM dates and times are the modality's wall clock (DICOM
// PS3.5 6.2: DA, TM, DT) and carry a UTC offset only when Timezone Offset From UTC (0008,0201) or a DT
// suffix gives one; without it the hospital's own time zone is the best reading. Pure.

export const HOSPITAL_TIME_ZONE = process.env.CLINIC_TIME_ZONE ?? "Europe/London";

const LOCAL = /^(\d{4})-(\d{2})-(\d{2})(?:T(\d{2}):(\d{2}):(\d{2})(?:\.(\d{1,3}))?)?$/;
const WITH_OFFSET = /(?:Z|[+-]\d{2}:\d{2})$/i;

/** Milliseconds the zone is ahead of UTC at instant t. */
function zoneOffsetMs(t: number, timeZone: string): number {
  const f = new Intl.DateTimeFormat("en-GB", {
    timeZone,
    hourCycle: "h23",
    year: "numeric",
    month: "2-digit",
    day: "2-digit",
    hour: "2-digit",
    minute: "2-digit",
    second: "2-digit",
  });
  const p: Record<string, number> = {};
  for (const part of f.formatToParts(new Date(t))) if (part.type !== "literal") p[part.type] = Number(part.value);
  const wall = Date.UTC(p.year ?? 1970, (p.month ?? 1) - 1, p.day ?? 1, p.hour ?? 0, p.minute ?? 0, p.second ?? 0);
  return wall - Math.floor(t / 1000) * 1000;
}

/**
 * The instant of an ISO 8601 value read from a DICOM header: as given when it has an offset, else
 * the wall-clock time in `timeZone`; a date alone is read as midnight there. Null when unreadable.
 */
export function dicomTimeToInstant(value: string, timeZone = HOSPITAL_TIME_ZONE): Date | null {
  if (WITH_OFFSET.test(value)) {
    const d = new Date(value);
    return Number.isNaN(d.getTime()) ? null : d;
  }
  const m = LOCAL.exec(value);
  if (!m) return null;
  const naive = Date.UTC(Number(m[1]), Number(m[2]) - 1, Number(m[3]), Number(m[4] ?? 0), Number(m[5] ?? 0), Number(m[6] ?? 0), Number((m[7] ?? "0").padEnd(3, "0")));
  if (Number.isNaN(naive)) return null;
  // Two passes settle the offset on either side of a clock change.
  const first = naive - zoneOffsetMs(naive, timeZone);
  return new Date(naive - zoneOffsetMs(first, timeZone));
}
