/**
 * The object store against the S3-compatible fake, run as the child process scripts/services.sh runs
 * (storage/fake-s3.ts on a free port, objects in a temp dir). The binary checks (sha256 of what comes
 * back equals sha256 of what went in, streamed and buffered) catch the aws-chunked framing corruption
 * that appears when the SDK's checksum settings are left at their defaults.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { createHash, randomBytes } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { Readable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  createObjectStore,
  ObjectNotFoundError,
  objectStore,
  resetObjectStoreForTests,
  StorageError,
  StorageUnavailableError,
  type S3ObjectStore,
  type StorageConfig,
} from '../../storage';

const ROOT = resolve(__dirname, '../..');
const BUCKET = 'rimwatch-films-test';

let child: ChildProcess;
let childExit: Promise<number | null>;
let endpoint = '';
let dir = '';
let store: S3ObjectStore;

function sha256(b: Uint8Array): string {
  return createHash('sha256').update(b).digest('hex');
}

function config(overrides: Partial<StorageConfig> = {}): StorageConfig {
  return {
    endpoint,
    region: 'us-east-1',
    bucket: BUCKET,
    accessKeyId: 'S3RVER',
    secretAccessKey: 'S3RVER',
    forcePathStyle: true,
    ...overrides,
  };
}

/** A stream of many small, unevenly sized chunks, like an upload coming off a socket. */
function chunked(bytes: Buffer): Readable {
  let offset = 0;
  let size = 1;
  return new Readable({
    read() {
      if (offset >= bytes.length) {
        this.push(null);
        return;
      }
      size = (size * 7 + 13) % 65_521 || 1;
      this.push(bytes.subarray(offset, offset + size));
      offset += size;
    },
  });
}

async function closedPort(): Promise<number> {
  return new Promise((res) => {
    const s = createServer();
    s.listen(0, '127.0.0.1', () => {
      const addr = s.address();
      const port = typeof addr === 'object' && addr ? addr.port : 0;
      s.close(() => res(port));
    });
  });
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'rimwatch-s3-'));
  child = spawn(process.execPath, ['--import', 'tsx', join(ROOT, 'storage/fake-s3.ts')], {
    cwd: ROOT,
    env: { ...process.env, FAKE_S3_PORT: '0', FAKE_S3_DIR: dir, S3_BUCKET: BUCKET },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  childExit = new Promise((res) => child.once('exit', (code) => res(code)));
  endpoint = await new Promise<string>((res, rej) => {
    let out = '';
    const timer = setTimeout(() => rej(new Error(`fake S3 did not start: ${out}`)), 30_000);
    child.stdout?.on('data', (d: Buffer) => {
      out += d.toString();
      const m = /fake S3 listening on (http:\/\/127\.0\.0\.1:\d+)/.exec(out);
      if (m?.[1]) {
        clearTimeout(timer);
        res(m[1]);
      }
    });
    child.stderr?.on('data', (d: Buffer) => (out += d.toString()));
    child.once('exit', (code) => rej(new Error(`fake S3 exited with ${code}: ${out}`)));
  });
  store = createObjectStore(config());
});

afterAll(async () => {
  store?.destroy();
  resetObjectStoreForTests();
  if (child && child.exitCode === null) child.kill('SIGTERM');
  await childExit;
  rmSync(dir, { recursive: true, force: true });
});

