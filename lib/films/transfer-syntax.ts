/**
 * Transfer syntaxes: DICOM PS3.5 section 10 (and Annex A for the encodings), names as registered in
 * DICOM PS3.6 Annex A, Table A-1.
 */

export const TS = {
  implicitLittle: '1.2.840.10008.1.2',
  explicitLittle: '1.2.840.10008.1.2.1',
  deflatedExplicitLittle: '1.2.840.10008.1.2.1.99',
  jpegBaseline: '1.2.840.10008.1.2.4.50',
  jpegLossless: '1.2.840.10008.1.2.4.57',
  jpegLosslessSv1: '1.2.840.10008.1.2.4.70',
} as const;

export type SupportedTransferSyntax = (typeof TS)[keyof typeof TS];

/** How the pixel data of a supported transfer syntax is encoded. */
export type PixelEncoding = 'native' | 'jpeg-baseline' | 'jpeg-lossless';

const SUPPORTED: Record<SupportedTransferSyntax, PixelEncoding> = {
  // PS3.5 A.1 (implicit VR little endian), A.2 (explicit VR little endian): native pixel data.
  [TS.implicitLittle]: 'native',
  [TS.explicitLittle]: 'native',
  // PS3.5 A.5: the data set after the file meta information is deflated (RFC 1951); pixels stay native.
  [TS.deflatedExplicitLittle]: 'native',
  // PS3.5 A.4.1 and 8.2.1: encapsulated JPEG, process 1 (8-bit lossy).
  [TS.jpegBaseline]: 'jpeg-baseline',
  // PS3.5 A.4.1 and 8.2.1: encapsulated JPEG, lossless process 14 (any predictor / predictor 1).
  [TS.jpegLossless]: 'jpeg-lossless',
  [TS.jpegLosslessSv1]: 'jpeg-lossless',
};

/** Names from DICOM PS3.6 Table A-1, for messages. */
const NAMES: Record<string, string> = {
  '1.2.840.10008.1.2': 'Implicit VR Little Endian',
  '1.2.840.10008.1.2.1': 'Explicit VR Little Endian',
  '1.2.840.10008.1.2.1.98': 'Encapsulated Uncompressed Explicit VR Little Endian',
  '1.2.840.10008.1.2.1.99': 'Deflated Explicit VR Little Endian',
  '1.2.840.10008.1.2.2': 'Explicit VR Big Endian (retired)',
  '1.2.840.10008.1.2.4.50': 'JPEG Baseline (Process 1)',
  '1.2.840.10008.1.2.4.51': 'JPEG Extended (Process 2 & 4)',
  '1.2.840.10008.1.2.4.57': 'JPEG Lossless, Non-Hierarchical (Process 14)',
  '1.2.840.10008.1.2.4.70': 'JPEG Lossless, Non-Hierarchical, First-Order Prediction (Process 14 [Selection Value 1])',
  '1.2.840.10008.1.2.4.80': 'JPEG-LS Lossless Image Compression',
  '1.2.840.10008.1.2.4.81': 'JPEG-LS Lossy (Near-Lossless) Image Compression',
  '1.2.840.10008.1.2.4.90': 'JPEG 2000 Image Compression (Lossless Only)',
  '1.2.840.10008.1.2.4.91': 'JPEG 2000 Image Compression',
  '1.2.840.10008.1.2.4.92': 'JPEG 2000 Part 2 Multi-component Image Compression (Lossless Only)',
  '1.2.840.10008.1.2.4.93': 'JPEG 2000 Part 2 Multi-component Image Compression',
  '1.2.840.10008.1.2.4.94': 'JPIP Referenced',
  '1.2.840.10008.1.2.4.95': 'JPIP Referenced Deflate',
  '1.2.840.10008.1.2.4.100': 'MPEG2 Main Profile / Main Level',
  '1.2.840.10008.1.2.4.101': 'MPEG2 Main Profile / High Level',
  '1.2.840.10008.1.2.4.102': 'MPEG-4 AVC/H.264 High Profile / Level 4.1',
  '1.2.840.10008.1.2.4.103': 'MPEG-4 AVC/H.264 BD-compatible High Profile / Level 4.1',
  '1.2.840.10008.1.2.4.104': 'MPEG-4 AVC/H.264 High Profile / Level 4.2 For 2D Video',
  '1.2.840.10008.1.2.4.105': 'MPEG-4 AVC/H.264 High Profile / Level 4.2 For 3D Video',
  '1.2.840.10008.1.2.4.106': 'MPEG-4 AVC/H.264 Stereo High Profile / Level 4.2',
  '1.2.840.10008.1.2.4.107': 'HEVC/H.265 Main Profile / Level 5.1',
  '1.2.840.10008.1.2.4.108': 'HEVC/H.265 Main 10 Profile / Level 5.1',
  '1.2.840.10008.1.2.4.110': 'JPEG XL Lossless',
  '1.2.840.10008.1.2.4.111': 'JPEG XL JPEG Recompression',
  '1.2.840.10008.1.2.4.112': 'JPEG XL',
  '1.2.840.10008.1.2.4.201': 'High-Throughput JPEG 2000 Image Compression (Lossless Only)',
  '1.2.840.10008.1.2.4.202': 'High-Throughput JPEG 2000 with RPCL Options Image Compression (Lossless Only)',
  '1.2.840.10008.1.2.4.203': 'High-Throughput JPEG 2000 Image Compression',
  '1.2.840.10008.1.2.5': 'RLE Lossless',
};

/** The registered name of a transfer syntax UID, or "unknown transfer syntax". */
export function transferSyntaxName(uid: string): string {
  return NAMES[uid] ?? 'unknown transfer syntax';
}

/** The pixel encoding when Rimwatch decodes this transfer syntax, else null. */
export function pixelEncodingOf(uid: string): PixelEncoding | null {
  return Object.hasOwn(SUPPORTED, uid) ? SUPPORTED[uid as SupportedTransferSyntax] : null;
}

export const supportedTransferSyntaxes: readonly SupportedTransferSyntax[] = Object.keys(SUPPORTED) as SupportedTransferSyntax[];
