/**
 * Bad input gives a typed error with a plain message, never a crash: truncated, garbage, non-DICOM,
 * inconsistent headers, absurd sizes (BadFilmError, route 422) and transfer syntaxes or formats
 * Rimwatch does not decode (UnsupportedFilmError, route 415).
 */
import { readFileSync } from 'node:fs';
import { crc32, deflateSync } from 'node:zlib';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { BadFilmError, FilmError, ingestFilm, readDicom, readDicomHeader, UnsupportedFilmError } from '../../lib/films';
import {
  fixtureDir,
  fixtureSyntaxUid,
  modifyDicom,
  patternPixels,
  writeDicom,
  writeJpegBaselineDicom,
  type FixtureSyntax,
} from '../support/dicom-fixtures';

vi.setConfig({ testTimeout: 60_000 });

let dir = '';
let cleanup: () => void = () => {};
beforeAll(() => ({ dir, cleanup } = fixtureDir()));
afterAll(() => cleanup());

async function failure(p: Promise<unknown> | (() => unknown)): Promise<unknown> {
  try {
    await (typeof p === 'function' ? p() : p);
  } catch (e) {
    return e;
  }
  return null;
}

function small(name: string, syntax: FixtureSyntax = 'explicit', attributes: Record<string, string> = {}): string {
  return writeDicom(dir, name, { rows: 24, columns: 20, pixels: patternPixels(24, 20, 12), syntax, attributes });
}

