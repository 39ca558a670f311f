import { readdirSync } from 'node:fs';
import type { ChildProcess } from 'node:child_process';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { exited, freePort, spawnApp } from '../support/processes.js';
import { eventually, startStack, TEST_REDIS_URL, type Stack } from '../support/stack.js';
import { syntheticPool } from '../support/synthetic.js';

const POOL = 2000;

describe.each(DATABASE_KINDS)('worker crashes and several workers on %s', (kind) => {
  let s: Stack;
  let sup: string;
  let rev: string;
  let deskId: number;
  const labels = new Map<string, string>();
  const workers: ChildProcess[] = [];
  let n = 0;

  const worker = (env: Record<string, string> = {}) => {
    // A short lock: a killed worker's job is taken over within seconds.
    // A short lock, so a killed worker's job is taken over quickly; long enough that a busy machine does not lose it.
    const w = spawnApp('worker', s.config, { JOB_LOCK_SECONDS: '8', SCORING_CHUNK_SIZE: '250', ...env });
    workers.push(w);
    return w;
  };
  const kill = async (w: ChildProcess, signal: NodeJS.Signals) => {
    w.kill(signal);
    await exited(w);
  };
  const current = async () => (await s.call(sup, 'GET', `/api/desks/${deskId}/models`)).body;
  /** Verdicts from the hidden labels. */
  const decide = async (count: number) => {
    for (let i = 0; i < count; i++) {
      const l = await s.call(rev, 'POST', `/api/desks/${deskId}/leases`);
      expect(l.status).toBe(201);
      const v = await s.call(rev, 'POST', `/api/desks/${deskId}/verdicts`, {
        leaseId: l.body.lease.id,
        itemId: l.body.item.id,
        category: labels.get(l.body.item.externalId),
        clientId: `c${n++}`,
      });
      expect(v.status).toBe(201);
    }
  };
  /** Waits for this worker's marker (an earlier worker's may still lie in the data folder). */
  const paused = (point: string, w: ChildProcess) =>
    eventually(
      async () => (readdirSync(s.config.dataDir).includes(`paused-${point}-${w.pid}`) ? true : undefined),
      60_000,
      `worker ${w.pid} paused at ${point}`,
    );
  const publishedVersion = (v: number) =>
    eventually(
      async () => ((await current()).currentModelVersion === v ? true : undefined),
      90_000,
      `version ${v} current`,
    );

  beforeAll(async () => {
    s = await startStack(kind, { worker: false });
    sup = await s.user('sup', 'supervisor');
    rev = await s.user('rev', 'reviewer');
    deskId = (
      await s.call(sup, 'POST', '/api/desks', {
        name: 'crash',
        categories: ['threat', 'harassment', 'ok'],
        randomShare: 0.3,
        retrainEvery: 10,
        retrainAfterSeconds: 600,
      })
    ).body.id;
    await s.enrol(deskId);
    const pool = syntheticPool(POOL, 11);
    for (const p of pool) labels.set(p.externalId, p.label);
    const w = worker();
    const imp = await s.call(
      sup,
      'POST',
      `/api/desks/${deskId}/imports`,
      pool.map((p) => JSON.stringify({ text: p.text, external_id: p.externalId })).join('\n'),
      { 'content-type': 'application/x-ndjson' },
    );
    await eventually(
      async () =>
        (await s.call(sup, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
      60_000,
    );
    // Enough verdicts for a first model (two training verdicts per category come quickly at this pool's shares).
    await decide(60);
    await eventually(
      async () => ((await current()).currentModelVersion !== null ? true : undefined),
      90_000,
      'a first model',
    );
    await s.waitForQueuesIdle(90_000, { ignoreDelayed: true });
    await kill(w, 'SIGTERM');
  }, 300_000);
  afterAll(async () => {
    for (const w of workers) if (w.exitCode === null && w.signalCode === null) w.kill('SIGKILL');
    await (s as Stack | undefined)?.stop();
  });

  async function crashAt(point: 'training' | 'scoring') {
    const before = (await current()).currentModelVersion as number;
    const w = worker({ CRIBRA_TEST_PAUSE: point });
    await decide(10);
    await paused(point, w);
    await kill(w, 'SIGKILL');
    // The previous version keeps serving; nothing half-written is current.
    const now = await current();
    expect(now.currentModelVersion).toBe(before);
    const l = await s.call(rev, 'POST', `/api/desks/${deskId}/leases`);
    expect(l.body.prediction.modelVersion).toBe(before);
    await s.call(rev, 'DELETE', `/api/leases/${l.body.lease.id}`);
    // A healthy worker retries the job and publishes a complete version.
    const healthy = worker();
    await publishedVersion(before + 1);
    await s.waitForQueuesIdle(90_000, { ignoreDelayed: true });
    const detail = (await s.call(sup, 'GET', `/api/desks/${deskId}/models/${before + 1}`)).body;
    expect(detail.state).toBe('published');
    const [{ open }] = await s.db.query<{ open: string | number }>(
      null,
      `SELECT COUNT(*) AS open FROM items WHERE desk_id = $1 AND state <> 'decided'`,
      [deskId],
    );
    const [{ scored }] = await s.db.query<{ scored: string | number }>(
      null,
      `SELECT COUNT(*) AS scored FROM predictions WHERE desk_id = $1 AND model_version = $2`,
      [deskId, before + 1],
    );
    expect(Number(scored)).toBe(Number(open));
    await kill(healthy, 'SIGTERM');
  }

  it('survives kill -9 during training', async () => {
    await crashAt('training');
  }, 240_000);

  it('survives kill -9 during scoring', async () => {
    await crashAt('scoring');
  }, 240_000);

  it('retrains after verdicts whose retrain request was lost (Redis down): the sweep finds them', async () => {
    const before = (await current()).currentModelVersion as number;
    await decide(10);
    // The requests these verdicts made are lost, as if Redis had been down when they were sent.
    await new Promise((r) => setTimeout(r, 1000));
    const connection = new Redis(TEST_REDIS_URL, { maxRetriesPerRequest: null });
    const q = new Queue('learning', { connection, prefix: s.config.queuePrefix });
    await q.obliterate({ force: true });
    expect(await q.getJobCounts('waiting', 'delayed', 'active')).toEqual({ waiting: 0, delayed: 0, active: 0 });
    await q.close();
    connection.disconnect();
    const w = worker({ SWEEP_SECONDS: '2' });
    await publishedVersion(before + 1);
    await kill(w, 'SIGTERM');
  }, 240_000);

  it('discards a version still scoring when a newer one overtakes it', async () => {
    const before = (await current()).currentModelVersion as number;
    const stuck = worker({ CRIBRA_TEST_PAUSE: 'scoring' });
    await decide(10);
    await paused('scoring', stuck);
    // Version before+1 is scoring (one chunk held by the stuck worker); new verdicts bring before+2.
    const fresh = worker();
    await decide(10);
    await publishedVersion(before + 2);
    await kill(stuck, 'SIGKILL');
    await eventually(
      async () =>
        (await s.call(sup, 'GET', `/api/desks/${deskId}/models/${before + 1}`)).body.state === 'superseded'
          ? true
          : undefined,
      60_000,
      'the overtaken version superseded',
    );
    await s.waitForQueuesIdle(90_000, { ignoreDelayed: true });
    expect((await current()).currentModelVersion).toBe(before + 2);
    const [{ left }] = await s.db.query<{ left: string | number }>(
      null,
      'SELECT COUNT(*) AS left FROM predictions WHERE desk_id = $1 AND model_version = $2',
      [deskId, before + 1],
    );
    expect(Number(left)).toBe(0);
    await kill(fresh, 'SIGTERM');
  }, 240_000);

  it('lets two worker processes share the scoring chunks of one retrain', async () => {
    const before = (await current()).currentModelVersion as number;
    // Both workers must be taking jobs before the retrain: on a busy machine one may still be starting when the other
    // has scored every chunk. A worker's /healthz answers 200 once it runs a worker for every queue.
    const [pa, pb] = [await freePort(), await freePort()];
    const a = worker({ WORKER_HEALTH_PORT: String(pa) });
    const b = worker({ WORKER_HEALTH_PORT: String(pb) });
    for (const port of [pa, pb])
      await eventually(
        async () => ((await fetch(`http://127.0.0.1:${port}/healthz`).catch(() => null))?.ok ? true : undefined),
        60_000,
        `the worker on health port ${port} taking jobs`,
      );
    await decide(10);
    await publishedVersion(before + 1);
    const connection = new Redis(TEST_REDIS_URL, { maxRetriesPerRequest: null });
    const q = new Queue('scoring', { connection, prefix: s.config.queuePrefix });
    try {
      const jobs = (await q.getJobs(['completed'])).filter(
        (j) => j.data.version === before + 1 && j.data.deskId === deskId,
      );
      expect(jobs.length).toBe(Math.ceil((POOL - n) / 250));
      const by = new Set(jobs.map((j) => j.processedBy));
      expect(by.size).toBe(2);
      expect([...by].sort()).toEqual(
        [`${a.pid}`, `${b.pid}`].map((pid) => [...by].find((x) => x?.endsWith(`:${pid}`))).sort(),
      );
    } finally {
      await q.close();
      connection.disconnect();
      await kill(a, 'SIGTERM');
      await kill(b, 'SIGTERM');
    }
  }, 240_000);
});
