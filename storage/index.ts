/**
 * The object store behind a small interface, over @aws-sdk/client-s3. Server code only: it reads
 * credentials from the environment. (It cannot carry `import "server-only"` because tests and scripts
 * import it outside Next; keep it out of client components.)
 *
 * Environment: S3_ENDPOINT (empty = real AWS), S3_REGION (default us-east-1), S3_BUCKET,
 * S3_ACCESS_KEY_ID, S3_SECRET_ACCESS_KEY (both empty = the SDK's default credential chain),
 * S3_FORCE_PATH_STYLE ("true" for the local fake).
 */
import { Readable } from 'node:stream';
import {
  CreateBucketCommand,
  DeleteObjectCommand,
  GetObjectCommand,
  HeadBucketCommand,
  HeadObjectCommand,
  PutObjectCommand,
  S3Client,
  type S3ClientConfig,
} from '@aws-sdk/client-s3';
import { getSignedUrl } from '@aws-sdk/s3-request-presigner';

export interface PutOptions {
  contentType: string;
  /** Required by S3 for streamed bodies; when absent a stream is read into memory first. */
  contentLength?: number;
}

export interface StoredObject {
  body: Readable;
  contentType: string;
  contentLength: number;
}

export interface ObjectStore {
  put(key: string, body: Buffer | Readable, options: PutOptions): Promise<void>;
  /** Throws ObjectNotFoundError when the key does not exist. */
  get(key: string): Promise<StoredObject>;
  getBuffer(key: string): Promise<Buffer>;
  /** Null when the key does not exist. */
  head(key: string): Promise<{ size: number; contentType: string } | null>;
  /** Removing a key that does not exist is not an error (S3 semantics). */
  remove(key: string): Promise<void>;
  /** A time-limited GET URL (1 s to 7 days). */
  presignGet(key: string, seconds: number): Promise<string>;
}

export interface StorageConfig {
  /** Empty or undefined: real AWS. */
  endpoint?: string;
  region: string;
  bucket: string;
  accessKeyId?: string;
  secretAccessKey?: string;
  forcePathStyle: boolean;
}

/** Base of the storage errors; `status` is what a route should answer. */
export class StorageError extends Error {
  readonly status: number = 500;
  constructor(message: string, options?: { cause?: unknown }) {
    super(message, options);
    this.name = 'StorageError';
  }
}

/** The store cannot be reached (connection refused, timeout, DNS, 5xx): a route answers 503. */
export class StorageUnavailableError extends StorageError {
  override readonly status = 503;
  constructor(message: string, options?: { cause?: unknown }) {
    super(message, options);
    this.name = 'StorageUnavailableError';
  }
}

/** No object under that key: a route answers 404. */
export class ObjectNotFoundError extends StorageError {
  override readonly status = 404;
  constructor(key: string) {
    super(`No stored object under ${key}.`);
    this.name = 'ObjectNotFoundError';
  }
}

/** Reads the configuration from the environment; throws a StorageError naming what is missing. */
export function storageConfigFromEnv(env: NodeJS.ProcessEnv = process.env): StorageConfig {
  const bucket = env.S3_BUCKET?.trim();
  if (!bucket) throw new StorageError('S3_BUCKET is not set.');
  const accessKeyId = env.S3_ACCESS_KEY_ID?.trim() || undefined;
  const secretAccessKey = env.S3_SECRET_ACCESS_KEY?.trim() || undefined;
  if ((accessKeyId === undefined) !== (secretAccessKey === undefined)) {
    throw new StorageError('Set both S3_ACCESS_KEY_ID and S3_SECRET_ACCESS_KEY, or neither.');
  }
  return {
    endpoint: env.S3_ENDPOINT?.trim() || undefined,
    region: env.S3_REGION?.trim() || 'us-east-1',
    bucket,
    accessKeyId,
    secretAccessKey,
    forcePathStyle: env.S3_FORCE_PATH_STYLE?.trim().toLowerCase() === 'true',
  };
}

