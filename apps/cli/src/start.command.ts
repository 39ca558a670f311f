import { spawn, type ChildProcess } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { configToEnv, loadConfig, nodeArgsFor, type AppConfig } from '#config';
import type { DemoSeedResult } from '#demo';
import { defineCommand, numberOption } from './cli-command.js';

const apiMain = fileURLToPath(new URL('../../api/src/main.js', import.meta.url));
const workerMain = fileURLToPath(new URL('../../worker/src/main.js', import.meta.url));

/**
 * `start`: runs the whole service on one machine: a private Redis when
 * REDIS_URL is not set, the migrations, the demo on an empty service (unless
 * DEMO=off), then the API and `--workers N` worker processes. Stops them all
 * on SIGINT/SIGTERM or when one dies.
 */
export const startCommand = defineCommand({
  name: 'start',
  summary: 'run the service: the API and its workers (and a private Redis when REDIS_URL is unset)',
  description:
    'Runs the whole service on this machine: a private redis-server under DATA_DIR when REDIS_URL is unset, the ' +
    'migrations, the demo desk on an empty database (unless DEMO=off), then the API and the worker processes. ' +
    'Ctrl+C (or SIGTERM) stops them all; so does the death of any one. Settings come from the environment (see ' +
    'config/cribra.env.example).',
  options: {
    workers: {
      type: 'string',
      value: 'N',
      defaultText: '1',
      description: 'worker processes to run beside the API (0 to 16; 0 when workers run elsewhere)',
    },
  },
  run: ({ values }) => start(numberOption('workers', values.workers, 1, { integer: true, min: 0, max: 16 })),
});

async function start(workers: number): Promise<number> {
  let config: AppConfig;
  try {
    config = loadConfig();
  } catch (e) {
    process.stderr.write(`${(e as Error).message}\n`);
    return 2;
  }
  // Loaded here, not at the top, so that `cribra --help` does not load Nest and the database drivers.
  const { openDatabase } = await import('#database');
  const { formatDemoBlock } = await import('#demo');
  const { seedDemo } = await import('./demo-seed.js');
  const { RedisMissingError, startPrivateRedis } = await import('./redis-launcher.js');
  let redis: Awaited<ReturnType<typeof startPrivateRedis>> | null = null;
  if (!config.redisUrl) {
    try {
      redis = await startPrivateRedis(config.dataDir);
    } catch (e) {
      process.stderr.write(`${(e as Error).message}\n`);
      return e instanceof RedisMissingError ? 3 : 1;
    }
    config = { ...config, redisUrl: redis.url };
    process.stdout.write(`private redis-server at ${redis.url} (files in ${config.dataDir}/redis)\n`);
  }
  const ds = await openDatabase(config.database);
  await ds.destroy();
  let seeded: DemoSeedResult | null = null;
  try {
    seeded = await seedDemo(config);
  } catch (e) {
    // The service is still usable without its demo.
    process.stderr.write(`the demo could not be set up: ${(e as Error).message}\n`);
  }

  const env = { ...process.env, ...configToEnv(config) };
  const children: ChildProcess[] = [];
  let stopping = false;
  const stopAll = async (code: number) => {
    if (stopping) return;
    stopping = true;
    for (const c of children) if (c.exitCode === null) c.kill('SIGTERM');
    await Promise.all(
      children.map((c) => (c.exitCode !== null ? Promise.resolve() : new Promise((r) => c.once('exit', r)))),
    );
    await redis?.stop();
    process.exit(code);
  };
  const run = (name: string, file: string, args: string[]) => {
    const child = spawn(process.execPath, ['--enable-source-maps', ...args, file], { env, stdio: 'inherit' });
    child.on('exit', (code, signal) => {
      if (!stopping) {
        process.stderr.write(`${name} stopped (${signal ?? `code ${code}`}); stopping the rest\n`);
        void stopAll(code ?? 1);
      }
    });
    children.push(child);
  };
  run('api', apiMain, nodeArgsFor('api', config));
  for (let i = 0; i < workers; i++) run(`worker ${i + 1}`, workerMain, nodeArgsFor('worker', config));
  process.on('SIGINT', () => void stopAll(0));
  process.on('SIGTERM', () => void stopAll(0));
  const url = `http://${config.host}:${config.port}/`;
  process.stdout.write(`Cribra is starting at ${url} (API document: /api/docs; Ctrl+C stops)\n`);
  if (seeded) process.stdout.write(`${formatDemoBlock(url, seeded)}\n`);
  return new Promise<number>(() => undefined);
}
