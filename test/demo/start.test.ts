import { spawn, type ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { afterAll, describe, expect, it } from 'vitest';
import { QUEUES } from '#queues';
import { built, exited, freePort, waitReady } from '../support/processes.js';
import { TEST_REDIS_URL } from '../support/stack.js';
import { accountsInBlock } from './demo-block.js';

/** Runs the built `start` on an SQLite file in `dataDir`; collects what it prints. */
function start(dataDir: string, port: number, prefix: string): { child: ChildProcess; out: () => string } {
  let out = '';
  const child = spawn(process.execPath, [built('apps/cli/src/main.js'), 'start'], {
    env: {
      PATH: process.env.PATH ?? '',
      TZ: 'UTC',
      DATA_DIR: dataDir,
      PORT: String(port),
      REDIS_URL: TEST_REDIS_URL,
      QUEUE_PREFIX: prefix,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  child.stdout.on('data', (d: Buffer) => (out += d.toString('utf8')));
  child.stderr.on('data', (d: Buffer) => (out += d.toString('utf8')));
  return { child, out: () => out };
}

async function waitFor(what: string, probe: () => boolean, timeoutMs = 60_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!probe()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

describe('npm start on an empty data folder, its output not a terminal', () => {
  const dataDir = mkdtempSync(join(tmpdir(), 'cribra-demo-start-'));
  const prefix = `cribra-test-${randomBytes(4).toString('hex')}`;
  const running: ChildProcess[] = [];

  afterAll(async () => {
    for (const c of running) if (c.exitCode === null && c.signalCode === null) c.kill('SIGTERM');
    await Promise.all(running.map(exited));
    const connection = new Redis(TEST_REDIS_URL, { maxRetriesPerRequest: null });
    for (const q of Object.values(QUEUES)) {
      const queue = new Queue(q, { connection, prefix });
      await queue.obliterate({ force: true });
      await queue.close();
    }
    connection.disconnect();
    rmSync(dataDir, { recursive: true, force: true });
  });

  it('writes the demo accounts once to a file only its owner reads, with passwords that sign in; a second start makes none', async () => {
    const port = await freePort();
    const base = `http://127.0.0.1:${port}`;
    const first = start(dataDir, port, prefix);
    running.push(first.child);
    // Its output is a pipe, not a terminal: the passwords go to a file only its owner reads, and only the path is printed.
    const file = join(dataDir, 'demo-accounts.txt');
    await waitFor('the demo accounts file', () => first.out().includes(`are in ${file} (readable by you only)`));
    expect(statSync(file).mode & 0o777).toBe(0o600);
    const block = readFileSync(file, 'utf8');
    expect(block).toContain(`Open ${base}/ and sign in as one of:`);
    expect(first.out()).not.toMatch(/password:/);
    const accounts = accountsInBlock(block);
    expect([...accounts.keys()].sort()).toEqual(['auditor', 'reviewer', 'supervisor']);
    await waitReady(base);
    for (const [name, password] of accounts) {
      const login = await fetch(`${base}/api/auth/login`, {
        method: 'POST',
        headers: { 'content-type': 'application/json' },
        body: JSON.stringify({ name, password }),
      });
      expect(login.status, name).toBe(200);
    }
    first.child.kill('SIGTERM');
    await exited(first.child);

    const second = start(dataDir, port, prefix);
    running.push(second.child);
    await waitFor('the start line', () => /Cribra is starting at/.test(second.out()));
    await waitReady(base);
    expect(second.out()).not.toMatch(/password|demo-accounts/);
    second.child.kill('SIGTERM');
    await exited(second.child);
  }, 180_000);
});
