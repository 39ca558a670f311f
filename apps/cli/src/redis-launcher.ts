import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import { createServer } from 'node:net';
import { join } from 'node:path';
import { Redis } from 'ioredis';

export class RedisMissingError extends Error {
  constructor() {
    super(
      'Cribra needs Redis and REDIS_URL is not set, so it would start a private redis-server, but there is none on PATH.\n' +
        'Install one (Debian/Ubuntu: sudo apt-get install redis-server; Fedora: sudo dnf install redis; macOS: brew install redis),\n' +
        'or point REDIS_URL at a running server, e.g. REDIS_URL=redis://127.0.0.1:6379',
    );
  }
}

async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.once('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const addr = srv.address();
      srv.close(() => (typeof addr === 'object' && addr ? resolve(addr.port) : reject(new Error('no port'))));
    });
  });
}

/**
 * Starts a private redis-server with its files under `dataDir/redis`, with the
 * append-only file on so queued work survives a restart. Resolves once it
 * answers PING.
 */
export async function startPrivateRedis(
  dataDir: string,
  fixedPort?: number,
): Promise<{ url: string; port: number; process: ChildProcess; stop: () => Promise<void> }> {
  const found = spawnSync('redis-server', ['--version'], { stdio: 'ignore' });
  if (found.error || found.status !== 0) throw new RedisMissingError();
  const dir = join(dataDir, 'redis');
  mkdirSync(dir, { recursive: true });
  // A restart keeps the port, so the API and workers reconnect to it on their own.
  const port = fixedPort ?? (await freePort());
  const child = spawn(
    'redis-server',
    [
      '--port',
      String(port),
      '--bind',
      '127.0.0.1',
      '--dir',
      dir,
      '--appendonly',
      'yes',
      '--appendfsync',
      'everysec',
      '--save',
      '',
      '--logfile',
      'redis.log',
      '--protected-mode',
      'yes',
    ],
    { stdio: 'ignore' },
  );
  const url = `redis://127.0.0.1:${port}`;
  const deadline = Date.now() + 15_000;
  for (;;) {
    if (child.exitCode !== null)
      throw new Error(`redis-server exited at start with code ${child.exitCode}; see ${join(dir, 'redis.log')}`);
    const probe = new Redis(url, { lazyConnect: true, maxRetriesPerRequest: 0, retryStrategy: () => null });
    probe.on('error', () => undefined);
    try {
      await probe.connect();
      // PING answers PONG or an error (a server still loading its data), which rejects.
      await probe.ping();
      probe.disconnect();
      break;
    } catch {
      probe.disconnect();
    }
    if (Date.now() > deadline) {
      child.kill('SIGKILL');
      throw new Error(`redis-server did not answer within 15 s; see ${join(dir, 'redis.log')}`);
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  return {
    url,
    port,
    process: child,
    stop: () =>
      new Promise<void>((resolve) => {
        if (child.exitCode !== null) {
          resolve();
          return;
        }
        child.once('exit', () => resolve());
        child.kill('SIGTERM');
      }),
  };
}
