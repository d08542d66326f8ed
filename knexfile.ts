// Knex configuration: one connection string, migrations in TypeScript under migrations/.
import type { Knex } from "knex";

const config: Knex.Config = {
  client: "pg",
  connection: process.env.DATABASE_URL ?? "postgres://postgres@127.0.0.1:54329/rimwatch",
  migrations: { directory: "./migrations", extension: "ts", loadExtensions: [".ts"] },
  pool: { min: 0, max: 10 },
};

export default config;
