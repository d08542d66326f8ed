/**
 * A small reader for the frame header (SOF segment) of a JPEG stream, used to check an encapsulated
 * frame against Rows/Columns before any decoder allocates memory for it (ISO/IEC 10918-1 B.2.2).
 */

export interface JpegFrameHeader {
  /** The SOF marker, 0xC0..0xCF (without C4, C8, CC): 0xC0 baseline, 0xC1 extended, 0xC3 lossless... */
  marker: number;
  /** Sample precision P, bits. */
  precision: number;
  /** Number of lines Y. */
  height: number;
  /** Samples per line X. */
  width: number;
  /** Components in the frame Nf. */
  components: number;
}

function isSof(marker: number): boolean {
  return marker >= 0xc0 && marker <= 0xcf && marker !== 0xc4 && marker !== 0xc8 && marker !== 0xcc;
}

/** The first frame header of the stream, or null when the bytes are not a JPEG stream with one. */
export function readJpegFrameHeader(bytes: Uint8Array): JpegFrameHeader | null {
  const n = bytes.length;
  if (n < 4 || bytes[0] !== 0xff || bytes[1] !== 0xd8) return null;
  let pos = 2;
  while (pos + 4 <= n) {
    if (bytes[pos] !== 0xff) return null;
    let p = pos + 1;
    while (p < n && bytes[p] === 0xff) p += 1; // fill bytes (B.1.1.2)
    if (p >= n) return null;
    const marker = bytes[p] ?? 0;
    pos = p + 1;
    if (marker === 0x01 || (marker >= 0xd0 && marker <= 0xd7)) continue; // markers without a length
    if (marker === 0xd9 || marker === 0xda) return null; // EOI or SOS before any frame header
    if (pos + 2 > n) return null;
    const length = ((bytes[pos] ?? 0) << 8) | (bytes[pos + 1] ?? 0);
    if (length < 2) return null;
    if (isSof(marker)) {
      if (length < 8 || pos + 8 > n) return null;
      return {
        marker,
        precision: bytes[pos + 2] ?? 0,
        height: ((bytes[pos + 3] ?? 0) << 8) | (bytes[pos + 4] ?? 0),
        width: ((bytes[pos + 5] ?? 0) << 8) | (bytes[pos + 6] ?? 0),
        components: bytes[pos + 7] ?? 0,
      };
    }
    pos += length;
  }
  return null;
}
