import { randomBytes } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { INestApplication, INestApplicationContext } from '@nestjs/common';
import { NestFactory } from '@nestjs/core';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { createHttpApp } from '../../apps/api/src/http-app.js';
import { WorkerModule } from '../../apps/worker/src/worker.module.js';
import { AuthService, MembershipService } from '#auth';
import { parseConfig, type AppConfig } from '#config';
import { Database, type Role } from '#database';
import { QUEUES } from '#queues';
import { createTestDatabase, type TestDatabase } from './databases.js';

export const TEST_REDIS_URL = process.env.TEST_REDIS_URL ?? 'redis://127.0.0.1:6379';

export interface Reply<T = any> {
  status: number;
  body: T;
  headers: Headers;
}

/** A running API (and, unless asked otherwise, a worker) on a fresh database, a fresh data folder and its own queue prefix. */
export interface Stack {
  kind: 'sqlite' | 'postgres';
  config: AppConfig;
  base: string;
  api: INestApplication;
  worker: INestApplicationContext | null;
  db: Database;
  tokens: Record<string, string>;
  /** Creates a user directly; returns its API token. */
  user(name: string, role: Role, password?: string): Promise<string>;
  /**
   * Makes users members of a desk (as the desk's supervisor or an admin would): `names` with their account's role,
   * or, without names, every user made with {@link user} that is not an admin.
   */
  enrol(deskId: number, names?: string[]): Promise<void>;
  call<T = any>(
    token: string | null,
    method: string,
    path: string,
    body?: unknown,
    headers?: Record<string, string>,
  ): Promise<Reply<T>>;
  /**
   * Waits until no job is active or waiting; delayed jobs count too unless `ignoreDelayed`, or unless they are due
   * more than `ignoreDelayedBeyondMs` from now (those that fire sooner are waited for until they have run).
   */
  waitForQueuesIdle(
    timeoutMs?: number,
    options?: { ignoreDelayed?: boolean; ignoreDelayedBeyondMs?: number },
  ): Promise<void>;
  /** Stops the in-process worker (nothing is learned or scored after this). */
  stopWorker(): Promise<void>;
  stop(): Promise<void>;
}

export interface StackOptions {
  worker?: boolean;
  env?: Record<string, string>;
  /** Rewrites the test database's URL before the API and worker connect (e.g. through a relay the test controls). */
  databaseUrl?: (url: string) => string;
}

