// Reading the SMTP fake's saved messages (.eml files in FAKE_SMTP_DIR): headers, and the decoded
// body of each MIME part (7bit, quoted-printable or base64), enough to check what a patient receives.
import { existsSync, readdirSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { join } from "node:path";

export function mailDir(): string {
  const dir = process.env.FAKE_SMTP_DIR;
  if (!dir) throw new Error("FAKE_SMTP_DIR is not set: run integration tests through `npm test`");
  return dir;
}

export interface MimePart {
  headers: Record<string, string>;
  body: string;
}

export interface SavedMail {
  file: string;
  headers: Record<string, string>;
  to: string;
  subject: string;
  parts: MimePart[];
}

function splitHead(raw: string): { headers: Record<string, string>; body: string } {
  const i = raw.search(/\r?\n\r?\n/);
  const head = i < 0 ? raw : raw.slice(0, i);
  const body = i < 0 ? "" : raw.slice(i).replace(/^\r?\n\r?\n/, "");
  const headers: Record<string, string> = {};
  for (const line of head.replace(/\r?\n[ \t]+/g, " ").split(/\r?\n/)) {
    const c = line.indexOf(":");
    if (c > 0) headers[line.slice(0, c).trim().toLowerCase()] = line.slice(c + 1).trim();
  }
  return { headers, body };
}

function decode(body: string, encoding: string | undefined): string {
  switch ((encoding ?? "7bit").toLowerCase()) {
    case "base64":
      return Buffer.from(body.replace(/\s+/g, ""), "base64").toString("utf8");
    case "quoted-printable":
      return Buffer.from(
        body.replace(/=\r?\n/g, "").replace(/=([0-9A-F]{2})/gi, (_, h: string) => String.fromCharCode(parseInt(h, 16))),
        "latin1",
      ).toString("utf8");
    default:
      return body;
  }
}

export function parseEml(raw: string, file = ""): SavedMail {
  const top = splitHead(raw);
  const type = top.headers["content-type"] ?? "text/plain";
  const boundary = /boundary="?([^";]+)"?/i.exec(type)?.[1];
  const parts: MimePart[] = [];
  if (boundary) {
    for (const chunk of top.body.split(`--${boundary}`).slice(1)) {
      if (chunk.startsWith("--")) break;
      const p = splitHead(chunk.replace(/^\r?\n/, ""));
      parts.push({ headers: p.headers, body: decode(p.body.replace(/\r?\n$/, ""), p.headers["content-transfer-encoding"]) });
    }
  } else {
    parts.push({ headers: top.headers, body: decode(top.body, top.headers["content-transfer-encoding"]) });
  }
  return { file, headers: top.headers, to: top.headers.to ?? "", subject: top.headers.subject ?? "", parts };
}

/** Every saved message, oldest first. */
export function savedMails(): SavedMail[] {
  const dir = mailDir();
  return readdirSync(dir)
    .filter((f) => f.endsWith(".eml"))
    .sort()
    .map((f) => parseEml(readFileSync(join(dir, f), "utf8"), f));
}

export const mailsTo = (address: string) => savedMails().filter((m) => m.to.toLowerCase().includes(address.toLowerCase()));

/** Waits until `pick` finds something, polling every 250 ms; throws after `ms`. */
export async function waitFor<T>(what: string, pick: () => Promise<T | null | undefined> | T | null | undefined, ms = 30_000): Promise<T> {
  const until = Date.now() + ms;
  for (;;) {
    const v = await pick();
    if (v !== null && v !== undefined && v !== false) return v;
    if (Date.now() > until) throw new Error(`Timed out after ${ms} ms waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

/** While the file `refuse` exists in the mail folder the fake answers 451 to every message. */
export function refuseMail(on: boolean): void {
  const f = join(mailDir(), "refuse");
  if (on) writeFileSync(f, "451 for tests\n");
  else if (existsSync(f)) rmSync(f);
}

/** Properties of the first VEVENT of an .ics text, unfolded (RFC 5545 3.1). */
export function icsEvent(ics: string): Record<string, string> {
  const lines = ics.replace(/\r?\n[ \t]/g, "").split(/\r?\n/);
  const start = lines.indexOf("BEGIN:VEVENT");
  const end = lines.indexOf("END:VEVENT");
  const out: Record<string, string> = {};
  for (const l of lines.slice(start + 1, end)) {
    const c = l.indexOf(":");
    if (c > 0) out[l.slice(0, c).split(";")[0]!] = l.slice(c + 1);
  }
  return out;
}
