/**
 * A replacement S3 fake for a test that had to stop the run's own (tests/support/films.ts): the same
 * port and directory, and it stops itself once the run's PostgreSQL no longer answers (scripts/test.sh
 * stops it at the end), so it never outlives `npm test`.
 * Environment: FAKE_S3_PORT, FAKE_S3_DIR, S3_BUCKET, S3_ACCESS_KEY_ID, S3_SECRET_ACCESS_KEY, DATABASE_URL.
 */
import { connect } from 'node:net';
import { startFakeS3 } from '../../storage/fake-s3-server';

function answers(host: string, port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const s = connect({ host, port });
    s.setTimeout(2_000, () => {
      s.destroy();
      resolve(false);
    });
    s.once('connect', () => {
      s.destroy();
      resolve(true);
    });
    s.once('error', () => resolve(false));
  });
}

async function main(): Promise<void> {
  const fake = await startFakeS3({
    port: Number(process.env.FAKE_S3_PORT),
    directory: process.env.FAKE_S3_DIR ?? '',
    bucket: process.env.S3_BUCKET || 'rimwatch-films',
    accessKeyId: process.env.S3_ACCESS_KEY_ID,
    secretAccessKey: process.env.S3_SECRET_ACCESS_KEY,
  });
  console.log(`fake S3 listening again on ${fake.endpoint}`);
  const db = new URL(process.env.DATABASE_URL ?? 'postgres://127.0.0.1:1/none');
  let misses = 0;
  const timer = setInterval(() => {
    void answers(db.hostname, Number(db.port || 5432)).then(async (ok) => {
      misses = ok ? 0 : misses + 1;
      if (misses < 3) return;
      clearInterval(timer);
      console.log('the test database is gone: stopping');
      await fake.stop().catch(() => undefined);
      process.exit(0);
    });
  }, 2_000);
  const stop = () => {
    clearInterval(timer);
    void fake.stop().finally(() => process.exit(0));
  };
  process.on('SIGTERM', stop);
  process.on('SIGINT', stop);
}

main().catch((e: unknown) => {
  console.error('fake S3 watchdog failed:', e instanceof Error ? e.message : e);
  process.exit(1);
});
