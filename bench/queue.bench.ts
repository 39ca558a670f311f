/**
 * Queue benchmark: lease + verdict round trips per second and the latency of
 * `POST /api/desks/:deskId/leases`, with concurrent reviewers over loopback,
 * on SQLite and on PostgreSQL.
 *
 * For each database: a fresh data folder (and a fresh PostgreSQL database),
 * the API as its own process, an admin from the CLI, a supervisor and the
 * reviewers through the API, one desk, a pool imported through the API and a
 * worker process (stopped once the import is done so it does not compete for
 * CPU), then the reviewers' loops: a warm-up that is not measured, then the
 * measured window. Everything started is stopped and removed afterwards, also
 * on failure.
 *
 * Prints one JSON document on stdout; progress goes to stderr.
 *
 * Environment (all optional):
 *   BENCH_QUEUE_DATABASES   comma-separated, default "sqlite,postgres"
 *   BENCH_QUEUE_ITEMS       pool size, default 100000
 *   BENCH_QUEUE_REVIEWERS   concurrent reviewers, default 32
 *   BENCH_QUEUE_WARMUP_S    default 3
 *   BENCH_QUEUE_DURATION_S  measured window, default 20
 *   BENCH_QUEUE_CPU_PROF    a folder: the API process writes a V8 CPU profile there (--cpu-prof)
 *   BENCH_QUEUE_ANALYZE     "1": run ANALYZE on the PostgreSQL database after the import, before the
 *                           load (planner statistics as autovacuum would eventually gather them); by
 *                           default the load runs on the database exactly as the import left it
 *   BENCH_PG_ADMIN_URL      default postgres://postgres@127.0.0.1:5432/test (used to create and drop the database)
 *   REDIS_URL               default redis://127.0.0.1:6379
 */
