/**
 * `npm run bench:loop`: how long the learning loop takes from the verdict
 * that triggers a retrain to the new model version being current, on a pool
 * of 50 000 items with 2 000 verdicts, split into its phases (train,
 * calibrate, score, publish); scored items per second; the worker's peak
 * RSS; and the same with two worker processes. Runs the real processes (API
 * and workers from dist/) on PostgreSQL and SQLite, with the Redis at
 * BENCH_REDIS_URL (default redis://127.0.0.1:6379), and prints one JSON object.
 *
 * Knobs: BENCH_LOOP_DATABASES (postgres,sqlite), BENCH_LOOP_ITEMS (50000), BENCH_LOOP_VERDICTS (2000),
 * BENCH_LOOP_WORKER_ARGS (extra node arguments for the workers, e.g. `--cpu-prof --cpu-prof-dir=/tmp/prof`).
 */
import { randomBytes } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { cpus, tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { setTimeout as sleep } from 'node:timers/promises';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { api, importPool, ndjsonPool } from './queue/fixture.js';
import { freePort, runCli, startService, stopService, waitReady, type Service } from './queue/processes.js';

const env = process.env;
const ITEMS = Number(env.BENCH_LOOP_ITEMS ?? 50_000);
const VERDICTS = Number(env.BENCH_LOOP_VERDICTS ?? 2000);
const DATABASES = (env.BENCH_LOOP_DATABASES ?? 'postgres,sqlite')
  .split(',')
  .map((s) => s.trim())
  .filter(Boolean);
const WORKER_ARGS = (env.BENCH_LOOP_WORKER_ARGS ?? '').split(' ').filter(Boolean);
const REDIS = env.BENCH_REDIS_URL ?? 'redis://127.0.0.1:6379';
const PG_ADMIN = env.BENCH_PG_ADMIN_URL ?? 'postgres://postgres@127.0.0.1:5432/test';
const root = resolve(fileURLToPath(new URL('../..', import.meta.url)));
const script = (app: string) => join(root, 'dist', 'apps', app, 'src', 'main.js');
const log = (s: string) => process.stderr.write(`${s}\n`);
const r1 = (x: number) => Math.round(x * 10) / 10;

/** Peak resident set of a process (VmHWM), in MB. */
function peakRssMb(pid: number | undefined): number | null {
  if (!pid) return null;
  try {
    const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return m ? Math.round(Number(m[1]) / 1024) : null;
  } catch {
    return null;
  }
}

/** A label the texts themselves suggest, so the model has something to learn (timing does not depend on it). */
function labelOf(text: string): string {
  if (/\b(angry|terrible|awful|hated)\b/.test(text)) return 'harassment';
  if (/\b(broken|late|dirty)\b/.test(text)) return 'threat';
  return 'ok';
}

interface VersionView {
  version: number;
  state: string;
  /** Phase durations in ms; a phase a version did not go through is absent. */
  timings: Partial<Record<string, number>>;
}

async function oneDatabase(kind: string) {
  const dataDir = mkdtempSync(join(tmpdir(), 'cribra-bench-loop-'));
  let dbName: string | null = null;
  let databaseUrl = `sqlite:${join(dataDir, 'cribra.sqlite')}`;
  if (kind === 'postgres') {
    dbName = `cribra_bench_loop_${randomBytes(4).toString('hex')}`;
    const c = new pg.Client({ connectionString: PG_ADMIN });
    await c.connect();
    await c.query(`CREATE DATABASE ${dbName}`);
    await c.end();
    const u = new URL(PG_ADMIN);
    u.pathname = `/${dbName}`;
    databaseUrl = u.toString();
  }
  const port = await freePort();
  const base = `http://127.0.0.1:${port}`;
  const serviceEnv = {
    PATH: env.PATH ?? '',
    TZ: 'UTC',
    PORT: String(port),
    HOST: '127.0.0.1',
    DATA_DIR: dataDir,
    DATABASE_URL: databaseUrl,
    REDIS_URL: REDIS,
    QUEUE_PREFIX: `cribra-bench-${randomBytes(4).toString('hex')}`,
    LOG_LEVEL: 'warn',
  };
  const services: Service[] = [];
  try {
    const admin = JSON.parse(
      (await runCli(script('cli'), ['user', 'add', '--name', 'bench-admin', '--role', 'admin'], serviceEnv)).trim(),
    ) as { token: string };
    const apiSvc = startService(`api-${kind}`, script('api'), serviceEnv);
    services.push(apiSvc);
    await waitReady(apiSvc, base);
    const worker1 = startService(`worker-${kind}-1`, script('worker'), serviceEnv, WORKER_ARGS);
    services.push(worker1);
    const sup = (
      await api<{ token: string }>(base, admin.token, 'POST', '/api/users', { name: 'bench-sup', role: 'supervisor' })
    ).token;
    const reviewers: string[] = [];
    const reviewerIds: number[] = [];
    for (let i = 0; i < 8; i++) {
      const made = await api<{ id: number; token: string }>(base, admin.token, 'POST', '/api/users', {
        name: `bench-rev-${i}`,
        role: 'reviewer',
      });
      reviewers.push(made.token);
      reviewerIds.push(made.id);
    }
    // No retrain from the count or time rules while the verdicts go in (the first model still comes as soon as it can).
    const desk = await api<{ id: number }>(base, sup, 'POST', '/api/desks', {
      name: 'bench-loop',
      categories: ['threat', 'harassment', 'ok'],
      randomShare: 0.2,
      retrainEvery: 100_000,
      retrainAfterSeconds: 86_400,
    });
    for (const id of reviewerIds)
      await api(base, sup, 'PUT', `/api/desks/${desk.id}/members/${id}`, { role: 'reviewer' });
    log(`${kind}: importing ${ITEMS} items`);
    const imported = await importPool(base, sup, desk.id, ndjsonPool(ITEMS, 7), 600_000, (v) =>
      log(`${kind}: import ${v.rowsRead} rows`),
    );
    log(`${kind}: ${VERDICTS} verdicts`);
    let given = 0;
    await Promise.all(
      reviewers.map(async (token, r) => {
        for (let n = 0; given < VERDICTS; n++) {
          const l = await api<{ lease: { id: string }; item: { id: number; text: string } } | undefined>(
            base,
            token,
            'POST',
            `/api/desks/${desk.id}/leases`,
            undefined,
            [201, 204],
          );
          if (!l) return;
          given++;
          await api(base, token, 'POST', `/api/desks/${desk.id}/verdicts`, {
            leaseId: l.lease.id,
            itemId: l.item.id,
            category: labelOf(l.item.text),
            clientId: `b${r}-${n}`,
          });
        }
      }),
    );
    const settle = async () => {
      for (;;) {
        const list = await api<{ models: VersionView[] }>(base, sup, 'GET', `/api/desks/${desk.id}/models`);
        if (list.models.length > 0 && list.models.every((m) => m.state !== 'training' && m.state !== 'scoring')) return;
        await sleep(200);
      }
    };
    await settle();

    /** One retrain from its triggering verdict to the version being current. */
    const measure = async (pids: Array<number | undefined>) => {
      await api(base, sup, 'PATCH', `/api/desks/${desk.id}`, { retrainEvery: 1 });
      const before = (await api<{ currentModelVersion: number }>(base, sup, 'GET', `/api/desks/${desk.id}/models`))
        .currentModelVersion;
      const l = await api<{ lease: { id: string }; item: { id: number; text: string } }>(
        base,
        reviewers[0],
        'POST',
        `/api/desks/${desk.id}/leases`,
        undefined,
        [201],
      );
      await api(base, reviewers[0], 'POST', `/api/desks/${desk.id}/verdicts`, {
        leaseId: l.lease.id,
        itemId: l.item.id,
        category: labelOf(l.item.text),
        clientId: `trigger-${Date.now()}`,
      });
      const t0 = performance.now();
      let current = before;
      while (current === before) {
        await sleep(20);
        current = (await api<{ currentModelVersion: number }>(base, sup, 'GET', `/api/desks/${desk.id}/models`))
          .currentModelVersion;
        if (performance.now() - t0 > 300_000) throw new Error('no new version within 300 s');
      }
      const verdictToCurrentMs = performance.now() - t0;
      await api(base, sup, 'PATCH', `/api/desks/${desk.id}`, { retrainEvery: 100_000 });
      await settle();
      const v = await api<
        VersionView & { trainingCounts: Record<string, number>; calibrationCounts: Record<string, number> }
      >(base, sup, 'GET', `/api/desks/${desk.id}/models/${current}`);
      const t = v.timings;
      const n = ITEMS - given;
      return {
        verdictToCurrentMs: Math.round(verdictToCurrentMs),
        phasesMs: {
          train: Math.round((t.loadMs ?? 0) + (t.featurizeMs ?? 0) + (t.trainMs ?? 0)),
          calibrate: Math.round(t.calibrateMs ?? 0),
          score: Math.round(t.scoreMs ?? 0),
          publish: Math.round(t.publishMs ?? 0),
        },
        // The train phase split: reading the verdicts, tf-idf of their items, fitting the classifier (worker thread).
        trainPartsMs: {
          load: Math.round(t.loadMs ?? 0),
          featurize: Math.round(t.featurizeMs ?? 0),
          fit: Math.round(t.trainMs ?? 0),
        },
        // What the phases leave out: the retrain request reaching a worker, job hand-offs, the switch's commit.
        otherMs: Math.round(
          verdictToCurrentMs -
            ((t.loadMs ?? 0) +
              (t.featurizeMs ?? 0) +
              (t.trainMs ?? 0) +
              (t.calibrateMs ?? 0) +
              (t.scoreMs ?? 0) +
              (t.publishMs ?? 0)),
        ),
        scoredItemsPerSec: t.scoreMs ? Math.round(n / (t.scoreMs / 1000)) : null,
        workerPeakRssMb: Math.max(...pids.map((p) => peakRssMb(p) ?? 0)),
        trainingVerdicts: Object.values(v.trainingCounts).reduce((a, b) => a + b, 0),
        calibrationVerdicts: Object.values(v.calibrationCounts).reduce((a, b) => a + b, 0),
      };
    };
    log(`${kind}: one worker`);
    const one = await measure([worker1.child.pid]);
    const worker2 = startService(`worker-${kind}-2`, script('worker'), serviceEnv, WORKER_ARGS);
    services.push(worker2);
    await sleep(3000);
    log(`${kind}: two workers`);
    const two = await measure([worker1.child.pid, worker2.child.pid]);
    return { items: ITEMS, verdicts: VERDICTS, importSeconds: r1(imported.seconds), ...one, twoWorkers: two };
  } finally {
    for (const s of services.reverse()) await stopService(s);
    rmSync(dataDir, { recursive: true, force: true });
    if (dbName) {
      const c = new pg.Client({ connectionString: PG_ADMIN });
      await c.connect();
      await c.query(`DROP DATABASE IF EXISTS ${dbName} WITH (FORCE)`);
      await c.end();
    }
  }
}

const out: Record<string, unknown> = {};
for (const kind of DATABASES) out[kind] = await oneDatabase(kind);
out.target = { database: 'postgres', verdictToCurrentMs: 5000, scoredItemsPerSecTwoWorkers: 20_000 };
out.machine = { cpus: cpus().length, node: process.version };
process.stdout.write(`${JSON.stringify(out)}\n`);