const UNAVAILABLE_CODES = new Set([
  'ECONNREFUSED',
  'ECONNRESET',
  'ETIMEDOUT',
  'EHOSTUNREACH',
  'ENETUNREACH',
  'ENOTFOUND',
  'EAI_AGAIN',
  'EPIPE',
  'TimeoutError',
  'RequestTimeout',
  'SlowDown',
  'ServiceUnavailable',
]);

function errorFacts(e: unknown): { codes: string[]; status: number | undefined; name: string } {
  const codes: string[] = [];
  let status: number | undefined;
  let name = '';
  const seen = new Set<unknown>();
  const visit = (x: unknown): void => {
    if (x === null || typeof x !== 'object' || seen.has(x)) return;
    seen.add(x);
    const o = x as { code?: unknown; name?: unknown; $metadata?: { httpStatusCode?: unknown }; cause?: unknown; errors?: unknown };
    if (typeof o.code === 'string') codes.push(o.code);
    if (typeof o.name === 'string') {
      codes.push(o.name);
      if (!name) name = o.name;
    }
    const s = o.$metadata?.httpStatusCode;
    if (typeof s === 'number' && status === undefined) status = s;
    visit(o.cause);
    if (Array.isArray(o.errors)) o.errors.forEach(visit); // AggregateError from happy-eyeballs connects
  };
  visit(e);
  return { codes, status, name };
}

/** Maps an SDK error to the storage error types. */
export function toStorageError(e: unknown, action: string, key?: string): StorageError {
  if (e instanceof StorageError) return e;
  const { codes, status, name } = errorFacts(e);
  if (name === 'NoSuchBucket') return new StorageError(`The bucket does not exist (${action}); run ensureBucket().`, { cause: e });
  if ((name === 'NoSuchKey' || name === 'NotFound' || status === 404) && key !== undefined) return new ObjectNotFoundError(key);
  if (codes.some((c) => UNAVAILABLE_CODES.has(c)) || (status !== undefined && status >= 500)) {
    return new StorageUnavailableError(`The object store is unavailable (${action}).`, { cause: e });
  }
  return new StorageError(`The object store refused ${action}.`, { cause: e });
}

const KEY_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._\-/]{0,511}$/;

/** Keys are Rimwatch-made: letters, digits, . _ - /, no empty or dot-dot segments. */
export function assertValidKey(key: string): void {
  if (!KEY_PATTERN.test(key) || key.split('/').some((s) => s === '' || s === '.' || s === '..')) {
    throw new StorageError(`Invalid object key: ${JSON.stringify(key.slice(0, 80))}`);
  }
}

async function readAll(stream: Readable): Promise<Buffer> {
  const chunks: Buffer[] = [];
  for await (const chunk of stream) chunks.push(Buffer.isBuffer(chunk) ? chunk : Buffer.from(chunk as Uint8Array));
  return Buffer.concat(chunks);
}

export class S3ObjectStore implements ObjectStore {
  readonly bucket: string;
  readonly client: S3Client;

  constructor(config: StorageConfig) {
    this.bucket = config.bucket;
    const clientConfig: S3ClientConfig = {
      region: config.region,
      forcePathStyle: config.forcePathStyle,
      // Both must be WHEN_REQUIRED: otherwise the SDK sends streamed bodies with aws-chunked framing
      // and trailing checksums, which S3-compatible fakes store verbatim inside the object.
      requestChecksumCalculation: 'WHEN_REQUIRED',
      responseChecksumValidation: 'WHEN_REQUIRED',
      maxAttempts: 3,
      requestHandler: { connectionTimeout: 3_000, requestTimeout: 60_000, throwOnRequestTimeout: true },
    };
    if (config.endpoint) clientConfig.endpoint = config.endpoint;
    if (config.accessKeyId && config.secretAccessKey) {
      clientConfig.credentials = { accessKeyId: config.accessKeyId, secretAccessKey: config.secretAccessKey };
    }
    this.client = new S3Client(clientConfig);
  }

