import { request } from 'node:http';
import { Redis } from 'ioredis';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { startStack, TEST_REDIS_URL, type Stack } from '../support/stack.js';

const PASSWORD = 'moss grows on the north side';

/** A sign-in sent from a chosen loopback address (the whole 127.0.0.0/8 range reaches this machine). */
function signInFrom(
  base: string,
  from: string,
  name: string,
  password: string,
): Promise<{ status: number; retryAfter: string | undefined; ms: number }> {
  const url = new URL(`${base}/api/auth/login`);
  const body = JSON.stringify({ name, password });
  return new Promise((resolve, reject) => {
    const t0 = performance.now();
    const req = request(
      {
        host: url.hostname,
        port: url.port,
        path: url.pathname,
        method: 'POST',
        localAddress: from,
        agent: false,
        headers: { 'content-type': 'application/json', 'content-length': Buffer.byteLength(body) },
      },
      (res) => {
        res.resume();
        res.on('end', () =>
          resolve({
            status: res.statusCode ?? 0,
            retryAfter: res.headers['retry-after'],
            ms: performance.now() - t0,
          }),
        );
      },
    );
    req.on('error', reject);
    req.end(body);
  });
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];

describe.each(DATABASE_KINDS)('sign-in under attack on %s', (kind) => {
  let s: Stack;

  beforeAll(async () => {
    s = await startStack(kind, {
      worker: false,
      env: {
        SIGNIN_ATTEMPTS_PER_NAME_AND_ADDRESS: '5',
        SIGNIN_ATTEMPTS_PER_ADDRESS: '1000',
        SIGNIN_ATTEMPTS_PER_NAME: '10',
      },
    });
    await s.user('target', 'reviewer', PASSWORD);
    await s.user('owner', 'reviewer', PASSWORD);
  });
  afterAll(async () => (s as Stack | undefined)?.stop());

  const refusals = async (name: string) =>
    (
      await s.db.query<{ after: string }>(null, `SELECT after FROM audit_events WHERE action = 'session.refused'`)
    ).filter((r) => (JSON.parse(r.after) as { name: string }).name === name).length;

  it('checks at most the limit of 60 parallel wrong passwords, answers the rest 429 with Retry-After, and audits each check', async () => {
    const answers = await Promise.all(
      Array.from({ length: 60 }, (_, i) => signInFrom(s.base, '127.0.0.1', 'target', `wrong guess ${i}`)),
    );
    const checked = answers.filter((a) => a.status === 401);
    const limited = answers.filter((a) => a.status === 429);
    expect(checked.length).toBe(5);
    expect(limited.length).toBe(55);
    for (const l of limited) expect(Number(l.retryAfter)).toBeGreaterThan(0);
    expect(await refusals('target')).toBe(5);
    // The right password from the same address waits like the wrong ones...
    const same = await signInFrom(s.base, '127.0.0.1', 'target', PASSWORD);
    expect(same.status).toBe(429);
    expect(Number(same.retryAfter)).toBeGreaterThan(0);
    // ...but the owner at another address is not locked out by it.
    const elsewhere = await signInFrom(s.base, '127.0.0.2', 'target', PASSWORD);
    expect(elsewhere.status).toBe(200);
    const started = await s.db.query<{ after: string }>(
      null,
      `SELECT after FROM audit_events WHERE action = 'session.start' AND actor_name = 'target'`,
    );
    expect(started.map((r) => JSON.parse(r.after) as unknown)).toEqual([
      { address: '127.0.0.2', outcome: 'signed in' },
    ]);
  });

  it('slows a name guessed from many addresses down instead of refusing it, so the right password still works', async () => {
    // Three wrong guesses from each of five addresses: the name's own limit (10) is passed, no address reaches its 5.
    for (let a = 10; a < 15; a++)
      for (let i = 0; i < 3; i++)
        expect((await signInFrom(s.base, `127.0.1.${a}`, 'owner', `guess ${i}`)).status).toBe(401);
    const slowed = await signInFrom(s.base, '127.0.2.1', 'owner', 'one more guess');
    expect(slowed.status).toBe(401);
    const owner = await signInFrom(s.base, '127.0.2.2', 'owner', PASSWORD);
    expect(owner.status).toBe(200);
    // Past the name's limit by 6 and 7 attempts: each waited the back-off's cap of 3 s before its check.
    expect(slowed.ms).toBeGreaterThanOrEqual(3000);
    expect(owner.ms).toBeGreaterThanOrEqual(3000);
  }, 240_000);

  it('keeps its counts in Redis with an expiry, none in the API process', async () => {
    const redis = new Redis(TEST_REDIS_URL);
    try {
      const keys = await redis.keys(`${s.config.queuePrefix}:sign-in:*`);
      expect(keys.length).toBeGreaterThan(0);
      for (const k of keys) expect(await redis.pttl(k)).toBeGreaterThan(0);
    } finally {
      redis.disconnect();
    }
  });

  it('takes as long to refuse an unknown name as a known one (a dummy scrypt), measured alternately', async () => {
    for (let i = 0; i < 20; i++) await s.user(`known-${i}`, 'reviewer', PASSWORD);
    const known: number[] = [];
    const unknown: number[] = [];
    // Each name tried twice at most, so no count reaches a limit or a back-off; known and unknown alternate, so a
    // busy moment of this shared machine falls on both alike, and which goes first alternates too, so that whatever a
    // request leaves behind (its audit write, its log line) slows the one after it on both sides alike.
    for (let round = 0; round < 2; round++) {
      for (let i = 0; i < 20; i++) {
        const tryKnown = () => signInFrom(s.base, '127.0.3.1', `known-${i}`, 'not the password');
        const tryUnknown = () => signInFrom(s.base, '127.0.3.1', `nobody-${round}-${i}`, 'not the password');
        const knownFirst = (round + i) % 2 === 0;
        const first = await (knownFirst ? tryKnown() : tryUnknown());
        const second = await (knownFirst ? tryUnknown() : tryKnown());
        const [k, u] = knownFirst ? [first, second] : [second, first];
        expect([k.status, u.status]).toEqual([401, 401]);
        known.push(k.ms);
        unknown.push(u.ms);
      }
    }
    const [mk, mu] = [median(known), median(unknown)];
    process.stdout.write(
      `${JSON.stringify({ measure: 'sign-in refusal, median ms', kind, known: mk, unknown: mu })}\n`,
    );
    expect(Math.abs(mk - mu) / Math.max(mk, mu)).toBeLessThan(0.2);
  }, 240_000);
});