describe('object store over the S3 fake', () => {
  it('round-trips a Buffer: put, head, get, getBuffer', async () => {
    const bytes = randomBytes(200_000);
    await store.put('films/buffer.bin', bytes, { contentType: 'application/dicom' });
    expect(await store.head('films/buffer.bin')).toEqual({ size: bytes.length, contentType: 'application/dicom' });
    const got = await store.get('films/buffer.bin');
    expect(got.contentType).toBe('application/dicom');
    expect(got.contentLength).toBe(bytes.length);
    const chunks: Buffer[] = [];
    for await (const c of got.body) chunks.push(c as Buffer);
    expect(sha256(Buffer.concat(chunks))).toBe(sha256(bytes));
    expect(sha256(await store.getBuffer('films/buffer.bin'))).toBe(sha256(bytes));
  });

  it('stores a streamed body byte for byte (no chunked framing inside the object)', async () => {
    const bytes = randomBytes(3 * 1024 * 1024 + 17);
    await store.put('films/streamed.bin', chunked(bytes), { contentType: 'application/octet-stream', contentLength: bytes.length });
    const head = await store.head('films/streamed.bin');
    expect(head?.size).toBe(bytes.length);
    const back = await store.getBuffer('films/streamed.bin');
    expect(back.length).toBe(bytes.length);
    expect(sha256(back)).toBe(sha256(bytes));
  });

  it('accepts a stream of unknown length (read into memory first)', async () => {
    const bytes = randomBytes(70_001);
    await store.put('films/unknown-length.bin', chunked(bytes), { contentType: 'image/png' });
    expect(sha256(await store.getBuffer('films/unknown-length.bin'))).toBe(sha256(bytes));
  });

  it('presigns a GET that serves the same bytes, and refuses it once expired', async () => {
    const bytes = randomBytes(50_000);
    await store.put('previews/p.png', bytes, { contentType: 'image/png' });
    const url = await store.presignGet('previews/p.png', 60);
    expect(url.startsWith(`${endpoint}/${BUCKET}/previews/p.png?`)).toBe(true);
    expect(url).toContain('X-Amz-Expires=60');
    const res = await fetch(url);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toBe('image/png');
    expect(sha256(Buffer.from(await res.arrayBuffer()))).toBe(sha256(bytes));

    // The fake does not verify SigV4 signatures, but it does enforce X-Amz-Expires.
    const shortLived = await store.presignGet('previews/p.png', 1);
    await new Promise((r) => setTimeout(r, 2_100));
    expect((await fetch(shortLived)).status).toBe(403);
  });

  it('rejects presign durations outside 1 s .. 7 days', async () => {
    await expect(store.presignGet('previews/p.png', 0)).rejects.toBeInstanceOf(StorageError);
    await expect(store.presignGet('previews/p.png', 604_801)).rejects.toBeInstanceOf(StorageError);
  });

  it('removes: head gives null, get throws ObjectNotFoundError, removing again is fine', async () => {
    await store.put('films/gone.bin', Buffer.from('to be removed'), { contentType: 'text/plain' });
    await store.remove('films/gone.bin');
    expect(await store.head('films/gone.bin')).toBeNull();
    await expect(store.get('films/gone.bin')).rejects.toBeInstanceOf(ObjectNotFoundError);
    await expect(store.getBuffer('films/gone.bin')).rejects.toMatchObject({ status: 404 });
    await expect(store.remove('films/gone.bin')).resolves.toBeUndefined();
  });

  it('refuses keys that could escape the bucket layout', async () => {
    for (const key of ['', '/abs', 'a/../b', 'a//b', 'spaces are not keys', '../x']) {
      await expect(store.put(key, Buffer.from('x'), { contentType: 'text/plain' })).rejects.toBeInstanceOf(StorageError);
    }
  });

  it('ensureBucket creates a missing bucket once and is idempotent', async () => {
    const other = createObjectStore(config({ bucket: 'rimwatch-created-by-test' }));
    try {
      const before = await other.put('x', Buffer.from('early'), { contentType: 'text/plain' }).catch((e: unknown) => e);
      expect(before).toBeInstanceOf(StorageError); // no bucket yet: a configuration fault, not a missing object
      expect(before).not.toBeInstanceOf(ObjectNotFoundError);
      await other.ensureBucket();
      await other.ensureBucket();
      await other.put('x', Buffer.from('ok'), { contentType: 'text/plain' });
      expect((await other.getBuffer('x')).toString()).toBe('ok');
    } finally {
      other.destroy();
    }
  });

  it('objectStore() builds its singleton from the environment', async () => {
    const saved = { ...process.env };
    try {
      Object.assign(process.env, {
        S3_ENDPOINT: endpoint,
        S3_REGION: '',
        S3_BUCKET: BUCKET,
        S3_ACCESS_KEY_ID: 'S3RVER',
        S3_SECRET_ACCESS_KEY: 'S3RVER',
        S3_FORCE_PATH_STYLE: 'true',
      });
      resetObjectStoreForTests();
      const s = objectStore();
      expect(objectStore()).toBe(s);
      expect(s.bucket).toBe(BUCKET);
      await s.put('env/one.txt', Buffer.from('from env'), { contentType: 'text/plain' });
      expect((await s.getBuffer('env/one.txt')).toString()).toBe('from env');
    } finally {
      process.env = saved;
      resetObjectStoreForTests();
    }
  });

  it('turns a refused connection into StorageUnavailableError (status 503)', async () => {
    const port = await closedPort();
    const down = createObjectStore(config({ endpoint: `http://127.0.0.1:${port}` }));
    try {
      const err = await down.put('films/x.bin', Buffer.from('x'), { contentType: 'text/plain' }).catch((e: unknown) => e);
      expect(err).toBeInstanceOf(StorageUnavailableError);
      expect((err as StorageUnavailableError).status).toBe(503);
      await expect(down.head('films/x.bin')).rejects.toBeInstanceOf(StorageUnavailableError);
    } finally {
      down.destroy();
    }
  });

  it('the fake stops cleanly on SIGTERM', async () => {
    child.kill('SIGTERM');
    expect(await childExit).toBe(0);
  });
});
