/**
 * Typed failures of the film pipeline. They carry the HTTP status a route should answer with, so the
 * route handler can turn them into its own error type without inspecting messages. Messages are plain
 * and safe to show to the person who uploaded the file: they name what is wrong with the file, never
 * anything internal.
 */
export abstract class FilmError extends Error {
  abstract readonly status: 415 | 422;
  abstract readonly code: 'unsupported_film' | 'bad_film';
}

/** A well-formed file Rimwatch cannot read (a transfer syntax or file type it does not decode). Route: 415. */
export class UnsupportedFilmError extends FilmError {
  readonly status = 415 as const;
  readonly code = 'unsupported_film' as const;
  /** The transfer syntax UID when the refusal is about one (DICOM PS3.5 section 10). */
  readonly transferSyntaxUid: string | null;

  constructor(message: string, transferSyntaxUid: string | null = null) {
    super(message);
    this.name = 'UnsupportedFilmError';
    this.transferSyntaxUid = transferSyntaxUid;
  }
}

/** A malformed, truncated, inconsistent or hostile file. Route: 422 (or 400). */
export class BadFilmError extends FilmError {
  readonly status = 422 as const;
  readonly code = 'bad_film' as const;

  constructor(message: string, options?: { cause?: unknown }) {
    super(message, options);
    this.name = 'BadFilmError';
  }
}

/** Turns whatever a parser threw (dicom-parser throws strings and plain objects) into a short text for logs. */
export function describeThrown(thrown: unknown): string {
  if (thrown instanceof Error) return thrown.message;
  if (typeof thrown === 'string') return thrown;
  if (thrown !== null && typeof thrown === 'object' && 'exception' in thrown) {
    return describeThrown(thrown.exception);
  }
  return String(thrown);
}
