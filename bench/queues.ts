/**
 * Benchmark: the two work queues on a large database, through the app's own query functions, against
 * a floor measured in the same run.
 *
 * - Follow-up diary: `getWorklist` (db/bookings.ts), as GET /api/bookings calls it.
 * - Deviation board: `listFlags` (db/flags.ts) then `sparklinesFor` (lib/followup/trend.ts) for the
 *   page's episodes, as GET /api/flags calls them (live flags, newest first, 25 a page).
 * - Floor: exactly the SQL statements each call sent (captured from knex's query events), run again
 *   one after another with a bare `pg` client on one connection. The difference is what the app adds:
 *   query building, pooling, and turning rows into the worklist and sparklines.
 *
 * Data: a throw-away database (created and dropped here) with 20 teams, 100,000 patients and episodes
 * (30 % active), 1,000,000 films and 1,000,000 measurements (10 per episode), 10,000 flags (a third
 * of them live), 50,000 bookings, made with
 * generate_series in SQL. Invented throughout: no real patient, team or hospital.
 * Target (the hardening issue): p95 <= 1.5 x the floor's p95, and p95 < 50 ms.
 *
 * Run: node --conditions=react-server --import tsx bench/queues.ts
 *   needs DATABASE_URL of a PostgreSQL where it may create a database (bench/run.sh starts one).
 *   BENCH_RUNS (default 60), BENCH_EPISODES (default 100000), BENCH_KEEP_DB=1 keeps the database,
 *   BENCH_EXPLAIN=1 prints the plans of the slowest statements, BENCH_REUSE_DB=1 measures again on a database
 *   an earlier run kept (BENCH_KEEP_DB=1) instead of loading a new one.
 * Prints its figures; writes bench/results/queues.json.
 */
import { mkdirSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import knexFactory, { type Knex } from "knex";
import pg from "pg";

const RUNS = Number(process.env.BENCH_RUNS ?? 60);
const EPISODES = Number(process.env.BENCH_EPISODES ?? 100_000);
const FILMS_PER_EPISODE = 10;
const TEAMS = 20;
const WARMUP = TEAMS; // one call per team first, so no run pays for a team's first (cold) read
const DB_NAME = "rimwatch_bench_queues";
const TARGET_RATIO = 1.5;
const TARGET_P95_MS = 50;

interface Statement {
  sql: string;
  bindings: readonly unknown[];
}

const p = (xs: number[], q: number) => {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.max(0, Math.ceil(q * s.length) - 1))] ?? NaN;
};

function withDatabase(url: string, name: string): string {
  const u = new URL(url);
  u.pathname = `/${name}`;
  return u.toString();
}

async function createDatabase(baseUrl: string): Promise<string> {
  const admin = new pg.Client({ connectionString: baseUrl });
  await admin.connect();
  await admin.query(`drop database if exists ${DB_NAME}`);
  await admin.query(`create database ${DB_NAME}`);
  await admin.end();
  return withDatabase(baseUrl, DB_NAME);
}

async function hasLoadedDatabase(baseUrl: string): Promise<boolean> {
  const client = new pg.Client({ connectionString: withDatabase(baseUrl, DB_NAME) });
  try {
    await client.connect();
    const { rows } = await client.query<{ n: number }>("select count(*)::int as n from episodes");
    return (rows[0]?.n ?? 0) > 0;
  } catch {
    return false;
  } finally {
    await client.end().catch(() => undefined);
  }
}

async function dropDatabase(baseUrl: string): Promise<void> {
  const admin = new pg.Client({ connectionString: baseUrl });
  await admin.connect();
  await admin.query(`drop database if exists ${DB_NAME} with (force)`);
  await admin.end();
}

