import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { built, freePort, waitReady } from '../support/processes.js';

interface LauncherState {
  processes: Record<string, { pid: number | null; restarts: number }>;
  restarts: number;
}

/** `cribra start` from the build on SQLite, with a private redis-server (REDIS_URL unset), as an operator runs it. */
function launch(
  dataDir: string,
  port: number,
  env: Record<string, string>,
): { child: ChildProcess; out: () => string } {
  let out = '';
  const child = spawn(process.execPath, [built('apps/cli/src/main.js'), 'start', '--workers', '1'], {
    env: { PATH: process.env.PATH ?? '', TZ: 'UTC', DATA_DIR: dataDir, PORT: String(port), DEMO: 'off', ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  child.stdout.on('data', (d: Buffer) => (out += d.toString('utf8')));
  child.stderr.on('data', (d: Buffer) => (out += d.toString('utf8')));
  return { child, out: () => out };
}

/** The messages of the launcher's own JSON lines in an output (each line that parses and says app "launcher"). */
const launcherLines = (out: string): string[] =>
  out.split('\n').flatMap((line) => {
    try {
      const entry = JSON.parse(line) as { app?: string; msg?: string };
      return entry.app === 'launcher' && typeof entry.msg === 'string' ? [entry.msg] : [];
    } catch {
      return [];
    }
  });

const state = (dataDir: string): LauncherState | null =>
  existsSync(join(dataDir, 'launcher.json'))
    ? (JSON.parse(readFileSync(join(dataDir, 'launcher.json'), 'utf8')) as LauncherState)
    : null;

const alive = (pid: number) => {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
};

async function until<T>(what: string, probe: () => T | null | undefined | false, timeoutMs = 60_000): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const v = probe();
    if (v) return v;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

const exitOf = (child: ChildProcess) =>
  child.exitCode !== null || child.signalCode !== null
    ? Promise.resolve({ code: child.exitCode, signal: child.signalCode })
    : new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((r) =>
        child.once('exit', (code, signal) => r({ code, signal })),
      );

describe('the launcher supervises its processes', () => {
  const dirs: string[] = [];
  const launched: ChildProcess[] = [];
  afterAll(() => {
    for (const c of launched) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL');
    for (const d of dirs) {
      const s = state(d);
      for (const p of Object.values(s?.processes ?? {})) if (p.pid && alive(p.pid)) process.kill(p.pid, 'SIGKILL');
      rmSync(d, { recursive: true, force: true });
    }
  });

  it('restarts a worker, the API and its private Redis killed with SIGKILL, and still ends on SIGTERM', async () => {
    const dataDir = mkdtempSync(join(tmpdir(), 'cribra-launcher-'));
    dirs.push(dataDir);
    const port = await freePort();
    const base = `http://127.0.0.1:${port}`;
    const l = launch(dataDir, port, { RESTART_LIMIT: '3', RESTART_WINDOW_MINUTES: '1' });
    launched.push(l.child);
    await waitReady(base, 120_000);
    const first = await until('the state file', () => state(dataDir));
    expect(Object.keys(first.processes)).toEqual(['redis', 'api', 'worker 1']);

    for (const name of ['worker 1', 'api', 'redis']) {
      const before = state(dataDir)!.processes[name];
      process.kill(before.pid!, 'SIGKILL');
      const after = await until(`${name} restarted`, () => {
        const p = state(dataDir)?.processes[name];
        return p?.pid && p.pid !== before.pid && p.restarts === before.restarts + 1 ? p : null;
      });
      expect(alive(after.pid!)).toBe(true);
      await waitReady(base, 120_000);
    }
    expect(state(dataDir)!.restarts).toBe(3);
    // Its output is a pipe: the launcher's lines are JSON, like the processes'.
    const lines = launcherLines(l.out());
    expect(lines.some((m) => /^worker 1 killed by SIGKILL; restarting it/.test(m))).toBe(true);
    expect(lines.some((m) => /^redis killed by SIGKILL; restarting it/.test(m))).toBe(true);

    const pids = Object.values(state(dataDir)!.processes).map((p) => p.pid!);
    l.child.kill('SIGTERM');
    const end = await exitOf(l.child);
    expect(end.code).toBe(0);
    for (const pid of pids) expect(alive(pid)).toBe(false);
  }, 300_000);

  it('gives up with a non-zero exit when a process keeps dying, and leaves nothing running', async () => {
    const dataDir = mkdtempSync(join(tmpdir(), 'cribra-launcher-'));
    dirs.push(dataDir);
    const port = await freePort();
    const l = launch(dataDir, port, { RESTART_LIMIT: '2', RESTART_WINDOW_MINUTES: '5' });
    launched.push(l.child);
    await waitReady(`http://127.0.0.1:${port}`, 120_000);
    const end = exitOf(l.child);
    for (let death = 1; death <= 3; death++) {
      const worker = await until('a running worker', () => {
        const p = state(dataDir)?.processes['worker 1'];
        return p?.pid && p.restarts === death - 1 && alive(p.pid) ? p : null;
      });
      process.kill(worker.pid!, 'SIGKILL');
      if (death < 3)
        await until('the restart', () => (state(dataDir)!.processes['worker 1'].restarts === death ? true : null));
    }
    const { code } = await end;
    expect(code).toBe(1);
    expect(l.out()).toMatch(/worker 1 killed by SIGKILL: 3 deaths within 5 min, more than 2; stopping everything/);
    for (const p of Object.values(state(dataDir)!.processes)) if (p.pid) expect(alive(p.pid)).toBe(false);
  }, 300_000);
});
