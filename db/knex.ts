// The one Knex instance of the server process.
import "server-only";
import knexFactory, { type Knex } from "knex";
import pg from "pg";

// DATE columns come back as "YYYY-MM-DD" strings (no time-zone shifts); BIGINT as numbers (counts, sizes).
pg.types.setTypeParser(1082, (v: string) => v);
pg.types.setTypeParser(20, (v: string) => Number(v));
pg.types.setTypeParser(1700, (v: string) => Number(v));

const globalForKnex = globalThis as unknown as { rimwatchKnex?: Knex };

export function createKnex(connection = process.env.DATABASE_URL): Knex {
  if (!connection) throw new Error("DATABASE_URL is not set");
  return knexFactory({
    client: "pg",
    connection,
    pool: { min: 0, max: Number(process.env.DB_POOL_MAX ?? 10), acquireTimeoutMillis: 5_000 },
    acquireConnectionTimeout: 5_000,
  });
}

export function db(): Knex {
  globalForKnex.rimwatchKnex ??= createKnex();
  return globalForKnex.rimwatchKnex;
}

export type Trx = Knex | Knex.Transaction;
