// One error type for the whole server, and one place that turns any error into an HTTP answer.
import { ZodError } from "zod";
import { FilmError, UnsupportedFilmError } from "./films/errors";

export type ErrorCode =
  | "unauthenticated"
  | "forbidden"
  | "not_found"
  | "invalid"
  | "unprocessable"
  | "conflict"
  | "too_large"
  | "unsupported"
  | "too_many"
  | "unavailable";

const STATUS: Record<ErrorCode, number> = {
  unauthenticated: 401,
  forbidden: 403,
  not_found: 404,
  invalid: 400,
  unprocessable: 422,
  conflict: 409,
  too_large: 413,
  unsupported: 415,
  too_many: 429,
  unavailable: 503,
};

export class AppError extends Error {
  readonly code: ErrorCode;
  readonly fields: Record<string, string> | undefined;
  readonly details: Record<string, unknown> | undefined;

  constructor(code: ErrorCode, message: string, options?: { fields?: Record<string, string>; details?: Record<string, unknown> }) {
    super(message);
    this.name = "AppError";
    this.code = code;
    this.fields = options?.fields;
    this.details = options?.details;
  }

  get status(): number {
    return STATUS[this.code];
  }
}

export const notFound = (what: string) => new AppError("not_found", `${what} was not found, or is not in your team's records.`);

/** Field messages from a zod error, keyed by dotted path. */
export function fieldMessages(error: ZodError): Record<string, string> {
  const fields: Record<string, string> = {};
  for (const issue of error.issues) {
    const key = issue.path.join(".") || "_";
    fields[key] ??= issue.message;
  }
  return fields;
}

const UNAVAILABLE_CODES = new Set(["ECONNREFUSED", "ECONNRESET", "ETIMEDOUT", "EPIPE", "57P01", "57P02", "57P03", "08006", "08001", "08003"]);

/** True when an error means a backing service (database, object store, mail relay) is down. */
export function isServiceUnavailable(err: unknown): boolean {
  if (!err || typeof err !== "object") return false;
  const e = err as { code?: unknown; name?: unknown; message?: unknown; cause?: unknown; errors?: unknown };
  if (typeof e.code === "string" && UNAVAILABLE_CODES.has(e.code)) return true;
  if (e.name === "StorageUnavailableError" || e.name === "KnexTimeoutError") return true;
  if (typeof e.message === "string" && /Connection terminated|Connection ended unexpectedly|has encountered a connection error|connect ECONNREFUSED|terminating connection due to administrator command|the database system is (starting|shutting) down|Timeout acquiring a connection/i.test(e.message)) return true;
  if (Array.isArray(e.errors) && e.errors.some(isServiceUnavailable)) return true;
  return e.cause !== undefined && e.cause !== err && isServiceUnavailable(e.cause);
}

export interface ErrorBody {
  error: { code: ErrorCode | "internal"; message: string; fields?: Record<string, string>; details?: Record<string, unknown> };
}

/** Maps any thrown value to a status and a JSON body. 500s say nothing internal. */
export function toErrorBody(err: unknown): { status: number; body: ErrorBody } {
  if (err instanceof AppError) {
    return {
      status: err.status,
      body: { error: { code: err.code, message: err.message, ...(err.fields ? { fields: err.fields } : {}), ...(err.details ? { details: err.details } : {}) } },
    };
  }
  if (err instanceof FilmError) {
    // The film pipeline's typed refusals: a file Rimwatch cannot read (415) or a broken one (422).
    const details = err instanceof UnsupportedFilmError && err.transferSyntaxUid ? { transferSyntaxUid: err.transferSyntaxUid } : undefined;
    return { status: err.status, body: { error: { code: err.status === 415 ? "unsupported" : "unprocessable", message: err.message, ...(details ? { details } : {}) } } };
  }
  if (err instanceof ZodError) {
    return { status: 400, body: { error: { code: "invalid", message: "Some fields need correcting.", fields: fieldMessages(err) } } };
  }
  if (isServiceUnavailable(err)) {
    return { status: 503, body: { error: { code: "unavailable", message: "A service Rimwatch depends on is not answering. Nothing was saved; try again in a minute." } } };
  }
  return { status: 500, body: { error: { code: "internal", message: "Something went wrong on the server. Nothing was saved; if it happens again, tell the Rimwatch administrator." } } };
}
