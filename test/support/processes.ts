import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync } from 'node:fs';
import { createServer } from 'node:net';
import { fileURLToPath } from 'node:url';
import { configToEnv, nodeArgsFor, type AppConfig } from '#config';

const root = fileURLToPath(new URL('../..', import.meta.url));

/** Path of a built entry point; the test command builds first. */
export function built(relative: string): string {
  const path = `${root}dist/${relative}`;
  if (!existsSync(path)) throw new Error(`${path} is missing: run \`npm run build\` first (npm test does)`);
  return path;
}

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.once('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const a = srv.address();
      srv.close(() => (typeof a === 'object' && a ? resolve(a.port) : reject(new Error('no port'))));
    });
  });
}

/** Starts a built app (`api` or `worker`) as its own process with a configuration. */
export function spawnApp(
  app: 'api' | 'worker',
  config: AppConfig,
  extraEnv: Record<string, string> = {},
): ChildProcess {
  // The node arguments the launcher gives the app (the API's heap limit).
  const child = spawn(process.execPath, [...nodeArgsFor(app, config), built(`apps/${app}/src/main.js`)], {
    env: { PATH: process.env.PATH ?? '', TZ: 'UTC', ...configToEnv(config), ...extraEnv },
    stdio: ['ignore', 'ignore', 'pipe'],
  });
  child.stderr.on('data', () => undefined);
  return child;
}

export async function waitReady(base: string, timeoutMs = 30_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    try {
      if ((await fetch(`${base}/readyz`)).ok) return;
    } catch {
      /* not listening yet */
    }
    if (Date.now() > deadline) throw new Error(`${base} not ready after ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

export function exited(child: ChildProcess): Promise<void> {
  return child.exitCode !== null || child.signalCode !== null
    ? Promise.resolve()
    : new Promise((r) => child.once('exit', () => r()));
}
