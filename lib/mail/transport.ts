// The SMTP transport, configured from the environment once per process.
import "server-only";
import nodemailer, { type Transporter } from "nodemailer";
import { z } from "zod";

const mailEnv = z.object({
  SMTP_HOST: z.string().min(1, "SMTP_HOST is not set"),
  SMTP_PORT: z.coerce.number().int().min(1).max(65535).default(587),
  SMTP_SECURE: z.enum(["true", "false"]).default("false").transform((v) => v === "true"),
  SMTP_USER: z.string().optional(),
  SMTP_PASS: z.string().optional(),
  MAIL_FROM: z.string().min(3).default("Rimwatch <rimwatch@localhost>"),
});
export type MailEnv = z.output<typeof mailEnv>;

export function readMailEnv(env: NodeJS.ProcessEnv = process.env): MailEnv {
  return mailEnv.parse(env);
}

const g = globalThis as unknown as { rimwatchMail?: { key: string; transport: Transporter } };

export function mailTransport(): { transport: Transporter; from: string } {
  const env = readMailEnv();
  const key = `${env.SMTP_HOST}:${env.SMTP_PORT}:${env.SMTP_SECURE}:${env.SMTP_USER ?? ""}`;
  if (!g.rimwatchMail || g.rimwatchMail.key !== key) {
    g.rimwatchMail = {
      key,
      transport: nodemailer.createTransport({
        host: env.SMTP_HOST,
        port: env.SMTP_PORT,
        secure: env.SMTP_SECURE,
        ...(env.SMTP_USER ? { auth: { user: env.SMTP_USER, pass: env.SMTP_PASS ?? "" } } : {}),
        connectionTimeout: 10_000,
        greetingTimeout: 10_000,
        socketTimeout: 20_000,
      }),
    };
  }
  return { transport: g.rimwatchMail.transport, from: env.MAIL_FROM };
}

/** A 5xx SMTP answer will not change on retry (unknown mailbox, refused address); a 4xx or a network error may. */
export function isPermanentSmtpError(err: unknown): boolean {
  const code = (err as { responseCode?: unknown } | null)?.responseCode;
  return typeof code === "number" && code >= 500 && code < 600;
}

/** A short, log-safe description of a send failure (no credentials, no message content). */
export function describeSmtpError(err: unknown): string {
  if (!err || typeof err !== "object") return "Unknown error while sending.";
  const e = err as { responseCode?: unknown; response?: unknown; code?: unknown; message?: unknown };
  const parts = [
    typeof e.responseCode === "number" ? `SMTP ${e.responseCode}` : typeof e.code === "string" ? e.code : null,
    typeof e.response === "string" ? e.response : typeof e.message === "string" ? e.message : null,
  ].filter((p): p is string => !!p);
  return (parts.join(": ") || "Unknown error while sending.").slice(0, 500);
}
