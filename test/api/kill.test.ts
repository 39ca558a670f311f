import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { exited, freePort, spawnApp, waitReady } from '../support/processes.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import type { DbInt } from '#database';

const CLIENTS = 8;

interface Attempt {
  leaseId: string;
  itemId: number;
  clientId: string;
  category: string;
  acked: boolean;
  verdictId?: number;
}

describe.each(DATABASE_KINDS)('SIGKILL of the API during verdicts on %s', (kind) => {
  let s: Stack;
  let deskId: number;
  const tokens: string[] = [];

  beforeAll(async () => {
    s = await startStack(kind);
    const sup = await s.user('sup', 'supervisor');
    for (let i = 0; i < CLIENTS; i++) tokens.push(await s.user(`k${i}`, 'reviewer'));
    // First draws only (no second opinions): every acknowledged verdict then decides its own item.
    deskId = (
      await s.call(sup, 'POST', '/api/desks', { name: 'kill', categories: ['threat', 'ok'], secondOpinionShare: 0 })
    ).body.id;
    await s.enrol(deskId);
    const lines = Array.from({ length: 3000 }, (_, i) => JSON.stringify({ text: `post ${i}` })).join('\n');
    const imp = await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, lines, {
      'content-type': 'application/x-ndjson',
    });
    await eventually(
      async () =>
        (await s.call(sup, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
      60_000,
    );
  }, 120_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('keeps every acknowledged verdict, and replays create no duplicates', async () => {
    const port = await freePort();
    const base = `http://127.0.0.1:${port}`;
    let api = spawnApp('api', { ...s.config, port });
    await waitReady(base);
    const post = async (token: string, path: string, body?: unknown) => {
      const res = await fetch(`${base}${path}`, {
        method: 'POST',
        headers: { authorization: `Bearer ${token}`, 'content-type': 'application/json' },
        body: body === undefined ? undefined : JSON.stringify(body),
      });
      return { status: res.status, body: (res.status === 204 ? null : await res.json()) as any };
    };
    const attempts: Attempt[][] = tokens.map(() => []);
    let killed = false;
    const loops = tokens.map(async (token, c) => {
      for (let n = 0; !killed; n++) {
        let lease;
        try {
          lease = await post(token, `/api/desks/${deskId}/leases`);
        } catch {
          return;
        }
        if (lease.status !== 201) return;
        const a: Attempt = {
          leaseId: lease.body.lease.id,
          itemId: lease.body.item.id,
          clientId: `c${c}-${n}`,
          category: n % 2 ? 'ok' : 'threat',
          acked: false,
        };
        attempts[c].push(a);
        try {
          const v = await post(token, `/api/desks/${deskId}/verdicts`, {
            leaseId: a.leaseId,
            itemId: a.itemId,
            category: a.category,
            clientId: a.clientId,
          });
          if (v.status === 201) {
            a.acked = true;
            a.verdictId = v.body.verdict.id;
          }
        } catch {
          return; // the connection died with the process: outcome unknown, replayed below
        }
      }
    });
    // Kill mid-stream, once enough verdicts were acknowledged for the check to mean something.
    await eventually(
      async () => (attempts.flat().filter((a) => a.acked).length >= 40 ? true : undefined),
      30_000,
      '40 acknowledged verdicts',
    );
    killed = true;
    api.kill('SIGKILL');
    await Promise.all(loops);
    await exited(api);
    const acked = attempts.flat().filter((a) => a.acked);
    expect(acked.length).toBeGreaterThanOrEqual(40);

    api = spawnApp('api', { ...s.config, port });
    try {
      await waitReady(base);
      // Every acknowledged verdict is there.
      const stored = await s.db.query<{ client_id: string; id: DbInt }>(
        null,
        'SELECT client_id, id FROM verdicts WHERE desk_id = $1',
        [deskId],
      );
      const byClient = new Map(stored.map((r) => [r.client_id, Number(r.id)]));
      for (const a of acked) expect(byClient.get(a.clientId)).toBe(a.verdictId);
      // Clients replay every attempt, acknowledged or not.
      for (const [c, list] of attempts.entries()) {
        for (const a of list) {
          const v = await post(tokens[c], `/api/desks/${deskId}/verdicts`, {
            leaseId: a.leaseId,
            itemId: a.itemId,
            category: a.category,
            clientId: a.clientId,
          });
          expect([200, 201]).toContain(v.status);
          if (a.acked) {
            expect(v.status).toBe(200);
            expect(v.body.verdict.id).toBe(a.verdictId);
          }
        }
      }
      const after = await s.db.query<{ n: string | number; d: string | number }>(
        null,
        'SELECT COUNT(*) AS n, COUNT(DISTINCT client_id) AS d FROM verdicts WHERE desk_id = $1',
        [deskId],
      );
      expect(Number(after[0].n)).toBe(attempts.flat().length);
      expect(Number(after[0].d)).toBe(attempts.flat().length);
      const items = await s.db.query<{ n: string | number }>(
        null,
        `SELECT COUNT(*) AS n FROM items WHERE desk_id = $1 AND state = 'decided'`,
        [deskId],
      );
      expect(Number(items[0].n)).toBe(attempts.flat().length);
    } finally {
      api.kill('SIGTERM');
      await exited(api);
    }
  }, 120_000);
});
