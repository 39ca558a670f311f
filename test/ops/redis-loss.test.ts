import { mkdtempSync, rmSync } from 'node:fs';
import { createServer, connect, type Server, type Socket } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startPrivateRedis } from '../../apps/cli/src/redis-launcher.js';
import { DATABASE_KINDS } from '../support/databases.js';
import { exited, freePort, waitReady } from '../support/processes.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { QUEUES } from '#queues';

/**
 * A TCP relay in front of PostgreSQL that can stop passing bytes, as a dropped network or a stalled server does:
 * connections stay open and queries never come back.
 */
async function stallableRelay(target: number): Promise<{ port: number; stall(on: boolean): void; close(): void }> {
  let stalled = false;
  const sockets: Socket[] = [];
  const server: Server = createServer((client) => {
    const upstream = connect(target, '127.0.0.1');
    sockets.push(client, upstream);
    const relay = (from: Socket, to: Socket) => {
      const held: Buffer[] = [];
      from.on('data', (d: Buffer) => (stalled ? held.push(d) : to.write(d)));
      const flush = setInterval(() => {
        if (!stalled) while (held.length) to.write(held.shift()!);
      }, 20);
      from.on('close', () => {
        clearInterval(flush);
        to.destroy();
      });
      from.on('error', () => to.destroy());
    };
    relay(client, upstream);
    relay(upstream, client);
  });
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', () => r()));
  return {
    port: (server.address() as { port: number }).port,
    stall: (on) => (stalled = on),
    close: () => {
      for (const socket of sockets) socket.destroy();
      server.close();
    },
  };
}

const timed = async (url: string, init?: RequestInit) => {
  const t0 = performance.now();
  const res = await fetch(url, init);
  const body = (await res.json()) as any;
  return { status: res.status, body, ms: performance.now() - t0, headers: res.headers };
};

// The API and the worker run in this process (the worker with its health server); Redis is a real redis-server
// process that the test pauses (SIGSTOP) and kills (SIGKILL), and PostgreSQL is reached through a relay that stalls.
describe.each(DATABASE_KINDS)('Redis and database loss on %s', (kind) => {
  let s: Stack;
  let redis: Awaited<ReturnType<typeof startPrivateRedis>>;
  let relay: Awaited<ReturnType<typeof stallableRelay>> | null = null;
  let workerBase: string;
  let sup: string;
  let deskId: number;
  const redisDir = mkdtempSync(join(tmpdir(), 'cribra-redis-'));

  beforeAll(async () => {
    redis = await startPrivateRedis(redisDir);
    if (kind === 'postgres') relay = await stallableRelay(5432);
    const healthPort = await freePort();
    workerBase = `http://127.0.0.1:${healthPort}`;
    s = await startStack(kind, {
      env: { REDIS_URL: redis.url, WORKER_HEALTH_PORT: String(healthPort) },
      databaseUrl: (url) => {
        if (!relay) return url;
        const u = new URL(url);
        u.host = `127.0.0.1:${relay.port}`;
        return u.toString();
      },
    });
    sup = await s.user('sup', 'supervisor');
    deskId = (await s.call(sup, 'POST', '/api/desks', { name: 'loss', categories: ['threat', 'ok'] })).body.id;
  }, 60_000);

  afterAll(async () => {
    redis.process.kill('SIGCONT');
    relay?.stall(false);
    await (s as Stack | undefined)?.stop();
    await redis.stop();
    relay?.close();
    rmSync(redisDir, { recursive: true, force: true });
  });

  const importPosts = (n: number) =>
    timed(`${s.base}/api/desks/${deskId}/imports`, {
      method: 'POST',
      headers: { authorization: `Bearer ${sup}`, 'content-type': 'application/x-ndjson' },
      body: Array.from({ length: n }, (_, i) => JSON.stringify({ text: `post ${n} ${i}` })).join('\n'),
    });

  it('answers 503 within a second naming Redis, and 503 within a few seconds to a request that needs it, while Redis is paused', async () => {
    const queues = Object.values(QUEUES).length;
    expect((await timed(`${workerBase}/healthz`)).body).toMatchObject({ status: 'ok', queues, running: queues });
    redis.process.kill('SIGSTOP');
    try {
      for (const url of [`${s.base}/readyz`, `${workerBase}/readyz`]) {
        const ready = await timed(url);
        expect(ready.status).toBe(503);
        expect(ready.body).toMatchObject({ status: 'not ready', database: true, redis: false });
        expect(ready.ms).toBeLessThan(1000);
      }
      // Liveness does not follow Redis: the worker process itself is fine.
      expect((await timed(`${workerBase}/healthz`)).status).toBe(200);
      // An import needs Redis to queue its job: it is refused with 503 once the command times out (3 s).
      const imp = await importPosts(5);
      expect(imp.status).toBe(503);
      expect(imp.body.message).toMatch(/Redis\) did not answer within 3 s/);
      expect(imp.headers.get('retry-after')).toBe('5');
      expect(imp.ms).toBeLessThan(6000);
      expect(imp.ms).toBeGreaterThanOrEqual(2900);
    } finally {
      redis.process.kill('SIGCONT');
    }
    // Work resumes once Redis answers again: the next import is queued and the worker reads it.
    await waitReady(s.base, 10_000);
    const imp = await importPosts(7);
    expect(imp.status).toBe(202);
    const done = await eventually(
      async () => {
        const r = await s.call(sup, 'GET', `/api/imports/${imp.body.importId}`);
        return r.body.state === 'done' ? r.body : undefined;
      },
      20_000,
      'the import after Redis came back',
    );
    expect(done.imported).toBe(7);
  });

  it('answers 503 within a second while Redis is down, and is ready again when it comes back on its port', async () => {
    const port = redis.port;
    redis.process.kill('SIGKILL');
    await exited(redis.process);
    const ready = await timed(`${s.base}/readyz`);
    expect(ready.status).toBe(503);
    expect(ready.body).toMatchObject({ redis: false, database: true });
    expect(ready.ms).toBeLessThan(1000);
    redis = await startPrivateRedis(redisDir, port);
    await waitReady(s.base, 15_000);
    await waitReady(workerBase, 15_000);
  });

  it.runIf(kind === 'postgres')('answers 503 within a second naming the database when it stops answering', async () => {
    relay!.stall(true);
    try {
      for (const url of [`${s.base}/readyz`, `${workerBase}/readyz`]) {
        const ready = await timed(url);
        expect(ready.status).toBe(503);
        expect(ready.body).toMatchObject({ status: 'not ready', database: false, redis: true });
        expect(ready.ms).toBeLessThan(1000);
      }
    } finally {
      relay!.stall(false);
    }
    await waitReady(s.base, 15_000);
  });
});