/** Invented data at scale, made inside PostgreSQL. Ids are md5-derived, so rows can refer to each other by number. */
async function load(k: Knex): Promise<void> {
  const films = EPISODES * FILMS_PER_EPISODE;
  const step = async (label: string, sql: string) => {
    const t0 = performance.now();
    await k.raw(sql);
    console.log(`  ${label.padEnd(44)} ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  };
  console.log(`loading ${EPISODES.toLocaleString("en-GB")} episodes, ${films.toLocaleString("en-GB")} films and measurements:`);
  await step("teams and users", `
    insert into teams (id, name, hospital)
      select md5('t' || n)::uuid, 'Bench team ' || n, 'Larkmoor General Hospital' from generate_series(1, ${TEAMS}) n;
    insert into users (id, team_id, email, name, role, password_hash)
      select md5('u' || r || n)::uuid, md5('t' || n)::uuid, r || n || '@bench.example', 'Bench ' || r || ' ' || n, r, 'x'
      from generate_series(1, ${TEAMS}) n, unnest(array['registrar', 'consultant', 'nurse', 'admin']) r;`);
  await step("patients", `
    insert into patients (id, team_id, hospital_number, family_name, given_name, date_of_birth, sex, email, email_consent)
      select md5('p' || i)::uuid, md5('t' || (i % ${TEAMS} + 1))::uuid, 'BQ' || i, 'Benchname' || i, 'Given' || (i % 997),
             date '1950-01-01' + (i % 20000), 'unknown', case when i % 3 = 0 then 'p' || i || '@bench.example' end, i % 3 = 0
      from generate_series(1, ${EPISODES}) i;`);
  // 30 % active, the rest resolved or closed; presented over the last 400 days.
  await step("episodes", `
    insert into episodes (id, patient_id, team_id, side, presented_on, aetiology, management, status, primary_method, consultant_id, registrar_id, created_at)
      select md5('e' || i)::uuid, md5('p' || i)::uuid, md5('t' || (i % ${TEAMS} + 1))::uuid,
             case when i % 2 = 0 then 'left' else 'right' end, current_date - (i % 400),
             'primary-spontaneous', case when (i / ${TEAMS}) % 7 = 0 then 'chest-drain' else 'observation' end,
             case when (i / ${TEAMS}) % 10 < 3 then 'active' when (i / ${TEAMS}) % 10 < 8 then 'resolved' else 'closed' end,
             'collins', md5('uconsultant' || (i % ${TEAMS} + 1))::uuid, md5('uregistrar' || (i % ${TEAMS} + 1))::uuid,
             now() - make_interval(days => i % 400)
      from generate_series(1, ${EPISODES}) i;`);
  await step("films", `
    insert into films (id, episode_id, team_id, kind, original_key, display_key, thumb_key, content_type, filename, size_bytes, sha256,
                       taken_at, taken_at_source, projection, position, rows, columns, display_width, display_height, display_scale, uploaded_by, created_at)
      select md5('f' || j)::uuid, md5('e' || e)::uuid, md5('t' || (e % ${TEAMS} + 1))::uuid, 'image',
             'films/' || j || '/original', 'films/' || j || '/display', 'films/' || j || '/thumb', 'image/png', 'film.png', 1000, md5('f' || j),
             (current_date - (e % 400))::timestamptz + make_interval(days => 2 * k, hours => 9), 'upload', 'PA', 'erect',
             3000, 2500, 2500, 3000, 1, md5('uregistrar' || (e % ${TEAMS} + 1))::uuid,
             (current_date - (e % 400))::timestamptz + make_interval(days => 2 * k, hours => 10)
      from (select j, (j - 1) / ${FILMS_PER_EPISODE} + 1 as e, (j - 1) % ${FILMS_PER_EPISODE} as k from generate_series(1, ${films}) j) s;`);
  // Sizes shrinking from about 40 % by 3.5 points a film, with a little scatter.
  await step("measurements", `
    insert into measurements (id, film_id, episode_id, team_id, chain_id, version, reader_id, calipers, plane, calibration_source, results,
                              light_percent, rhea_percent, collins_percent, hilum_cm, apex_cm, aid_cm, created_by, created_at)
      select md5('m' || j)::uuid, md5('f' || j)::uuid, md5('e' || e)::uuid, md5('t' || (e % ${TEAMS} + 1))::uuid, md5('c' || j)::uuid, 1,
             md5('uregistrar' || (e % ${TEAMS} + 1))::uuid, '{}', 'film', 'dicom', '{}',
             greatest(0, 40 - 3.5 * k + (j % 5)), greatest(0, 35 - 3 * k + (j % 4)), greatest(0, 38 - 3.4 * k + (j % 6)),
             greatest(0, 3 - 0.3 * k), greatest(0, 4 - 0.35 * k), greatest(0, 2.5 - 0.25 * k),
             md5('uregistrar' || (e % ${TEAMS} + 1))::uuid,
             (current_date - (e % 400))::timestamptz + make_interval(days => 2 * k, hours => 11)
      from (select j, (j - 1) / ${FILMS_PER_EPISODE} + 1 as e, (j - 1) % ${FILMS_PER_EPISODE} as k from generate_series(1, ${films}) j) s;`);
  await step("flags (one episode in ten)", `
    insert into flags (id, episode_id, team_id, rule, state, figures, reason, raised_at, updated_at)
      select md5('g' || i)::uuid, md5('e' || i)::uuid, md5('t' || (i % ${TEAMS} + 1))::uuid,
             (array['slower-than-expected', 'overdue', 'enlarging', 'large-by-guideline'])[i / ${TEAMS} / 10 % 4 + 1],
             case when (i / ${TEAMS}) % 30 = 0 then 'open' when (i / ${TEAMS}) % 30 = 10 then 'acknowledged' else 'resolved' end,
             '{}', 'Invented bench flag', now() - make_interval(days => i % 60), now()
      from generate_series(1, ${EPISODES}) i where (i / ${TEAMS}) % 10 = 0;`);
  await step("bookings (one episode in two) and messages", `
    insert into bookings (id, episode_id, team_id, kind, source, scheduled_at, due_on, location, state, created_by, created_at, updated_at)
      select md5('b' || i)::uuid, md5('e' || i)::uuid, md5('t' || (i % ${TEAMS} + 1))::uuid, 'repeat-film', 'manual',
             now() + make_interval(days => (i % 40) - 20), current_date + ((i % 40) - 20), 'X-ray department, Larkmoor General Hospital',
             case when (i % 40) >= 20 then 'booked' when i % 3 = 0 then 'attended' when i % 3 = 1 then 'missed' else 'booked' end,
             md5('unurse' || (i % ${TEAMS} + 1))::uuid, now() - make_interval(days => 30), now() - make_interval(days => 30)
      from generate_series(1, ${EPISODES}) i where (i / ${TEAMS}) % 2 = 0;
    insert into messages (id, team_id, episode_id, booking_id, recipient, template, subject, status, dedupe_key, created_at)
      select md5('s' || i)::uuid, md5('t' || (i % ${TEAMS} + 1))::uuid, md5('e' || i)::uuid, md5('b' || i)::uuid, 'p' || i || '@bench.example',
             'booking-confirmation', 'Your repeat chest X-ray', 'sent', 'bench-' || i, now() - make_interval(days => 30)
      from generate_series(1, ${EPISODES}) i where (i / ${TEAMS}) % 4 = 0;`);
  await step("drains, oxygen, procedures (a few)", `
    insert into drains (id, episode_id, team_id, inserted_at, inserted_by, size_fr, site, technique, drainage)
      select md5('d' || i)::uuid, md5('e' || i)::uuid, md5('t' || (i % ${TEAMS} + 1))::uuid, now() - make_interval(days => i % 400), 'Dr Bench', 12, '4th intercostal space', 'seldinger', 'underwater-seal'
      from generate_series(1, ${EPISODES}) i where (i / ${TEAMS}) % 7 = 3;
    insert into oxygen_periods (episode_id, started_at, ended_at) select md5('e' || i)::uuid, now() - make_interval(days => 3), now() - make_interval(days => 1) from generate_series(1, ${EPISODES}) i where (i / ${TEAMS}) % 5 = 1;
    insert into procedures (episode_id, kind, performed_at) select md5('e' || i)::uuid, 'needle-aspiration', now() - make_interval(days => 2) from generate_series(1, ${EPISODES}) i where (i / ${TEAMS}) % 11 = 2;`);
  await step("vacuum analyze", "vacuum analyze");
}

interface Measured {
  app: number[];
  floor: number[];
  statements: number;
  slowest: Map<string, number[]>;
  /** The last run's statements with their values, for BENCH_EXPLAIN=1. */
  last: { text: string; values: unknown[] }[];
}

async function main(): Promise<void> {
  const baseUrl = process.env.DATABASE_URL;
  if (!baseUrl) throw new Error("DATABASE_URL is not set (bench/run.sh starts a private PostgreSQL)");
  const reuse = process.env.BENCH_REUSE_DB === "1" && (await hasLoadedDatabase(baseUrl));
  const url = reuse ? withDatabase(baseUrl, DB_NAME) : await createDatabase(baseUrl);
  process.env.DATABASE_URL = url; // anything that reaches for db() gets the throw-away database
  const k = knexFactory({ client: "pg", connection: url, pool: { min: 0, max: 10 }, migrations: { directory: join(process.cwd(), "migrations"), loadExtensions: [".ts"] } });
  const floorClient = new pg.Client({ connectionString: url });
  try {
    await k.migrate.latest();
    if (reuse) console.log(`measuring again on the database ${DB_NAME} kept by an earlier run`);
    else await load(k);
    const [{ n: measurementCount } = { n: 0 }] = (await k.raw<{ rows: { n: number }[] }>("select count(*)::int as n from measurements")).rows;
    const [{ n: episodeCount } = { n: 0 }] = (await k.raw<{ rows: { n: number }[] }>("select count(*)::int as n from episodes")).rows;

    // The app's own functions (imported after DATABASE_URL points at the throw-away database).
    const { getWorklist } = await import("../db/bookings");
    const { listFlags } = await import("../db/flags");
    const { sparklinesFor } = await import("../lib/followup/trend");

    let captured: Statement[] = [];
    k.on("query", (q: { sql: string; bindings?: readonly unknown[] }) => {
      captured.push({ sql: q.sql, bindings: q.bindings ?? [] });
    });
    const toNative = (s: Statement) => {
      if (!s.sql.includes("?")) return { text: s.sql, values: [...s.bindings] };
      const native = k.raw(s.sql, s.bindings as Knex.RawBinding[]).toSQL().toNative();
      return { text: native.sql, values: [...native.bindings] };
    };
    await floorClient.connect();

    const teamIds = (await k("teams").orderBy("name").select<{ id: string }[]>("id")).map((t) => t.id);
    const now = new Date();
    const cases: Record<string, (teamId: string) => Promise<unknown>> = {
      "follow-up diary (getWorklist)": (teamId) => getWorklist(k, teamId, now),
      "deviation board (listFlags + sparklinesFor)": async (teamId) => {
        const page = await listFlags(k, teamId, { state: "live", now, sort: "raised", dir: "desc", page: 1, pageSize: 25 });
        return sparklinesFor(k, teamId, page.rows.map((r) => r.episode_id), now);
      },
    };

    const results: Record<string, Measured> = {};
    for (const [name, run] of Object.entries(cases)) {
      const m: Measured = { app: [], floor: [], statements: 0, slowest: new Map(), last: [] };
      for (let i = 0; i < WARMUP + RUNS; i += 1) {
        const teamId = teamIds[i % teamIds.length] ?? "";
        captured = [];
        const t0 = performance.now();
        await run(teamId);
        const app = performance.now() - t0;
        const statements = captured.map(toNative);
        captured = [];
        const f0 = performance.now();
        for (const s of statements) {
          const s0 = performance.now();
          await floorClient.query(s.text, s.values);
          if (i >= WARMUP) m.slowest.set(s.text, [...(m.slowest.get(s.text) ?? []), performance.now() - s0]);
        }
        const floor = performance.now() - f0;
        if (i >= WARMUP) {
          m.app.push(app);
          m.floor.push(floor);
          m.statements = statements.length;
          m.last = statements;
        }
      }
      results[name] = m;
    }

    const f = (ms: number) => `${ms.toFixed(1).padStart(6)} ms`;
    console.log(`\n${episodeCount.toLocaleString("en-GB")} episodes, ${measurementCount.toLocaleString("en-GB")} measurements; ${RUNS} runs after ${WARMUP} warm-up runs, a different team each run`);
    const summary: Record<string, unknown> = {};
    let allOk = true;
    for (const [name, m] of Object.entries(results)) {
      const appP95 = p(m.app, 0.95);
      const floorP95 = p(m.floor, 0.95);
      const ratio = appP95 / floorP95;
      const ok = ratio <= TARGET_RATIO && appP95 < TARGET_P95_MS;
      allOk &&= ok;
      console.log(`${name}: ${m.statements} SQL statements a call`);
      console.log(`  app   median ${f(p(m.app, 0.5))}  p95 ${f(appP95)}`);
      console.log(`  floor median ${f(p(m.floor, 0.5))}  p95 ${f(floorP95)}   (the same SQL with a bare pg client, one connection)`);
      console.log(`  ratio p95 app / floor: ${ratio.toFixed(2)}x (target <= ${TARGET_RATIO}x and p95 < ${TARGET_P95_MS} ms) ${ok ? "OK" : "OVER TARGET"}`);
      const slow = [...m.slowest].map(([sql, t]) => ({ sql, p95: p(t, 0.95) })).sort((a, b) => b.p95 - a.p95).slice(0, 3);
      for (const s of slow) console.log(`    slowest statement p95 ${f(s.p95)}: ${s.sql.replace(/\s+/g, " ").slice(0, 150)}`);
      if (process.env.BENCH_EXPLAIN) {
        // The query plans of the slowest statements (to see which index a query lacks).
        for (const sl of slow) {
          const st = m.last.find((x) => x.text === sl.sql);
          if (!st) continue;
          const plan = await floorClient.query(`explain (analyze, buffers) ${st.text}`, st.values);
          console.log(`    plan:\n${plan.rows.map((r: Record<string, string>) => `      ${Object.values(r)[0]}`).join("\n")}`);
        }
      }
      summary[name] = { appMedianMs: p(m.app, 0.5), appP95Ms: appP95, floorMedianMs: p(m.floor, 0.5), floorP95Ms: floorP95, ratio, statements: m.statements, ok };
    }
    console.log(`overall: ${allOk ? "OK" : "OVER TARGET"}`);
    const dir = join(process.cwd(), "bench", "results");
    mkdirSync(dir, { recursive: true });
    writeFileSync(
      join(dir, "queues.json"),
      `${JSON.stringify({ when: new Date().toISOString(), episodes: episodeCount, measurements: measurementCount, runs: RUNS, target: { ratio: TARGET_RATIO, p95Ms: TARGET_P95_MS }, results: summary }, null, 2)}\n`,
    );
  } finally {
    await floorClient.end().catch(() => undefined);
    await k.destroy();
    const { db } = await import("../db/knex").catch(() => ({ db: null }));
    if (db) await db().destroy().catch(() => undefined);
    if (!process.env.BENCH_KEEP_DB) await dropDatabase(baseUrl);
  }
}

main().catch((e: unknown) => {
  console.error(e);
  process.exit(1);
});
