/**
 * Typed error for input that the computation core refuses to turn into a number.
 * Callers that show results to people catch it and show a plain "not measured" instead.
 */
export class MeasureInputError extends Error {
  /** Which input was wrong, as the caller named it (e.g. 'lungDiameter', 'pixelSpacingMm'). */
  readonly field: string;
  /** Short machine-readable code. */
  readonly code: MeasureInputErrorCode;

  constructor(field: string, code: MeasureInputErrorCode, message: string) {
    super(message);
    this.name = 'MeasureInputError';
    this.field = field;
    this.code = code;
  }
}

export type MeasureInputErrorCode =
  | 'not-finite'
  | 'negative'
  | 'not-positive'
  | 'out-of-range'
  | 'inconsistent'
  | 'bad-format';

/** Throws unless `value` is a finite number. Source: house rule, no wrong numbers. */
export function requireFinite(field: string, value: number): number {
  if (typeof value !== 'number' || !Number.isFinite(value)) {
    throw new MeasureInputError(field, 'not-finite', `${field} must be a finite number.`);
  }
  return value;
}

/** Throws unless `value` is a finite number >= 0. Source: house rule, no wrong numbers. */
export function requireNonNegative(field: string, value: number): number {
  requireFinite(field, value);
  if (value < 0) {
    throw new MeasureInputError(field, 'negative', `${field} must not be negative.`);
  }
  return value;
}

/** Throws unless `value` is a finite number > 0. Source: house rule, no wrong numbers. */
export function requirePositive(field: string, value: number): number {
  requireFinite(field, value);
  if (value <= 0) {
    throw new MeasureInputError(field, 'not-positive', `${field} must be greater than zero.`);
  }
  return value;
}