import { randomBytes } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { cpus, tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { Redis } from 'ioredis';
import pg from 'pg';
import { api, importPool, ndjsonPool } from './queue/fixture.js';
import { runLoad } from './queue/load.js';
import { freePort, runCli, startService, stopService, waitReady, type Service } from './queue/processes.js';
import { envInt } from './bench-helpers.js';
import { round2 } from './queue/stats.js';

type DatabaseKind = 'sqlite' | 'postgres';

const env = process.env;
const int = (name: string, def: number, min: number, max: number) => envInt(name, def, min, max, env);

const SETTINGS = {
  databases: (env.BENCH_QUEUE_DATABASES ?? 'sqlite,postgres')
    .split(',')
    .map((s) => s.trim())
    .filter(Boolean),
  items: int('BENCH_QUEUE_ITEMS', 100_000, 100, 10_000_000),
  reviewers: int('BENCH_QUEUE_REVIEWERS', 32, 1, 1000),
  warmupS: int('BENCH_QUEUE_WARMUP_S', 3, 0, 600),
  durationS: int('BENCH_QUEUE_DURATION_S', 20, 1, 3600),
  analyze: env.BENCH_QUEUE_ANALYZE === '1',
  cpuProfDir: env.BENCH_QUEUE_CPU_PROF ? resolve(env.BENCH_QUEUE_CPU_PROF) : null,
  pgAdminUrl: env.BENCH_PG_ADMIN_URL ?? 'postgres://postgres@127.0.0.1:5432/test',
  redisUrl: env.REDIS_URL ?? 'redis://127.0.0.1:6379',
};
const isDatabaseKind = (d: string): d is DatabaseKind => d === 'sqlite' || d === 'postgres';
for (const d of SETTINGS.databases) {
  if (!isDatabaseKind(d))
    throw new RangeError(`BENCH_QUEUE_DATABASES: unknown database ${JSON.stringify(d)} (expected sqlite, postgres)`);
}

/** What the PostgreSQL run is expected to reach on the reference two-core machine. */
const TARGET = { leaseP99Ms: 25, roundTripsPerSec: 500 };
const CATEGORIES = ['threat', 'harassment', 'ok'] as const;
const IMPORT_TIMEOUT_MS = 20 * 60_000;

const ROOT = resolve(fileURLToPath(new URL('.', import.meta.url)), '..', '..');
const SCRIPTS = {
  api: join(ROOT, 'dist/apps/api/src/main.js'),
  worker: join(ROOT, 'dist/apps/worker/src/main.js'),
  cli: join(ROOT, 'dist/apps/cli/src/main.js'),
};

const log = (msg: string) => process.stderr.write(`[bench:queue] ${msg}\n`);

/** Clean-up steps, run last-in first-out, once, whether the run succeeds, fails or is interrupted. */
class Cleanup {
  private steps: Array<{ what: string; run: () => Promise<void> | void }> = [];

  add(what: string, run: () => Promise<void> | void): void {
    this.steps.push({ what, run });
  }

  async runAll(): Promise<void> {
    const steps = this.steps.reverse();
    this.steps = [];
    for (const s of steps) {
      try {
        await s.run();
      } catch (e) {
        log(`clean-up "${s.what}" failed: ${String(e)}`);
      }
    }
  }
}

const cleanup = new Cleanup();
for (const signal of ['SIGINT', 'SIGTERM'] as const) {
  process.once(signal, () => {
    log(`${signal}: stopping services and removing temporary data`);
    void cleanup.runAll().finally(() => process.exit(130));
  });
}

async function createPgDatabase(): Promise<{ url: string; drop: () => Promise<void> }> {
  const name = `cribra_bench_${randomBytes(6).toString('hex')}`;
  const admin = new pg.Client({ connectionString: SETTINGS.pgAdminUrl });
  await admin.connect();
  try {
    await admin.query(`CREATE DATABASE ${name}`);
  } finally {
    await admin.end();
  }
  const url = new URL(SETTINGS.pgAdminUrl);
  url.pathname = `/${name}`;
  return {
    url: url.toString(),
    drop: async () => {
      const c = new pg.Client({ connectionString: SETTINGS.pgAdminUrl });
      await c.connect();
      try {
        await c.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
      } finally {
        await c.end();
      }
    },
  };
}

/** Removes every Redis key under the run's queue prefix. */
async function dropQueueKeys(prefix: string): Promise<void> {
  const redis = new Redis(SETTINGS.redisUrl, { maxRetriesPerRequest: 2, lazyConnect: true });
  await redis.connect();
  try {
    let cursor = '0';
    do {
      const [next, keys] = await redis.scan(cursor, 'MATCH', `${prefix}:*`, 'COUNT', 500);
      cursor = next;
      if (keys.length > 0) await redis.del(...keys);
    } while (cursor !== '0');
  } finally {
    redis.disconnect();
  }
}

async function benchDatabase(kind: DatabaseKind, pool: Buffer) {
  const dataDir = mkdtempSync(join(tmpdir(), `cribra-bench-${kind}-`));
  cleanup.add(`remove ${dataDir}`, () => rmSync(dataDir, { recursive: true, force: true }));
  let databaseUrl = `sqlite:${join(dataDir, 'cribra.sqlite')}`;
  if (kind === 'postgres') {
    const db = await createPgDatabase();
    cleanup.add('drop the PostgreSQL database', db.drop);
    databaseUrl = db.url;
  }
  const queuePrefix = `cribra-bench-${randomBytes(6).toString('hex')}`;
  cleanup.add(`remove Redis keys ${queuePrefix}:*`, () => dropQueueKeys(queuePrefix));
  const port = await freePort();
  const baseUrl = `http://127.0.0.1:${port}`;
  const serviceEnv: Record<string, string> = {
    PATH: env.PATH ?? '/usr/bin:/bin',
    TZ: 'UTC',
    PORT: String(port),
    HOST: '127.0.0.1',
    DATA_DIR: dataDir,
    DATABASE_URL: databaseUrl,
    REDIS_URL: SETTINGS.redisUrl,
    QUEUE_PREFIX: queuePrefix,
    LOG_LEVEL: 'warn',
  };
  const started: Service[] = [];
  const start = (name: string, script: string, nodeArgs: string[] = []) => {
    const s = startService(name, script, serviceEnv, nodeArgs);
    started.push(s);
    cleanup.add(`stop ${name}`, () => stopService(s));
    return s;
  };

  log(`${kind}: starting the API on ${baseUrl}`);
  const profArgs = SETTINGS.cpuProfDir
    ? ['--cpu-prof', `--cpu-prof-dir=${SETTINGS.cpuProfDir}`, `--cpu-prof-name=api-${kind}-${Date.now()}.cpuprofile`]
    : [];
  const apiProcess = start(`api-${kind}`, SCRIPTS.api, profArgs);
  await waitReady(apiProcess, baseUrl);

  log(`${kind}: creating users and the desk`);
  const admin = JSON.parse(
    (await runCli(SCRIPTS.cli, ['user', 'add', '--name', 'bench-admin', '--role', 'admin'], serviceEnv))
      .trim()
      .split('\n')
      .pop()!,
  ) as { token: string };
  const supervisor = await api<{ token: string }>(baseUrl, admin.token, 'POST', '/api/users', {
    name: 'bench-supervisor',
    role: 'supervisor',
  });
  const reviewerTokens: string[] = [];
  const reviewerIds: number[] = [];
  for (let i = 1; i <= SETTINGS.reviewers; i++) {
    const made = await api<{ id: number; token: string }>(baseUrl, admin.token, 'POST', '/api/users', {
      name: `bench-reviewer-${i}`,
      role: 'reviewer',
    });
    reviewerTokens.push(made.token);
    reviewerIds.push(made.id);
  }
  const desk = await api<{ id: number }>(baseUrl, supervisor.token, 'POST', '/api/desks', {
    name: 'bench',
    categories: [...CATEGORIES],
    randomShare: 0.2,
    leaseSeconds: 600,
  });
  for (const id of reviewerIds)
    await api(baseUrl, supervisor.token, 'PUT', `/api/desks/${desk.id}/members/${id}`, { role: 'reviewer' });

  log(`${kind}: importing ${SETTINGS.items} items through the API (worker running)`);
  const worker = start(`worker-${kind}`, SCRIPTS.worker);
  const imported = await importPool(baseUrl, supervisor.token, desk.id, pool, IMPORT_TIMEOUT_MS, (v) =>
    log(`${kind}: import ${v.state}, ${v.rowsRead} rows read, ${v.imported} imported`),
  );
  if (imported.imported !== SETTINGS.items) {
    throw new Error(
      `${kind}: expected ${SETTINGS.items} items imported, got ${imported.imported} (duplicates ${imported.duplicates}, rejected ${imported.rejected})`,
    );
  }
  log(`${kind}: imported ${imported.imported} items in ${imported.seconds.toFixed(1)} s; stopping the worker`);
  await stopService(worker);
  const analyzed = kind === 'postgres' && SETTINGS.analyze;
  if (analyzed) {
    log(`${kind}: ANALYZE`);
    const c = new pg.Client({ connectionString: databaseUrl });
    await c.connect();
    try {
      await c.query('ANALYZE');
    } finally {
      await c.end();
    }
  }

  log(`${kind}: ${SETTINGS.reviewers} reviewers, ${SETTINGS.warmupS} s warm-up, ${SETTINGS.durationS} s measured`);
  const load = await runLoad({
    baseUrl,
    deskId: desk.id,
    categories: CATEGORIES,
    reviewerTokens,
    warmupS: SETTINGS.warmupS,
    durationS: SETTINGS.durationS,
    apiPid: apiProcess.child.pid,
  });
  const lease = load.lease.summary();
  const verdict = load.verdict.summary();
  log(
    `${kind}: ${load.roundTrips} round trips (${(load.roundTrips / load.durationS).toFixed(0)}/s), lease p99 ${lease.p99} ms, ${load.errors} errors`,
  );

  // Stop the API before reading the profile so V8 writes it (it does so on a clean exit).
  await stopService(apiProcess);
  for (const s of started) await stopService(s);

  return {
    items: imported.imported,
    reviewers: SETTINGS.reviewers,
    durationS: load.durationS,
    warmupS: SETTINGS.warmupS,
    roundTrips: load.roundTrips,
    roundTripsPerSec: round2(load.roundTrips / load.durationS),
    leaseLatencyMs: lease,
    verdictLatencyMs: { p50: verdict.p50, p95: verdict.p95, p99: verdict.p99, max: verdict.max, mean: verdict.mean },
    leaseRequests: load.lease.count,
    errors: load.errors,
    warmupErrors: load.warmupErrors,
    errorsByKind: load.errorsByKind,
    emptyPool: load.emptyPool,
    cpuDuringMeasurement: load.cpu,
    analyzedBeforeLoad: analyzed,
    importSeconds: round2(imported.seconds),
    importRowsPerSec: round2(imported.imported / imported.seconds),
  };
}

async function main(): Promise<void> {
  const t0 = performance.now();
  log(`generating ${SETTINGS.items} distinct texts`);
  const pool = ndjsonPool(SETTINGS.items);
  const out: Record<string, unknown> = {};
  try {
    // Every name was checked above: the filter only gives them their type.
    for (const kind of SETTINGS.databases.filter(isDatabaseKind)) {
      try {
        out[kind] = await benchDatabase(kind, pool);
      } finally {
        await cleanup.runAll();
      }
    }
  } finally {
    await cleanup.runAll();
  }
  const postgres = out.postgres as { leaseLatencyMs: { p99: number | null }; roundTripsPerSec: number } | undefined;
  out.target = {
    database: 'postgres',
    leaseP99Ms: TARGET.leaseP99Ms,
    roundTripsPerSec: TARGET.roundTripsPerSec,
    met: postgres
      ? postgres.leaseLatencyMs.p99 !== null &&
        postgres.leaseLatencyMs.p99 <= TARGET.leaseP99Ms &&
        postgres.roundTripsPerSec >= TARGET.roundTripsPerSec
      : null,
  };
  const cpuList = cpus();
  out.machine = {
    cpus: cpuList.length,
    cpuModel: cpuList[0]?.model ?? null,
    node: process.version,
    platform: `${process.platform}-${process.arch}`,
  };
  out.benchSeconds = round2((performance.now() - t0) / 1000);
  process.stdout.write(`${JSON.stringify(out, null, 2)}\n`);
}

try {
  await main();
} catch (e) {
  log(`failed: ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`);
  process.exitCode = 1;
}