export async function startStack(kind: 'sqlite' | 'postgres', options: StackOptions = {}): Promise<Stack> {
  const tdb: TestDatabase = await createTestDatabase(kind);
  const dataDir = mkdtempSync(join(tmpdir(), 'cribra-data-'));
  // Its own queue prefix: this test's jobs never meet another test's.
  const queuePrefix = `cribra-test-${randomBytes(4).toString('hex')}`;
  const config = parseConfig({
    DATA_DIR: dataDir,
    DATABASE_URL: options.databaseUrl ? options.databaseUrl(tdb.config.url) : tdb.config.url,
    REDIS_URL: TEST_REDIS_URL,
    QUEUE_PREFIX: queuePrefix,
    LOG_LEVEL: 'error',
    ...options.env,
  });
  const api = await createHttpApp(config);
  await api.listen(0, '127.0.0.1');
  const server = api.getHttpServer();
  const addr = server.address() as { port: number };
  const base = `http://127.0.0.1:${addr.port}`;
  let worker =
    options.worker === false
      ? null
      : await NestFactory.createApplicationContext(WorkerModule.forRoot(config), { logger: ['error'] });
  const auth = api.get(AuthService);
  const db = api.get(Database);
  const tokens: Record<string, string> = {};
  const user = async (name: string, role: Role, password?: string) => {
    const { token, user: made } = await auth.createUser({ id: null, name: 'test' }, { name, role, password });
    tokens[name] = token;
    roles[name] = { id: made.id, role };
    return token;
  };
  const members = api.get(MembershipService);
  const roles: Record<string, { id: number; role: Role }> = {};
  const enrol = async (deskId: number, names?: string[]) => {
    const who = names ?? Object.keys(roles).filter((n) => roles[n].role !== 'admin');
    await db.write(async (m) => {
      for (const n of who) {
        const u = roles[n] as { id: number; role: Role } | undefined;
        if (!u) throw new Error(`enrol: no user ${n} made by this stack`);
        if (u.role === 'admin') throw new Error(`enrol: ${n} is an admin; give a member role through the API`);
        await members.enrol(m, { id: null, name: 'test' }, deskId, u.id, u.role);
      }
    });
  };
  const call = async <T>(
    token: string | null,
    method: string,
    path: string,
    body?: unknown,
    headers: Record<string, string> = {},
  ): Promise<Reply<T>> => {
    const h: Record<string, string> = { ...headers };
    if (token) h.authorization = `Bearer ${token}`;
    let payload: RequestInit['body'];
    if (body !== undefined) {
      if (typeof body === 'string' || body instanceof Uint8Array || body instanceof FormData)
        payload = body as RequestInit['body'];
      else {
        payload = JSON.stringify(body);
        h['content-type'] ??= 'application/json';
      }
    }
    const res = await fetch(`${base}${path}`, { method, headers: h, body: payload });
    const text = await res.text();
    let parsed: unknown = text;
    try {
      parsed = text ? JSON.parse(text) : null;
    } catch {
      /* not JSON: keep the text */
    }
    return { status: res.status, body: parsed as T, headers: res.headers };
  };
  const waitForQueuesIdle = async (
    timeoutMs = 60_000,
    opts: { ignoreDelayed?: boolean; ignoreDelayedBeyondMs?: number } = {},
  ) => {
    const connection = new Redis(TEST_REDIS_URL, { maxRetriesPerRequest: null });
    const queues = Object.values(QUEUES).map((q) => new Queue(q, { connection, prefix: queuePrefix }));
    try {
      const deadline = Date.now() + timeoutMs;
      // Quiet twice in a row: a job finishing on one queue may have just added one to another that was already counted.
      for (let quiet = 0; quiet < 2;) {
        // Delayed first: a job only moves forward (delayed → waiting → active), so it cannot slip between the two reads.
        // The periodic sweep and the daily retention run always have their next run scheduled: they do not count as work. Nor does a word count for
        // the seed-term suggestions waiting out TERMS_AFTER_SECONDS (a test that needs one sets it to 0).
        const delayed = (await Promise.all(queues.map((q) => q.getJobs(['delayed']))))
          .flat()
          .filter(
            (j) =>
              j.name !== 'sweep-desks' &&
              j.name !== 'count-terms' &&
              j.name !== 'apply-retention' &&
              !opts.ignoreDelayed,
          )
          .filter(
            (j) =>
              opts.ignoreDelayedBeyondMs === undefined ||
              j.timestamp + j.delay <= Date.now() + opts.ignoreDelayedBeyondMs,
          );
        const counts = await Promise.all(
          queues.map((q) => q.getJobCounts('active', 'waiting', 'prioritized', 'waiting-children')),
        );
        quiet = delayed.length === 0 && counts.every((c) => Object.values(c).every((n) => n === 0)) ? quiet + 1 : 0;
        if (quiet === 0 && Date.now() > deadline)
          throw new Error(
            `queues still busy after ${timeoutMs} ms: ${JSON.stringify(counts)}, ${delayed.length} delayed`,
          );
        await new Promise((r) => setTimeout(r, 50));
      }
    } finally {
      await Promise.all(queues.map((q) => q.close()));
      connection.disconnect();
    }
  };
  const stopWorker = async () => {
    const w = worker;
    worker = null;
    await w?.close();
  };
  const stop = async () => {
    await stopWorker();
    await api.close();
    const connection = new Redis(TEST_REDIS_URL, { maxRetriesPerRequest: null });
    for (const q of Object.values(QUEUES)) {
      const queue = new Queue(q, { connection, prefix: queuePrefix });
      await queue.obliterate({ force: true });
      await queue.close();
    }
    connection.disconnect();
    rmSync(dataDir, { recursive: true, force: true });
    await tdb.drop();
  };
  return {
    kind,
    config,
    base,
    api,
    get worker() {
      return worker;
    },
    db,
    tokens,
    user,
    enrol,
    call,
    waitForQueuesIdle,
    stopWorker,
    stop,
  };
}

/** Polls until `probe` returns a value other than undefined. */
export async function eventually<T>(
  probe: () => Promise<T | undefined>,
  timeoutMs = 30_000,
  what = 'condition',
): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const v = await probe();
    if (v !== undefined) return v;
    if (Date.now() > deadline) throw new Error(`timed out after ${timeoutMs} ms waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}
