import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seedDemo } from '../../apps/cli/src/demo-seed.js';
import { jobOptions, JobQueueService, JOBS } from '#queues';
import {
  DEMO_DESK_NAME,
  formatDemoBlock,
  generateMossbankPool,
  MOSSBANK_SEED_TERMS,
  SIMULATED_REVIEWER,
  type DemoSeedResult,
} from '#demo';
import { DATABASE_KINDS } from '../support/databases.js';
import { accountsInBlock } from './demo-block.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import type { DbInt } from '#database';

describe.each(DATABASE_KINDS)('the Mossbank Commons demo on %s', (kind) => {
  let s: Stack;
  let seeded: DemoSeedResult | null = null;
  const session: Record<string, string> = {};
  const truth = new Map(generateMossbankPool().map((p) => [p.externalId, p.category]));

  /** A call with a signed-in user's session cookie. */
  const as = (who: string, method: string, path: string, body?: unknown) =>
    s.call(null, method, path, body, { cookie: session[who] });
  const count = async (sql: string, params: unknown[] = []) =>
    Number((await s.db.query<{ n: number | string }>(null, sql, params))[0].n);

  beforeAll(async () => {
    s = await startStack(kind);
  }, 240_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('does nothing with DEMO=off', async () => {
    expect(await seedDemo({ ...s.config, demo: false })).toBeNull();
    expect(await count('SELECT COUNT(*) AS n FROM users')).toBe(0);
    expect(await count('SELECT COUNT(*) AS n FROM desks')).toBe(0);
  });

  it('seeds the desk, one account per role with working passwords, and imports the pool, exactly once', async () => {
    // The stack names its database in DATABASE_URL, where the demo is off unless asked for: ask, as DEMO=on does.
    seeded = await seedDemo({ ...s.config, demo: true });
    expect(seeded).not.toBeNull();
    const block = formatDemoBlock(`${s.base}/`, seeded!);
    expect(block).toContain(`${s.base}/`);
    const accounts = accountsInBlock(block);
    expect([...accounts.keys()].sort()).toEqual(['auditor', 'reviewer', 'supervisor']);
    for (const [name, password] of accounts) {
      expect(password).toMatch(/^[A-Za-z0-9_-]{20}$/);
      const login = await s.call(null, 'POST', '/api/auth/login', { name, password });
      expect(login.status, name).toBe(200);
      session[name] = login.headers.get('set-cookie')!.split(';')[0]!;
      expect((await as(name, 'GET', '/api/auth/me')).body).toMatchObject({ name, role: name });
    }

    const imp = await eventually(
      async () => {
        const r = await as('supervisor', 'GET', `/api/imports/${seeded!.importId}`);
        return r.body.state === 'done' ? r.body : undefined;
      },
      120_000,
      'the demo import',
    );
    expect(imp.imported).toBe(3200);
    expect(imp.imported).toBeGreaterThanOrEqual(3000);
    expect(imp.rejected).toBe(0);
    expect(imp.duplicates).toBe(0);
    const desk = (await as('supervisor', 'GET', `/api/desks/${seeded!.deskId}`)).body;
    expect(desk.name).toBe(DEMO_DESK_NAME);
    expect(desk.categories.map((c: { name: string }) => c.name)).toEqual(['threat', 'harassment', 'ok']);
    expect(desk.seedTerms).toEqual(MOSSBANK_SEED_TERMS);
    // The hidden category is nowhere in the stored items.
    expect(
      await count(`SELECT COUNT(*) AS n FROM items WHERE meta LIKE '%category%' OR meta LIKE '%harassment%'`),
    ).toBe(0);

    // A database in use is never seeded again.
    expect(await seedDemo({ ...s.config, demo: true })).toBeNull();
    expect(await count('SELECT COUNT(*) AS n FROM users')).toBe(3);
    expect(await count('SELECT COUNT(*) AS n FROM desks')).toBe(1);
    expect(await count('SELECT COUNT(*) AS n FROM imports')).toBe(1);
  }, 180_000);

  it('keeps the simulated reviewer to supervisors and to desks of generated posts', async () => {
    const deskId = seeded!.deskId;
    for (const who of ['reviewer', 'auditor']) {
      expect((await as(who, 'GET', `/api/desks/${deskId}/simulation`)).status).toBe(403);
      expect((await as(who, 'POST', `/api/desks/${deskId}/simulation`, { minutes: 1 })).status).toBe(403);
      expect((await as(who, 'DELETE', `/api/desks/${deskId}/simulation`)).status).toBe(403);
    }
    expect((await as('supervisor', 'GET', '/api/desks/999/simulation')).status).toBe(404);
    expect((await as('supervisor', 'POST', '/api/desks/999/simulation', {})).status).toBe(404);
    const tooLong = await as('supervisor', 'POST', `/api/desks/${deskId}/simulation`, { minutes: 11 });
    expect(tooLong.status).toBe(400);
    expect(JSON.stringify(tooLong.body)).toMatch(/minutes: expected a whole number from 1 to 10/);

    // A desk with the same categories but its own texts.
    const other = await as('supervisor', 'POST', '/api/desks', {
      name: 'reports from elsewhere',
      categories: ['threat', 'harassment', 'ok'],
    });
    const imp = await s.call(
      null,
      'POST',
      `/api/desks/${other.body.id}/imports`,
      '{"text":"a post of our own"}\n{"text":"another one"}\n',
      { cookie: session.supervisor, 'content-type': 'application/x-ndjson' },
    );
    await eventually(async () =>
      (await as('supervisor', 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
    );
    const refused = await as('supervisor', 'POST', `/api/desks/${other.body.id}/simulation`, { minutes: 1 });
    expect(refused.status).toBe(409);
    expect(refused.body.message).toMatch(/2 item\(s\) that are not generated demo posts/);
    // No body at all means the default two minutes: refused here for the same reason, not for the body.
    const bare = await s.call(null, 'POST', `/api/desks/${other.body.id}/simulation`, undefined, {
      cookie: session.supervisor,
    });
    expect(bare.status).toBe(409);
    const status = (await as('supervisor', 'GET', `/api/desks/${other.body.id}/simulation`)).body;
    expect(status).toMatchObject({ available: false, state: 'idle', verdicts: 0 });
    expect(status.reason).toMatch(/not generated demo posts/);
  });

  it('works the demo desk like a reviewer, with verdicts marked simulated, until stopped; a first model appears', async () => {
    const deskId = seeded!.deskId;
    // The first model sooner than the default debounce would give it.
    expect(
      (await as('supervisor', 'PATCH', `/api/desks/${deskId}`, { retrainEvery: 5, retrainAfterSeconds: 2 })).status,
    ).toBe(200);
    expect((await as('supervisor', 'GET', `/api/desks/${deskId}/simulation`)).body).toEqual({
      available: true,
      state: 'idle',
      verdicts: 0,
    });

    const t0 = Date.now();
    const started = await as('supervisor', 'POST', `/api/desks/${deskId}/simulation`, { minutes: 1 });
    expect(started.status).toBe(202);
    expect(started.body).toMatchObject({ state: 'running', verdicts: 0 });
    expect(Math.abs(Date.parse(started.body.until) - t0 - 60_000)).toBeLessThan(5000);
    const again = await as('supervisor', 'POST', `/api/desks/${deskId}/simulation`, { minutes: 2 });
    expect(again.status).toBe(409);
    expect(again.body).toMatchObject({ state: 'running', until: started.body.until });

    // About 2 verdicts a second (pauses of 200–600 ms): 20 within about 10–15 s. The first model needs two
    // training verdicts in every category, so it may take a little longer when the seed terms serve few threats.
    const running = await eventually(
      async () => {
        const r = (await as('supervisor', 'GET', `/api/desks/${deskId}/simulation`)).body;
        const models = (await as('supervisor', 'GET', `/api/desks/${deskId}/models`)).body;
        return r.verdicts >= 20 && models.currentModelVersion !== null ? r : undefined;
      },
      55_000,
      '20 simulated verdicts and a first model version',
    );
    expect(running.state).toBe('running');

    const stopAsked = Date.now();
    expect((await as('supervisor', 'DELETE', `/api/desks/${deskId}/simulation`)).status).toBe(204);
    expect(Date.now() - stopAsked).toBeLessThan(3000);
    const stopped = (await as('supervisor', 'GET', `/api/desks/${deskId}/simulation`)).body;
    expect(stopped.state).toBe('stopped');
    const inTrail = await count('SELECT COUNT(*) AS n FROM verdicts WHERE desk_id = $1', [deskId]);
    expect(stopped.verdicts).toBe(inTrail);
    await new Promise((r) => setTimeout(r, 1500));
    expect(await count('SELECT COUNT(*) AS n FROM verdicts WHERE desk_id = $1', [deskId])).toBe(inTrail);
    expect(await count(`SELECT COUNT(*) AS n FROM items WHERE desk_id = $1 AND state = 'leased'`, [deskId])).toBe(0);

    // Every verdict is the simulated reviewer's, marked simulated, in the verdicts and in the audit trail.
    const rows = await s.db.query<{
      name: string;
      simulated: boolean | number;
      category: string | null;
      abstain: boolean | number;
      external_id: string;
      elapsed_ms: DbInt;
    }>(
      null,
      `SELECT u.name, v.simulated, c.name AS category, v.abstain, i.external_id, v.elapsed_ms FROM verdicts v JOIN users u ON u.id = v.reviewer_id
       JOIN items i ON i.id = v.item_id LEFT JOIN categories c ON c.id = v.category_id WHERE v.desk_id = $1`,
      [deskId],
    );
    expect(rows.every((r) => r.name === SIMULATED_REVIEWER && (r.simulated === true || r.simulated === 1))).toBe(true);
    expect(rows.every((r) => Number(r.elapsed_ms) >= 200 && Number(r.elapsed_ms) < 600)).toBe(true);
    const audited = await s.db.query<{ after: string }>(
      null,
      `SELECT after FROM audit_events WHERE action = 'verdict.create' AND desk_id = $1`,
      [deskId],
    );
    expect(audited).toHaveLength(rows.length);
    expect(audited.every((a) => (JSON.parse(a.after) as { simulated?: boolean }).simulated === true)).toBe(true);
    // It answers from the hidden categories, wrong 1 time in 20 and abstaining 1 in 100: the answers that differ
    // are Binomial(n, 0.06). Allow up to the count that a correct simulator exceeds less than once in 1 000 runs.
    const differ = rows.filter((r) => r.category !== truth.get(r.external_id)).length;
    expect(differ).toBeLessThanOrEqual(binomialUpperQuantile(rows.length, 0.06, 0.001));
    const actions = (
      await s.db.query<{ action: string }>(
        null,
        `SELECT action FROM audit_events WHERE action LIKE 'simulation.%' AND desk_id = $1 ORDER BY id`,
        [deskId],
      )
    ).map((a) => a.action);
    expect(actions).toEqual(['simulation.start', 'simulation.stop']);

    // The model learned from simulated verdicts only.
    const models = (await as('supervisor', 'GET', `/api/desks/${deskId}/models`)).body;
    expect(models.models.find((m: { state: string }) => m.state === 'published')).toBeDefined();
    expect(await count(`SELECT COUNT(*) AS n FROM verdicts WHERE desk_id = $1 AND NOT simulated`, [deskId])).toBe(0);
  }, 240_000);

  it('finishes at its end time, and a worker that shuts down hands its run on', async () => {
    const deskId = seeded!.deskId;
    const jobs = s.api.get(JobQueueService);
    const payload = { deskId, startedAt: Date.now(), until: Date.now() + 3000 };
    // A run of 3 s, shorter than the API allows, put on the queue directly (after the stopped run's job is gone).
    await (await jobs.job(JOBS.simulateReviewer, jobOptions(JOBS.simulateReviewer, payload).jobId!))?.remove();
    await jobs.add(JOBS.simulateReviewer, payload);
    const finished = await eventually(
      async () => {
        const r = (await as('supervisor', 'GET', `/api/desks/${deskId}/simulation`)).body;
        return r.state === 'finished' ? r : undefined;
      },
      20_000,
      'the end of a 3 s run',
    );
    expect(finished.verdicts).toBeGreaterThan(0);
    expect(Date.parse(finished.until)).toBe(payload.until);

    expect((await as('supervisor', 'POST', `/api/desks/${deskId}/simulation`, { minutes: 1 })).status).toBe(202);
    await eventually(
      async () =>
        (await as('supervisor', 'GET', `/api/desks/${deskId}/simulation`)).body.verdicts >= 3 ? true : undefined,
      20_000,
      'three verdicts',
    );
    const t0 = Date.now();
    await s.stopWorker();
    expect(Date.now() - t0).toBeLessThan(5000);
    // Nothing is left held, and the run waits for the next worker (its retry goes on until the same end time).
    expect(await count(`SELECT COUNT(*) AS n FROM items WHERE desk_id = $1 AND state = 'leased'`, [deskId])).toBe(0);
    const waiting = (await as('supervisor', 'GET', `/api/desks/${deskId}/simulation`)).body;
    expect(waiting.state).toBe('running');
    expect(waiting.verdicts).toBeGreaterThanOrEqual(3);
    // Stopping a run no worker has taken simply removes it.
    expect((await as('supervisor', 'DELETE', `/api/desks/${deskId}/simulation`)).status).toBe(204);
    expect((await as('supervisor', 'GET', `/api/desks/${deskId}/simulation`)).body).toMatchObject({
      state: 'idle',
      verdicts: 0,
    });
  }, 120_000);
});

/** The smallest k with P(X > k) < tail for X ~ Binomial(n, p), summing the probability mass directly. */
function binomialUpperQuantile(n: number, p: number, tail: number): number {
  let mass = (1 - p) ** n;
  let below = mass;
  for (let k = 0; k < n; k++) {
    if (1 - below < tail) return k;
    mass *= ((n - k) / (k + 1)) * (p / (1 - p));
    below += mass;
  }
  return n;
}