/** Deterministic pseudo-random numbers (a linear congruential generator), so failures replay. */
function prng(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

describe('not DICOM at all -> BadFilmError', () => {
  it('empty, random bytes, a PNG, a text file', async () => {
    const rnd = prng(7);
    const png = await sharp({ create: { width: 4, height: 4, channels: 3, background: '#808080' } }).png().toBuffer();
    for (const bytes of [Buffer.alloc(0), Buffer.from(Array.from({ length: 4096 }, () => Math.floor(rnd() * 256))), png, Buffer.from('chest film\n')]) {
      const e = await failure(readDicom(bytes));
      expect(e).toBeInstanceOf(BadFilmError);
      expect((e as BadFilmError).status).toBe(422);
      expect((e as Error).message).toMatch(/not a DICOM file/);
    }
  });

  it('a DICM prefix followed by garbage', async () => {
    const bytes = Buffer.concat([Buffer.alloc(128), Buffer.from('DICM'), Buffer.from('\u0002\u0000\u0010\u0000UI\u00ff\u00ffgarbage')]);
    expect(await failure(readDicom(bytes))).toBeInstanceOf(BadFilmError);
  });
});

describe('truncated files -> BadFilmError at every cut', () => {
  const syntaxes: FixtureSyntax[] = ['explicit', 'implicit', 'deflated', 'jpeg-lossless-sv1'];
  for (const syntax of syntaxes) {
    it(`${syntax}`, async () => {
      const whole = readFileSync(small(`trunc-${syntax}`, syntax));
      await expect(readDicom(whole)).resolves.toBeDefined();
      let cuts = 0;
      for (let cut = 0; cut < whole.length; cut += Math.max(1, Math.floor(whole.length / 97))) {
        const e = await failure(readDicom(whole.subarray(0, cut)));
        expect(e, `cut at ${cut} of ${whole.length}`).toBeInstanceOf(BadFilmError);
        cuts += 1;
      }
      // The last byte matters too.
      expect(await failure(readDicom(whole.subarray(0, whole.length - 1)))).toBeInstanceOf(BadFilmError);
      expect(cuts).toBeGreaterThan(90);
    });
  }

  it('JPEG baseline', async () => {
    const grey = new Uint8Array(64 * 48).map((_, i) => (i * 5) % 256);
    const whole = readFileSync(await writeJpegBaselineDicom(dir, 'trunc-baseline', { data: grey, width: 64, height: 48 }));
    for (let cut = 0; cut < whole.length; cut += Math.floor(whole.length / 61)) {
      expect(await failure(readDicom(whole.subarray(0, cut))), `cut at ${cut}`).toBeInstanceOf(BadFilmError);
    }
  });
});

describe('corrupted bytes -> a FilmError or a picture, never another error', () => {
  for (const syntax of ['explicit', 'deflated', 'jpeg-lossless', 'jpeg-lossless-sv1'] as FixtureSyntax[]) {
    it(`${syntax}: 150 files with bytes overwritten at random`, async () => {
      const whole = readFileSync(small(`fuzz-${syntax}`, syntax));
      const rnd = prng(syntax.length * 7919);
      let refused = 0;
      for (let round = 0; round < 150; round += 1) {
        const bytes = Buffer.from(whole);
        const hits = 1 + Math.floor(rnd() * 8);
        for (let h = 0; h < hits; h += 1) bytes[132 + Math.floor(rnd() * (bytes.length - 132))] = Math.floor(rnd() * 256);
        const e = await failure(readDicom(bytes));
        if (e !== null) {
          expect(e, `round ${round}: ${e instanceof Error ? e.message : typeof e}`).toBeInstanceOf(FilmError);
          refused += 1;
        }
      }
      expect(refused).toBeGreaterThan(0); // some corruptions must have hit the structure
    });
  }
});

describe('transfer syntaxes Rimwatch does not decode -> UnsupportedFilmError naming them (PS3.5 10, PS3.6 A)', () => {
  const cases: [FixtureSyntax, string][] = [
    ['rle', 'RLE Lossless'],
    ['jpeg-ls', 'JPEG-LS Lossless Image Compression'],
    ['big-endian', 'Explicit VR Big Endian'],
    ['jpeg-extended', 'JPEG Extended (Process 2 & 4)'],
  ];
  for (const [syntax, name] of cases) {
    it(`${syntax}`, async () => {
      const bytes = readFileSync(
        writeDicom(dir, `unsupported-${syntax}`, { rows: 16, columns: 16, pixels: patternPixels(16, 16, 12), syntax }),
      );
      for (const e of [await failure(readDicom(bytes)), await failure(() => readDicomHeader(bytes))]) {
        expect(e).toBeInstanceOf(UnsupportedFilmError);
        const err = e as UnsupportedFilmError;
        expect(err.status).toBe(415);
        expect(err.transferSyntaxUid).toBe(fixtureSyntaxUid[syntax]);
        expect(err.message).toContain(fixtureSyntaxUid[syntax]);
        expect(err.message).toContain(name);
      }
    });
  }

  it('an unknown UID is named as unknown', async () => {
    // dcmodify leaves the file meta information alone, so patch the UID in place (same length, 20 bytes).
    const bytes = Buffer.from(readFileSync(small('unknown-ts')));
    const at = bytes.indexOf(Buffer.from('1.2.840.10008.1.2.1\0', 'latin1'));
    expect(at).toBeGreaterThan(132);
    bytes.write('1.2.3.4.5.6.7.8.9.10', at, 'latin1');
    const e = await failure(readDicom(bytes));
    expect(e).toBeInstanceOf(UnsupportedFilmError);
    expect((e as Error).message).toMatch(/1\.2\.3\.4\.5\.6\.7\.8\.9\.10 \(unknown transfer syntax\)/);
  });
});

describe('inconsistent or absurd headers (PS3.3 C.7.6.3 Image Pixel)', () => {
  it('Rows or Columns beyond 20,000, or more than 100 million pixels', async () => {
    for (const [name, attrs] of [
      ['rows-30000', { '(0028,0010)': '30000' }],
      ['area', { '(0028,0010)': '15000', '(0028,0011)': '15000' }],
      ['zero-rows', { '(0028,0010)': '0' }],
    ] as const) {
      const file = small(`absurd-${name}`);
      modifyDicom(file, attrs);
      const e = await failure(readDicom(readFileSync(file)));
      expect(e, name).toBeInstanceOf(BadFilmError);
    }
  });

  it('Pixel Data shorter than Rows x Columns x bytes', async () => {
    const file = small('short-pixels');
    modifyDicom(file, { '(0028,0010)': '25' });
    const e = await failure(readDicom(readFileSync(file)));
    expect(e).toBeInstanceOf(BadFilmError);
    expect((e as Error).message).toMatch(/Pixel Data holds 960 bytes; .* needs 1000/);
  });

  it('a JPEG frame whose size disagrees with Rows/Columns', async () => {
    const file = small('jpeg-size', 'jpeg-lossless-sv1');
    modifyDicom(file, { '(0028,0011)': '21' });
    const e = await failure(readDicom(readFileSync(file)));
    expect(e).toBeInstanceOf(BadFilmError);
    expect((e as Error).message).toMatch(/20 x 24 but the header says 21 x 24/);
  });

  it('Bits Allocated 12 is malformed; 32 is unsupported', async () => {
    const twelve = small('ba12');
    modifyDicom(twelve, { '(0028,0100)': '12' });
    expect(await failure(readDicom(readFileSync(twelve)))).toBeInstanceOf(BadFilmError);
    const thirtyTwo = small('ba32');
    modifyDicom(thirtyTwo, { '(0028,0100)': '32', '(0028,0101)': '32', '(0028,0102)': '31' });
    expect(await failure(readDicom(readFileSync(thirtyTwo)))).toBeInstanceOf(UnsupportedFilmError);
  });

  it('High Bit outside Bits Allocated', async () => {
    const file = small('highbit');
    modifyDicom(file, { '(0028,0102)': '16' });
    expect(await failure(readDicom(readFileSync(file)))).toBeInstanceOf(BadFilmError);
  });

  it('PALETTE COLOR is unsupported; a missing Photometric Interpretation is malformed', async () => {
    const palette = small('palette', 'explicit', { '(0028,0004)': 'CS [PALETTE COLOR]' });
    expect(await failure(readDicom(readFileSync(palette)))).toBeInstanceOf(UnsupportedFilmError);
    const none = small('no-pi', 'explicit', { '(0028,0004)': 'CS []' });
    expect(await failure(readDicom(readFileSync(none)))).toBeInstanceOf(BadFilmError);
  });

  it('no Pixel Data element', async () => {
    const file = small('no-pixels');
    const bytes = readFileSync(file);
    // Cut the file right before the Pixel Data tag (7FE0,0010), explicit VR little endian.
    const at = bytes.indexOf(Buffer.from([0xe0, 0x7f, 0x10, 0x00]));
    expect(at).toBeGreaterThan(132);
    const e = await failure(readDicom(bytes.subarray(0, at)));
    expect(e).toBeInstanceOf(BadFilmError);
    expect((e as Error).message).toMatch(/no Pixel Data/);
  });
});

/** A PNG whose header declares width x height, with a tiny (wrong) image stream: a decompression-bomb shape. */
function pngDeclaring(width: number, height: number): Buffer {
  const chunk = (type: string, data: Buffer) => {
    const len = Buffer.alloc(4);
    len.writeUInt32BE(data.length);
    const body = Buffer.concat([Buffer.from(type, 'latin1'), data]);
    const crc = Buffer.alloc(4);
    crc.writeUInt32BE(crc32(body) >>> 0);
    return Buffer.concat([len, body, crc]);
  };
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr.set([8, 0, 0, 0, 0], 8); // 8-bit greyscale
  return Buffer.concat([
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
    chunk('IHDR', ihdr),
    chunk('IDAT', deflateSync(Buffer.alloc(1024))),
    chunk('IEND', Buffer.alloc(0)),
  ]);
}

describe('ingestFilm on files that are not films', () => {
  it('an empty upload', async () => {
    expect(await failure(ingestFilm(Buffer.alloc(0), 'x.dcm', 'application/dicom'))).toBeInstanceOf(BadFilmError);
  });

  it('text is unsupported, unless it claims to be DICOM (then it is a bad DICOM file)', async () => {
    const text = Buffer.from('not a film at all');
    expect(await failure(ingestFilm(text, 'notes.txt', 'text/plain'))).toBeInstanceOf(UnsupportedFilmError);
    expect(await failure(ingestFilm(text, 'film.dcm', 'application/octet-stream'))).toBeInstanceOf(BadFilmError);
    expect(await failure(ingestFilm(text, 'film', 'application/dicom'))).toBeInstanceOf(BadFilmError);
  });

  it('a GIF or WebP is unsupported', async () => {
    const gif = await sharp({ create: { width: 8, height: 8, channels: 3, background: '#777' } }).gif().toBuffer();
    expect(await failure(ingestFilm(gif, 'film.gif', 'image/gif'))).toBeInstanceOf(UnsupportedFilmError);
    const webp = await sharp({ create: { width: 8, height: 8, channels: 3, background: '#777' } }).webp().toBuffer();
    // Claimed as PNG: the bytes decide, and sharp reports the real format.
    expect(await failure(ingestFilm(webp, 'film.png', 'image/png'))).toBeInstanceOf(UnsupportedFilmError);
  });

  it('a truncated PNG or JPEG is a bad file', async () => {
    const img = await sharp({ create: { width: 64, height: 64, channels: 3, background: '#456' } })
      .composite([{ input: Buffer.from(Array.from({ length: 64 * 64 * 3 }, (_, i) => (i * 31) % 256)), raw: { width: 64, height: 64, channels: 3 } }])
      .png()
      .toBuffer();
    expect(await failure(ingestFilm(img.subarray(0, Math.floor(img.length / 2)), 'f.png', 'image/png'))).toBeInstanceOf(BadFilmError);
    const jpg = await sharp(img).jpeg().toBuffer();
    expect(await failure(ingestFilm(jpg.subarray(0, Math.floor(jpg.length / 2)), 'f.jpg', 'image/jpeg'))).toBeInstanceOf(BadFilmError);
  });

  it('a PNG declaring 30,000 x 30,000 pixels is refused from its header, before decoding', async () => {
    const bomb = pngDeclaring(30_000, 30_000);
    const started = performance.now();
    const e = await failure(ingestFilm(bomb, 'bomb.png', 'image/png'));
    expect(e).toBeInstanceOf(BadFilmError);
    expect((e as Error).message).toMatch(/30000 x 30000/);
    expect(performance.now() - started).toBeLessThan(2_000);
  });
});
