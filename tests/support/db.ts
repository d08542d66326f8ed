// Direct database access for integration tests (the same PostgreSQL the app under test uses).
import knexFactory, { type Knex } from "knex";

let instance: Knex | null = null;

export function testDb(): Knex {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error("DATABASE_URL is not set: run integration tests through `npm test`");
  instance ??= knexFactory({ client: "pg", connection: url, pool: { min: 0, max: 4 } });
  return instance;
}

export async function closeTestDb(): Promise<void> {
  await instance?.destroy();
  instance = null;
}
