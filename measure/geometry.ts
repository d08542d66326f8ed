import { MeasureInputError } from './errors';

/** A point in image pixels: x = column, y = row (origin top-left). */
export interface Point {
  x: number;
  y: number;
}

/** A straight segment between two image points. */
export interface Segment {
  a: Point;
  b: Point;
}

/** Throws unless the segment's four coordinates are finite and not negative. Source: house rule, no wrong numbers. */
export function requireValidSegment(field: string, segment: Segment): Segment {
  const coords = [segment.a.x, segment.a.y, segment.b.x, segment.b.y];
  for (const c of coords) {
    if (typeof c !== 'number' || !Number.isFinite(c)) {
      throw new MeasureInputError(field, 'not-finite', `${field} has a coordinate that is not a finite number.`);
    }
    if (c < 0) {
      throw new MeasureInputError(field, 'negative', `${field} has a coordinate outside the image (negative).`);
    }
  }
  return segment;
}

/** Length of a segment in pixels (Euclidean, square pixels). Source: plane geometry. */
export function segmentLengthPx(segment: Segment): number {
  requireValidSegment('segment', segment);
  return Math.hypot(segment.b.x - segment.a.x, segment.b.y - segment.a.y);
}

/**
 * Angle of a segment away from horizontal, degrees in [0, 90], independent of the order of its
 * ends. Source: plane geometry.
 */
export function segmentTiltFromHorizontalDegrees(segment: Segment): number {
  requireValidSegment('segment', segment);
  const dx = Math.abs(segment.b.x - segment.a.x);
  const dy = Math.abs(segment.b.y - segment.a.y);
  if (dx === 0 && dy === 0) return 0;
  return (Math.atan2(dy, dx) * 180) / Math.PI;
}
