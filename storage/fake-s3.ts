/**
 * Runs the S3-compatible fake: `node --import tsx storage/fake-s3.ts` (or `npx tsx storage/fake-s3.ts`).
 * Environment: FAKE_S3_PORT (0 = any free port), FAKE_S3_DIR (where objects live), S3_BUCKET (created
 * at start), S3_ACCESS_KEY_ID / S3_SECRET_ACCESS_KEY (accepted besides S3RVER / S3RVER).
 * Prints one line when ready: "fake S3 listening on http://127.0.0.1:PORT". Stops on SIGTERM / SIGINT.
 */
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startFakeS3 } from './fake-s3-server';

async function main(): Promise<void> {
  const port = Number(process.env.FAKE_S3_PORT ?? '4568');
  if (!Number.isInteger(port) || port < 0 || port > 65535) throw new Error(`FAKE_S3_PORT is not a port: ${process.env.FAKE_S3_PORT}`);
  const fake = await startFakeS3({
    port,
    directory: process.env.FAKE_S3_DIR || join(tmpdir(), 'rimwatch-fake-s3'),
    bucket: process.env.S3_BUCKET || 'rimwatch-films',
    accessKeyId: process.env.S3_ACCESS_KEY_ID,
    secretAccessKey: process.env.S3_SECRET_ACCESS_KEY,
  });
  console.log(`fake S3 listening on ${fake.endpoint}`);
  let stopping = false;
  const stop = (signal: string) => {
    if (stopping) return;
    stopping = true;
    fake.stop().then(
      () => {
        console.log(`fake S3 stopped (${signal})`);
        process.exit(0);
      },
      (e: unknown) => {
        console.error('fake S3 did not stop cleanly:', e);
        process.exit(1);
      },
    );
  };
  process.on('SIGTERM', () => stop('SIGTERM'));
  process.on('SIGINT', () => stop('SIGINT'));
}

main().catch((e: unknown) => {
  console.error('fake S3 failed to start:', e instanceof Error ? e.message : e);
  process.exit(1);
});
