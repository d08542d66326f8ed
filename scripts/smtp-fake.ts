// Local SMTP fake: speaks real SMTP on loopback, accepts every message and saves it as an .eml file.
// A file named "refuse" in the mail folder makes it answer 451 to every message (to test retries).
import { SMTPServer } from "smtp-server";
import { mkdirSync, writeFileSync, existsSync } from "node:fs";
import { join } from "node:path";

const port = Number(process.env.FAKE_SMTP_PORT ?? 54325);
const dir = process.env.FAKE_SMTP_DIR ?? ".data/dev/mail";
mkdirSync(dir, { recursive: true });
let counter = 0;

const server = new SMTPServer({
  authOptional: true,
  disabledCommands: ["STARTTLS"],
  logger: false,
  onData(stream, session, callback) {
    const chunks: Buffer[] = [];
    stream.on("data", (c: Buffer) => chunks.push(c));
    stream.on("end", () => {
      if (existsSync(join(dir, "refuse"))) {
        const err = Object.assign(new Error("Mailbox temporarily unavailable"), { responseCode: 451 });
        callback(err);
        return;
      }
      counter += 1;
      const to = session.envelope.rcptTo.map((r) => r.address).join(",");
      const name = `${Date.now()}-${String(counter).padStart(5, "0")}.eml`;
      writeFileSync(join(dir, name), Buffer.concat(chunks));
      console.log(`saved ${name} to ${to}`);
      callback();
    });
  },
});

server.listen(port, "127.0.0.1", () => console.log(`SMTP fake listening on 127.0.0.1:${port}, saving to ${dir}`));
const stop = () => server.close(() => process.exit(0));
process.on("SIGTERM", stop);
process.on("SIGINT", stop);
