import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { built, exited, freePort, waitReady } from '../support/processes.js';
import { TEST_REDIS_URL } from '../support/stack.js';

const checkout = fileURLToPath(new URL('../..', import.meta.url));

/**
 * README "Production": build once, keep `dist/`, install the production dependencies only, start. Done here on a copy
 * that holds nothing but the build output, the scripts and the package files, so an import of a dev dependency from
 * the built code fails the start.
 */
describe('the built service runs on production dependencies only', () => {
  const root = mkdtempSync(join(tmpdir(), 'cribra-production-'));
  let service: ChildProcess | undefined;
  afterAll(async () => {
    if (service && service.exitCode === null && service.signalCode === null) {
      service.kill('SIGKILL');
      await exited(service);
    }
    rmSync(root, { recursive: true, force: true });
  });

  it('starts from dist/ after npm ci --omit=dev, serves the screens and the API, and stops on SIGTERM', async () => {
    built('apps/cli/src/main.js');
    for (const file of ['package.json', 'package-lock.json', '.npmrc', 'dist', 'scripts'])
      cpSync(join(checkout, file), join(root, file), { recursive: true });
    // Install scripts are skipped and the native SQLite binding is copied from the checkout's own install: compiling
    // it again would take minutes and tests nothing this test is about (which packages the built code needs).
    const install = spawnSync(
      'npm',
      ['ci', '--omit=dev', '--prefer-offline', '--ignore-scripts', '--no-audit', '--no-fund', '--loglevel=error'],
      { cwd: root, encoding: 'utf8', timeout: 240_000, env: { ...process.env, npm_config_update_notifier: 'false' } },
    );
    expect(install.status, install.stderr).toBe(0);
    for (const dev of ['vitest', 'vite', 'eslint', 'prettier', 'madge', 'openapi-typescript', 'preact'])
      expect(existsSync(join(root, 'node_modules', dev)), `${dev} is a dev dependency`).toBe(false);
    cpSync(
      join(checkout, 'node_modules', 'better-sqlite3', 'build'),
      join(root, 'node_modules', 'better-sqlite3', 'build'),
      { recursive: true },
    );

    // `npm start`'s first step sees a current build and does nothing (the sources are not even there).
    const ensure = spawnSync(process.execPath, ['scripts/ensure-built.js'], { cwd: root, encoding: 'utf8' });
    expect(ensure.status).toBe(0);
    expect(ensure.stderr).toBe('');

    const help = spawnSync(process.execPath, ['dist/apps/cli/src/main.js', '--help'], { cwd: root, encoding: 'utf8' });
    expect(help.status).toBe(0);
    expect(help.stdout).toMatch(/start/);

    const dataDir = join(root, 'data');
    mkdirSync(dataDir);
    const port = await freePort();
    let out = '';
    service = spawn(process.execPath, ['dist/apps/cli/src/main.js', 'start'], {
      cwd: root,
      env: {
        PATH: process.env.PATH ?? '',
        TZ: 'UTC',
        DATA_DIR: dataDir,
        PORT: String(port),
        REDIS_URL: TEST_REDIS_URL,
        QUEUE_PREFIX: `production-${process.pid}`,
        DEMO: 'off',
      },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    service.stdout?.on('data', (d: Buffer) => (out += d.toString('utf8')));
    service.stderr?.on('data', (d: Buffer) => (out += d.toString('utf8')));
    const base = `http://127.0.0.1:${port}`;
    await waitReady(base, 120_000).catch((e: unknown) => {
      throw new Error(`${String(e)}\n${out}`);
    });
    const screens = await fetch(`${base}/`);
    expect(screens.status).toBe(200);
    expect(await screens.text()).toMatch(/<div id="app"|<script/);
    expect((await fetch(`${base}/api/desks`)).status).toBe(401);

    service.kill('SIGTERM');
    await exited(service);
    expect(service.exitCode, out).toBe(0);
  }, 400_000);
});
