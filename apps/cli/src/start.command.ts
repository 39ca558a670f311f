import { spawn, type ChildProcess } from 'node:child_process';
import { chmodSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { configToEnv, loadConfig, nodeArgsFor, type AppConfig } from '#config';
import type { DemoSeedResult } from '#demo';
import { defineCommand, numberOption } from './cli-command.js';

const apiMain = fileURLToPath(new URL('../../api/src/main.js', import.meta.url));
const workerMain = fileURLToPath(new URL('../../worker/src/main.js', import.meta.url));

/**
 * `start`: runs the whole service on one machine: a private Redis when
 * REDIS_URL is not set, the migrations, the demo on an empty service (unless
 * DEMO=off), then the API and `--workers N` worker processes, supervised
 * ({@link Supervisor}): a process that dies is restarted; one that keeps dying
 * stops everything with exit code 1; SIGINT/SIGTERM stop everything.
 */
export const startCommand = defineCommand({
  name: 'start',
  summary: 'run the service: the API and its workers (and a private Redis when REDIS_URL is unset)',
  description:
    'Runs the whole service on this machine: a private redis-server under DATA_DIR when REDIS_URL is unset, the ' +
    'migrations, the demo desk on an empty database (unless DEMO=off), then the API and the worker processes. ' +
    'A process that dies is restarted after a back-off; one that dies more than RESTART_LIMIT times within ' +
    'RESTART_WINDOW_MINUTES stops everything with exit code 1. Ctrl+C (or SIGTERM) stops them all. Settings come ' +
    'from the environment (see config/cribra.env.example).',
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
  const { Supervisor } = await import('./supervisor.js');
  const { createRootLogger } = await import('#logging');
  // The launcher's own lines in the processes' format (LOG_FORMAT: JSON when the output is not a terminal).
  const logger = createRootLogger(config, 'launcher');
  let redis: Awaited<ReturnType<typeof startPrivateRedis>> | null = null;
  if (!config.redisUrl) {
    try {
      redis = await startPrivateRedis(config.dataDir);
    } catch (e) {
      process.stderr.write(`${(e as Error).message}\n`);
      return e instanceof RedisMissingError ? 3 : 1;
    }
    config = { ...config, redisUrl: redis.url };
    logger.info(`private redis-server at ${redis.url} (files in ${config.dataDir}/redis)`);
  }
  const ds = await openDatabase(config.database);
  await ds.destroy();
  let seeded: DemoSeedResult | null = null;
  try {
    seeded = await seedDemo(config);
  } catch (e) {
    // The service is still usable without its demo.
    logger.warn(`the demo could not be set up: ${(e as Error).message}`);
  }

  const env = { ...process.env, ...configToEnv(config) };
  const supervisor = new Supervisor({
    restartLimit: config.restartLimit,
    windowMs: config.restartWindowMinutes * 60_000,
    dataDir: config.dataDir,
    // Every line of the supervisor's is about a process that died or could not be kept running.
    log: (line) => logger.warn(line),
  });
  // Signals end the launcher whatever state its processes are in (a second one kills them at once).
  process.on('SIGINT', () => supervisor.signal());
  process.on('SIGTERM', () => supervisor.signal());
  const node =
    (file: string, args: string[], extraEnv: Record<string, string> = {}) =>
    (): Promise<ChildProcess> =>
      Promise.resolve(
        spawn(process.execPath, ['--enable-source-maps', ...args, file], {
          env: { ...env, ...extraEnv },
          stdio: 'inherit',
        }),
      );
  const processes = [];
  if (redis) {
    const privateRedis = redis;
    let first = true;
    processes.push({
      name: 'redis',
      start: async () => {
        // The first is already running (the migrations and the demo needed it); later ones reopen its port and files.
        if (first) {
          first = false;
          return privateRedis.process;
        }
        return (await startPrivateRedis(config.dataDir, privateRedis.port)).process;
      },
    });
  }
  processes.push({ name: 'api', start: node(apiMain, nodeArgsFor('api', config)) });
  for (let i = 0; i < workers; i++) {
    // Each worker its own health port: WORKER_HEALTH_PORT, then the ports after it.
    const health: Record<string, string> =
      config.workerHealthPort === null ? {} : { WORKER_HEALTH_PORT: String(config.workerHealthPort + i) };
    processes.push({
      name: `worker ${i + 1}`,
      start: node(workerMain, nodeArgsFor('worker', config), health),
    });
  }
  await supervisor.run(processes);
  const url = `http://${config.host}:${config.port}/`;
  logger.info(`Cribra is starting at ${url} (API document: /api/docs; Ctrl+C stops)`);
  if (seeded) showDemoAccounts(config, formatDemoBlock(url, seeded), (line) => logger.info(line));
  const code = await supervisor.done;
  process.exit(code);
}

/**
 * The demo accounts' passwords go to the terminal. When standard output is not one (a service manager, a log file),
 * they would end up in a log: they go to `DATA_DIR/demo-accounts.txt`, readable by its owner only, and only its path
 * is printed.
 */
function showDemoAccounts(config: AppConfig, block: string, log: (line: string) => void): void {
  if (process.stdout.isTTY) {
    process.stdout.write(`${block}\n`);
    return;
  }
  const file = join(config.dataDir, DEMO_ACCOUNTS_FILE);
  writeFileSync(file, `${block}\n  Delete this file once the passwords are noted.\n`, { mode: 0o600 });
  // `mode` applies only when the file is created; an older file keeps its own.
  chmodSync(file, 0o600);
  log(
    `Demo desk created. Its three accounts and their passwords are in ${file} (readable by you only): ` +
      'the output is not a terminal, so they are not printed.',
  );
}

/** Where `start` writes the demo accounts when its output is not a terminal. */
export const DEMO_ACCOUNTS_FILE = 'demo-accounts.txt';
