/**
 * Minimal types for jpeg-lossless-decoder-js 2.1.2, which names a declaration file in its package.json
 * but does not ship it. Only what Rimwatch calls is declared.
 */
declare module 'jpeg-lossless-decoder-js' {
  export class Decoder {
    constructor(buffer?: ArrayBuffer | null, numBytes?: number);
    /** Frame width and height from the SOF header, set by decode(). */
    xDim: number;
    yDim: number;
    /** Components in the scan, set by decode(). */
    numComp: number;
    /** Sample precision P from the SOF header, set by decode(). */
    precision: number | undefined;
    /**
     * Decodes one JPEG lossless (process 14) stream found at offset..offset+length of buffer.
     * Returns 8-bit samples when numBytes (or the precision) is 1 byte, else 16-bit samples, row by row.
     */
    decode(buffer?: ArrayBuffer, offset?: number, length?: number, numBytes?: number): Uint8Array | Uint16Array;
    decompress(buffer: ArrayBuffer, offset: number, length: number): ArrayBuffer;
    /** Neighbours of the current sample (Ra, Rb) during decoding. */
    getPreviousX(compOffset?: number): number;
    getPreviousY(compOffset?: number): number;
    /** Predictor 7 (ISO/IEC 10918-1 Table H.1), picked by decode() for selection value 7. */
    select7(compOffset?: number): number;
  }
}