  async put(key: string, body: Buffer | Readable, options: PutOptions): Promise<void> {
    assertValidKey(key);
    let payload: Buffer | Readable = body;
    let length = options.contentLength;
    if (Buffer.isBuffer(body)) {
      length = body.length;
    } else if (length === undefined) {
      payload = await readAll(body);
      length = payload.length;
    }
    try {
      await this.client.send(
        new PutObjectCommand({ Bucket: this.bucket, Key: key, Body: payload, ContentType: options.contentType, ContentLength: length }),
      );
    } catch (e) {
      throw toStorageError(e, 'put', key);
    }
  }

  async get(key: string): Promise<StoredObject> {
    assertValidKey(key);
    try {
      const out = await this.client.send(new GetObjectCommand({ Bucket: this.bucket, Key: key }));
      if (!(out.Body instanceof Readable)) throw new StorageError('The object store returned no body stream.');
      return {
        body: out.Body,
        contentType: out.ContentType ?? 'application/octet-stream',
        contentLength: out.ContentLength ?? 0,
      };
    } catch (e) {
      throw toStorageError(e, 'get', key);
    }
  }

  async getBuffer(key: string): Promise<Buffer> {
    const { body } = await this.get(key);
    try {
      return await readAll(body);
    } catch (e) {
      throw toStorageError(e, 'get', key);
    }
  }

  async head(key: string): Promise<{ size: number; contentType: string } | null> {
    assertValidKey(key);
    try {
      const out = await this.client.send(new HeadObjectCommand({ Bucket: this.bucket, Key: key }));
      return { size: out.ContentLength ?? 0, contentType: out.ContentType ?? 'application/octet-stream' };
    } catch (e) {
      const err = toStorageError(e, 'head', key);
      if (err instanceof ObjectNotFoundError) return null;
      throw err;
    }
  }

  async remove(key: string): Promise<void> {
    assertValidKey(key);
    try {
      await this.client.send(new DeleteObjectCommand({ Bucket: this.bucket, Key: key }));
    } catch (e) {
      const err = toStorageError(e, 'remove', key);
      if (err instanceof ObjectNotFoundError) return;
      throw err;
    }
  }

  async presignGet(key: string, seconds: number): Promise<string> {
    assertValidKey(key);
    if (!Number.isInteger(seconds) || seconds < 1 || seconds > 604_800) {
      throw new StorageError('A presigned URL lasts between 1 second and 7 days.');
    }
    return getSignedUrl(this.client, new GetObjectCommand({ Bucket: this.bucket, Key: key }), { expiresIn: seconds });
  }

  /** Creates the bucket when it does not exist yet. */
  async ensureBucket(): Promise<void> {
    try {
      await this.client.send(new HeadBucketCommand({ Bucket: this.bucket }));
      return;
    } catch (e) {
      const { status, name } = errorFacts(e);
      if (status !== 404 && name !== 'NotFound' && name !== 'NoSuchBucket') throw toStorageError(e, 'head bucket');
    }
    try {
      await this.client.send(new CreateBucketCommand({ Bucket: this.bucket }));
    } catch (e) {
      const { name } = errorFacts(e);
      if (name === 'BucketAlreadyOwnedByYou' || name === 'BucketAlreadyExists') return;
      throw toStorageError(e, 'create bucket');
    }
  }

  destroy(): void {
    this.client.destroy();
  }
}

export function createObjectStore(config: StorageConfig): S3ObjectStore {
  return new S3ObjectStore(config);
}

let singleton: S3ObjectStore | null = null;

/** The application's store, created on first use from process.env. */
export function objectStore(): S3ObjectStore {
  singleton ??= createObjectStore(storageConfigFromEnv());
  return singleton;
}

/** Creates the application's bucket when missing (start-up and demo loading). */
export async function ensureBucket(): Promise<void> {
  await objectStore().ensureBucket();
}

/** Forgets the singleton (tests that change the environment). */
export function resetObjectStoreForTests(): void {
  singleton?.destroy();
  singleton = null;
}
