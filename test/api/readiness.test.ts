import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { freePort } from '../support/processes.js';
import { startStack, type Stack } from '../support/stack.js';

describe.each(DATABASE_KINDS)('readiness without Redis on %s', (kind) => {
  let s: Stack;
  beforeAll(async () => {
    // A Redis address nothing listens on: the API starts, and its Redis commands wait for a server that never comes.
    s = await startStack(kind, { worker: false, env: { REDIS_URL: `redis://127.0.0.1:${await freePort()}` } });
  });
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('answers /readyz with 503 within a second, naming what is missing, while /healthz stays 200', async () => {
    const t0 = performance.now();
    const r = await s.call(null, 'GET', '/readyz');
    const ms = performance.now() - t0;
    expect(r.status).toBe(503);
    expect(r.body).toMatchObject({ status: 'not ready', database: true, redis: false });
    expect(ms).toBeLessThan(1000);
    expect((await s.call(null, 'GET', '/healthz')).status).toBe(200);
  });
});
