/**
 * The local S3-compatible fake (s3rver on disk), startable in-process by tests and by
 * storage/fake-s3.ts. Loopback only. Objects are plain files under `directory`.
 */
import { mkdirSync } from 'node:fs';
import S3rver from 's3rver';
import AWSAccount from 's3rver/lib/models/account';

export interface FakeS3Options {
  /** 0 picks a free port. */
  port: number;
  directory: string;
  bucket: string;
  /** Credentials the fake accepts besides its built-in S3RVER / S3RVER pair. */
  accessKeyId?: string;
  secretAccessKey?: string;
}

export interface FakeS3 {
  endpoint: string;
  port: number;
  stop(): Promise<void>;
}

export async function startFakeS3(options: FakeS3Options): Promise<FakeS3> {
  mkdirSync(options.directory, { recursive: true });
  if (options.accessKeyId && options.secretAccessKey) {
    AWSAccount.DUMMY_ACCOUNT.createKeyPair(options.accessKeyId, options.secretAccessKey);
  }
  const server = new S3rver({
    address: '127.0.0.1',
    port: options.port,
    directory: options.directory,
    silent: true,
    configureBuckets: [{ name: options.bucket }],
  });
  const address = await server.run();
  let stopped = false;
  return {
    endpoint: `http://127.0.0.1:${address.port}`,
    port: address.port,
    stop: async () => {
      if (stopped) return;
      stopped = true;
      const closing = server.close();
      // Clients keep connections alive; close them so the server does not wait for their timeouts.
      server.httpServer?.closeAllConnections();
      await closing;
    },
  };
}
