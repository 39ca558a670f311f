import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { exited, freePort, spawnApp, waitReady } from '../support/processes.js';
import { startStack, type Stack } from '../support/stack.js';

const PASSWORD = 'a long passphrase for hardening';

/** Milliseconds a request takes, with its status. */
async function timed(url: string, init?: RequestInit): Promise<{ ms: number; status: number }> {
  const t0 = performance.now();
  const res = await fetch(url, init);
  await res.arrayBuffer();
  return { ms: performance.now() - t0, status: res.status };
}

describe.each(DATABASE_KINDS)('bodies, the API document and cross-site requests on %s', (kind) => {
  let s: Stack;
  let sup = '';
  let session = '';
  let deskId = 0;
  let host = '';

  beforeAll(async () => {
    s = await startStack(kind, { worker: false });
    sup = await s.user('hard-sup', 'supervisor', PASSWORD);
    deskId = (await s.call(sup, 'POST', '/api/desks', { name: 'hardening', categories: ['a', 'b'] })).body.id;
    const login = await s.call(null, 'POST', '/api/auth/login', { name: 'hard-sup', password: PASSWORD });
    session = (login.headers.get('set-cookie') ?? '').split(';')[0];
    host = new URL(s.base).host;
  });
  afterAll(async () => (s as Stack | undefined)?.stop());

  const deep = (levels: number) =>
    `{"name":"x","password":"y","extra":${'{"a":'.repeat(levels)}1${'}'.repeat(levels)}}`;

  /**
   * The figures are 50 ms per deep body and for /healthz beside them. The machine these tests run on is
   * shared, so wall times are compared with those of an empty request (/healthz) measured in the same run, and the
   * server's own CPU time per request, which load does not change, is checked against a few milliseconds.
   */
  it('answers deep bodies with 400 at once, on the sign-in and on a signed-in route, while /healthz stays quick', async () => {
    // A separate API process, so that this process's own requests do not share the server's event loop.
    const port = await freePort();
    const base = `http://127.0.0.1:${port}`;
    const api = spawnApp('api', { ...s.config, port });
    const p90 = (xs: number[]) => [...xs].sort((x, y) => x - y)[Math.floor(0.9 * (xs.length - 1))];
    try {
      await waitReady(base);
      const json = { 'content-type': 'application/json' };
      const deepLogin = () => timed(`${base}/api/auth/login`, { method: 'POST', headers: json, body: deep(1000) });
      const deepPatch = () =>
        timed(`${base}/api/desks/${deskId}`, {
          method: 'PATCH',
          headers: { ...json, authorization: `Bearer ${sup}` },
          body: deep(3000),
        });
      const health = () => timed(`${base}/healthz`);
      // Warm the server's code paths and open the connections.
      await Promise.all([...Array.from({ length: 16 }, deepLogin), ...Array.from({ length: 16 }, deepPatch)]);

      // One at a time, alternating: what a deep body adds to an empty request's time.
      const empty: number[] = [];
      const deepOnes: number[] = [];
      for (let i = 0; i < 20; i++) {
        empty.push((await health()).ms);
        const d = await (i % 2 ? deepPatch() : deepLogin());
        expect(d.status).toBe(400);
        deepOnes.push(d.ms);
      }
      expect(p90(deepOnes)).toBeLessThan(p90(empty) + 50);

      // Sixteen of each at once with /healthz asked beside them, against as many empty requests at once: the deep
      // bodies may not hold /healthz up longer than ordinary traffic of the same size. Alternated, five rounds each.
      const beside = async (load: () => Promise<{ status: number; ms: number }>) => {
        const storm = Array.from({ length: 32 }, load);
        const probes = await Promise.all(Array.from({ length: 8 }, health));
        const answers = await Promise.all(storm);
        return { probes: probes.map((x) => x.ms), statuses: answers.map((x) => x.status) };
      };
      const withEmpty: number[] = [];
      const withDeep: number[] = [];
      for (let round = 0; round < 5; round++) {
        withEmpty.push(p90((await beside(health)).probes));
        const d = await beside(() => (Math.random() < 0.5 ? deepLogin() : deepPatch()));
        expect(d.statuses).toEqual(Array(32).fill(400));
        withDeep.push(p90(d.probes));
      }
      const median = (xs: number[]) => [...xs].sort((x, y) => x - y)[Math.floor(xs.length / 2)];
      expect(median(withDeep)).toBeLessThan(median(withEmpty) + 50);

      // CPU time of the server per deep body, against that of an empty request (Linux /proc; clock ticks of 10 ms).
      const cpuMs = () => {
        const f = readFileSync(`/proc/${api.pid}/stat`, 'utf8').split(') ')[1].split(' ');
        return ((Number(f[11]) + Number(f[12])) * 1000) / 100;
      };
      const cost = async (send: () => Promise<{ status: number }>, n: number) => {
        const before = cpuMs();
        for (let i = 0; i < n; i += 8) await Promise.all(Array.from({ length: 8 }, send));
        return (cpuMs() - before) / n;
      };
      const emptyCost = await cost(health, 200);
      const loginCost = await cost(deepLogin, 200);
      const patchCost = await cost(deepPatch, 200);
      expect(loginCost).toBeLessThan(emptyCost + 3);
      expect(patchCost).toBeLessThan(emptyCost + 3);
    } finally {
      api.kill('SIGTERM');
      await exited(api);
    }
    const one = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, JSON.parse(deep(20)) as object);
    expect(one.status).toBe(400);
    expect(String(one.body.message)).toMatch(/nested deeper than 16 levels/);
  });

  it('refuses an unknown property before walking it, and too big a body with 413', async () => {
    const wide = { randomShare: 0.3, junk: Object.fromEntries(Array.from({ length: 5000 }, (_, i) => [`k${i}`, [i]])) };
    const r = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, wide);
    expect(r.status).toBe(400);
    expect(r.body.message).toEqual(['property junk should not exist']);
    const big = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { name: 'x'.repeat(1024 * 1024 + 10) });
    expect(big.status).toBe(413);
    const bigLogin = await s.call(null, 'POST', '/api/auth/login', { name: 'hard-sup', password: 'p'.repeat(9000) });
    expect(bigLogin.status).toBe(413);
    const notJson = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, '{"randomShare": 0.3', {
      'content-type': 'application/json',
    });
    expect(notJson.status).toBe(400);
    expect(String(notJson.body.message)).toMatch(/not valid JSON/);
    // An anonymous body on a signed-in route is not read at all: the answer is the guard's.
    expect((await s.call(null, 'PATCH', `/api/desks/${deskId}`, { name: 'x'.repeat(1024 * 1024 + 10) })).status).toBe(
      401,
    );
    // The valid change still works.
    expect((await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { randomShare: 0.3 })).status).toBe(200);
  });

  it('serves the API document to signed-in users only, however the path is spelled', async () => {
    for (const path of ['/api/docs', '/api/docs/', '/api/docs-json', '/api/DOCS-json', '/API/docs-json', '/Api/Docs']) {
      const anon = await fetch(`${s.base}${path}`, { redirect: 'manual' });
      expect([path, anon.status]).toEqual([path, 401]);
    }
    const signed = await s.call(sup, 'GET', '/API/DOCS-JSON');
    expect(signed.status).toBe(200);
    expect(signed.body.openapi).toBeDefined();
  });

  it('refuses changes made with the session cookie from another origin, and lets same-origin ones and tokens through', async () => {
    const withCookie = (headers: Record<string, string>) => ({ cookie: session, ...headers });
    const patch = (headers: Record<string, string>) =>
      s.call(null, 'PATCH', `/api/desks/${deskId}`, { randomShare: 0.25 }, headers);
    expect((await patch(withCookie({ origin: 'http://evil.example' }))).status).toBe(403);
    expect((await patch(withCookie({ origin: 'null' }))).status).toBe(403);
    expect((await patch(withCookie({ 'sec-fetch-site': 'cross-site' }))).status).toBe(403);
    expect((await patch(withCookie({ 'sec-fetch-site': 'same-site' }))).status).toBe(403);
    expect((await patch(withCookie({ origin: `http://${host}`, 'sec-fetch-site': 'same-origin' }))).status).toBe(200);
    // A body-less POST and a multipart import are changes too.
    const sim = await s.call(null, 'DELETE', `/api/desks/${deskId}/simulation`, undefined, {
      cookie: session,
      origin: 'http://evil.example',
    });
    expect(sim.status).toBe(403);
    const form = new FormData();
    form.append('file', new Blob(['{"text":"from elsewhere"}\n'], { type: 'application/x-ndjson' }), 'x.ndjson');
    const imp = await s.call(null, 'POST', `/api/desks/${deskId}/imports`, form, {
      cookie: session,
      origin: 'http://evil.example',
    });
    expect(imp.status).toBe(403);
    // Reads are never refused for their origin; a bearer token cannot be sent by another site's page.
    expect(
      (await s.call(null, 'GET', `/api/desks/${deskId}`, undefined, withCookie({ origin: 'http://evil.example' })))
        .status,
    ).toBe(200);
    expect(
      (await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { randomShare: 0.2 }, { origin: 'http://evil.example' }))
        .status,
    ).toBe(200);
    // Nor may another site sign a browser in.
    const login = await s.call(
      null,
      'POST',
      '/api/auth/login',
      { name: 'hard-sup', password: PASSWORD },
      { origin: 'http://evil.example' },
    );
    expect(login.status).toBe(403);
  });
});
