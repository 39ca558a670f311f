import { isAbsolute, resolve } from 'node:path';

/** How the service reaches its relational database. */
export type DatabaseConfig = { kind: 'sqlite'; file: string; url: string } | { kind: 'postgres'; url: string };

/** The one typed configuration object of every Cribra process. */
export interface AppConfig {
  readonly port: number;
  readonly host: string;
  readonly dataDir: string;
  readonly database: DatabaseConfig;
  /** `null` means: the launcher starts a private redis-server under `dataDir`. */
  readonly redisUrl: string | null;
  /** Prefix of every BullMQ key, so several deployments (or test runs) can share one Redis. */
  readonly queuePrefix: string;
  readonly maxTextLength: number;
  readonly sessionHours: number;
  readonly cookieSecure: boolean;
  readonly undoWindowSeconds: number;
  readonly importBatchSize: number;
  readonly logLevel: 'error' | 'warn' | 'log' | 'debug';
  /** `text`: one readable line per entry (the default on a terminal); `json`: one JSON object per line (otherwise). */
  readonly logFormat: 'text' | 'json';
  /** Open items per scoring job. */
  readonly scoringChunkSize: number;
  /** How long a worker holds a job before another may take it over when it stops renewing (a crashed worker). */
  readonly jobLockSeconds: number;
  /** How often a worker looks for desks whose verdicts no model version has learned from. */
  readonly sweepSeconds: number;
  /** Hour of the day (UTC, 0–23) at which a worker applies every desk's retention periods. */
  readonly retentionHour: number;
  /** Keep uploaded import files after their import has finished (off: deleted, since they hold the texts). */
  readonly keepUploads: boolean;
  /** Seconds after an import or a seed-term change before a desk's words are counted again (a burst gives one count). */
  readonly termsAfterSeconds: number;
  /**
   * Old-space heap limit of the API process (MB), set by the launcher. The API holds little: with V8's default limit
   * (a share of the machine's memory) it lets garbage pile up to hundreds of MB while an export streams.
   */
  readonly apiHeapMb: number;
  /**
   * On an empty database, `start` creates the Mossbank Commons demo desk, its accounts and its generated posts. On by
   * default only for the embedded SQLite quick start (no DATABASE_URL); with DATABASE_URL only when DEMO=on.
   */
  readonly demo: boolean;
  /** Default lifetime of a new API token, in days (`never` is for admins only, asked per token). */
  readonly tokenDays: number;
  /** Sign-in limits, counted in Redis over {@link signInWindowMinutes}: see libs/auth `SignInLimiter`. */
  readonly signIn: {
    /** Attempts per account name from one client address; then 429 for that address. */
    readonly perNameAndAddress: number;
    /** Attempts from one client address, whatever the names; then 429. */
    readonly perAddress: number;
    /** Attempts on one account name from everywhere; beyond, each attempt is slowed down, never refused. */
    readonly perName: number;
    readonly windowMinutes: number;
  };
  /** The launcher restarts a process that dies; more than this many deaths of one process within the window end it. */
  readonly restartLimit: number;
  readonly restartWindowMinutes: number;
  /**
   * `GET /metrics` (Prometheus text): with a token, it answers a request bearing it on the API's port; with a port, it
   * is served on that port only (bound to `host`), with no authentication of its own. Without either, only an admin's
   * bearer token or session reads it.
   */
  readonly metrics: { readonly token: string | null; readonly port: number | null };
  /**
   * A worker answers `GET /healthz` (alive) and `GET /readyz` (its database and Redis answer) on this port, bound to
   * `host`; `null`: no health server. The launcher gives its N workers this port and the N − 1 after it.
   */
  readonly workerHealthPort: number | null;
  /** Where an urgent escalation is announced (a POST with ids only, never a text), retried from a queue; null: nowhere. */
  readonly urgentWebhookUrl: string | null;
  /** Test hook for crash tests: the worker stops at this point of a retrain (and waits to be killed). */
  readonly testPauseAt: 'training' | 'scoring' | null;
}

/** Raised at boot when one or more variables are wrong; lists every bad variable at once. */
export class ConfigError extends Error {
  constructor(readonly problems: string[]) {
    super(`Invalid configuration:\n${problems.map((p) => `  - ${p}`).join('\n')}`);
    this.name = 'ConfigError';
  }
}

type Env = Record<string, string | undefined>;

/** Variables a deployment may set, with their defaults; `config/cribra.env.example` documents each. */
export const CONFIG_VARIABLES = [
  'PORT',
  'HOST',
  'DATA_DIR',
  'DATABASE_URL',
  'REDIS_URL',
  'QUEUE_PREFIX',
  'MAX_TEXT_LENGTH',
  'SESSION_HOURS',
  'COOKIE_SECURE',
  'UNDO_WINDOW_SECONDS',
  'IMPORT_BATCH_SIZE',
  'LOG_LEVEL',
  'LOG_FORMAT',
  'SCORING_CHUNK_SIZE',
  'JOB_LOCK_SECONDS',
  'SWEEP_SECONDS',
  'TERMS_AFTER_SECONDS',
  'API_HEAP_MB',
  'DEMO',
  'TOKEN_DAYS',
  'SIGNIN_ATTEMPTS_PER_NAME_AND_ADDRESS',
  'SIGNIN_ATTEMPTS_PER_ADDRESS',
  'SIGNIN_ATTEMPTS_PER_NAME',
  'SIGNIN_WINDOW_MINUTES',
  'RESTART_LIMIT',
  'RESTART_WINDOW_MINUTES',
  'METRICS_TOKEN',
  'METRICS_PORT',
  'WORKER_HEALTH_PORT',
  'URGENT_WEBHOOK_URL',
  'CRIBRA_TEST_PAUSE',
] as const;

/**
 * Builds and validates the configuration from an environment map.
 * Pure: takes the map (and whether standard output is a terminal) as arguments so tests can pass their own.
 */
export function parseConfig(
  env: Env,
  cwd: string = process.cwd(),
  stdoutIsTerminal: boolean = (process.stdout.isTTY as boolean | undefined) === true,
): AppConfig {
  const problems: string[] = [];
  const str = (name: string): string | undefined => {
    const v = env[name];
    return v === undefined || v.trim() === '' ? undefined : v.trim();
  };
  const int = (name: string, def: number, min: number, max: number): number => {
    const raw = str(name);
    if (raw === undefined) return def;
    if (!/^\d+$/.test(raw) || Number(raw) < min || Number(raw) > max) {
      problems.push(`${name}=${JSON.stringify(raw)}: expected an integer from ${min} to ${max}`);
      return def;
    }
    return Number(raw);
  };
  const bool = (name: string, def: boolean): boolean => {
    const raw = str(name)?.toLowerCase();
    if (raw === undefined) return def;
    if (['1', 'true', 'yes', 'on'].includes(raw)) return true;
    if (['0', 'false', 'no', 'off'].includes(raw)) return false;
    problems.push(`${name}=${JSON.stringify(env[name])}: expected on/off, true/false, yes/no or 1/0`);
    return def;
  };

  const port = int('PORT', 8080, 1, 65535);
  const host = str('HOST') ?? '127.0.0.1';
  const dataDirRaw = str('DATA_DIR') ?? './data';
  const dataDir = isAbsolute(dataDirRaw) ? dataDirRaw : resolve(cwd, dataDirRaw);

  let database: DatabaseConfig;
  const dbUrl = str('DATABASE_URL');
  if (dbUrl === undefined) {
    const file = resolve(dataDir, 'cribra.sqlite');
    database = { kind: 'sqlite', file, url: `sqlite:${file}` };
  } else if (/^postgres(ql)?:\/\//.test(dbUrl)) {
    try {
      new URL(dbUrl);
      database = { kind: 'postgres', url: dbUrl };
    } catch {
      problems.push(`DATABASE_URL: not a valid URL`);
      database = { kind: 'postgres', url: dbUrl };
    }
  } else if (dbUrl.startsWith('sqlite:')) {
    const path = dbUrl.slice('sqlite:'.length).replace(/^\/\//, '');
    if (path === '') problems.push('DATABASE_URL: sqlite: needs a file path, e.g. sqlite:./data/cribra.sqlite');
    const file = isAbsolute(path) ? path : resolve(cwd, path);
    database = { kind: 'sqlite', file, url: `sqlite:${file}` };
  } else {
    problems.push(
      `DATABASE_URL: expected postgres://… or sqlite:PATH (got a value starting ${JSON.stringify(dbUrl.slice(0, 12))})`,
    );
    database = { kind: 'sqlite', file: resolve(dataDir, 'cribra.sqlite'), url: '' };
  }

  const redisRaw = str('REDIS_URL');
  let redisUrl: string | null = null;
  if (redisRaw !== undefined) {
    if (!/^rediss?:\/\//.test(redisRaw))
      problems.push(`REDIS_URL=${JSON.stringify(redisRaw)}: expected redis://host:port or rediss://…`);
    else {
      try {
        new URL(redisRaw);
        redisUrl = redisRaw;
      } catch {
        problems.push(`REDIS_URL=${JSON.stringify(redisRaw)}: not a valid URL`);
      }
    }
  }

  const queuePrefix = str('QUEUE_PREFIX') ?? 'cribra';
  if (!/^[A-Za-z0-9_.-]{1,64}$/.test(queuePrefix))
    problems.push(`QUEUE_PREFIX=${JSON.stringify(queuePrefix)}: use 1–64 letters, digits, '_', '.', '-'`);

  const logLevel = (str('LOG_LEVEL') ?? 'log') as AppConfig['logLevel'];
  if (!['error', 'warn', 'log', 'debug'].includes(logLevel))
    problems.push(`LOG_LEVEL=${JSON.stringify(logLevel)}: expected error, warn, log or debug`);
  const logFormat = (str('LOG_FORMAT')?.toLowerCase() ??
    (stdoutIsTerminal ? 'text' : 'json')) as AppConfig['logFormat'];
  if (!['text', 'json'].includes(logFormat))
    problems.push(`LOG_FORMAT=${JSON.stringify(env.LOG_FORMAT)}: expected text or json`);

  const urgentWebhookUrl = str('URGENT_WEBHOOK_URL') ?? null;
  if (urgentWebhookUrl !== null) {
    let ok: boolean;
    try {
      ok = ['http:', 'https:'].includes(new URL(urgentWebhookUrl).protocol);
    } catch {
      ok = false;
    }
    if (!ok) problems.push(`URGENT_WEBHOOK_URL: expected an http:// or https:// URL`);
  }
  const metricsToken = str('METRICS_TOKEN') ?? null;
  if (metricsToken !== null && metricsToken.length < 16)
    problems.push('METRICS_TOKEN: use at least 16 characters (e.g. openssl rand -hex 24)');
  const metricsPort = str('METRICS_PORT') === undefined ? null : int('METRICS_PORT', 0, 1, 65535);
  if (metricsPort !== null && metricsPort === port) problems.push(`METRICS_PORT=${metricsPort}: must differ from PORT`);

  const workerHealthPort = str('WORKER_HEALTH_PORT') === undefined ? null : int('WORKER_HEALTH_PORT', 0, 1, 65535);
  if (workerHealthPort !== null && workerHealthPort === port)
    problems.push(`WORKER_HEALTH_PORT=${workerHealthPort}: must differ from PORT`);

  const pause = str('CRIBRA_TEST_PAUSE') ?? null;
  if (pause !== null && pause !== 'training' && pause !== 'scoring')
    problems.push(`CRIBRA_TEST_PAUSE=${JSON.stringify(pause)}: expected training or scoring`);

  const config: AppConfig = {
    port,
    host,
    dataDir,
    database,
    redisUrl,
    queuePrefix,
    maxTextLength: int('MAX_TEXT_LENGTH', 100_000, 1, 10_000_000),
    sessionHours: int('SESSION_HOURS', 12, 1, 24 * 30),
    cookieSecure: bool('COOKIE_SECURE', false),
    undoWindowSeconds: int('UNDO_WINDOW_SECONDS', 300, 1, 86_400),
    importBatchSize: int('IMPORT_BATCH_SIZE', 1000, 1, 50_000),
    logLevel,
    logFormat,
    scoringChunkSize: int('SCORING_CHUNK_SIZE', 5000, 100, 1_000_000),
    jobLockSeconds: int('JOB_LOCK_SECONDS', 60, 2, 3600),
    sweepSeconds: int('SWEEP_SECONDS', 60, 1, 86_400),
    termsAfterSeconds: int('TERMS_AFTER_SECONDS', 30, 0, 86_400),
    retentionHour: int('RETENTION_HOUR', 3, 0, 23),
    keepUploads: bool('KEEP_UPLOADS', false),
    apiHeapMb: int('API_HEAP_MB', 512, 128, 65_536),
    demo: bool('DEMO', dbUrl === undefined),
    tokenDays: int('TOKEN_DAYS', 90, 1, 3650),
    signIn: {
      perNameAndAddress: int('SIGNIN_ATTEMPTS_PER_NAME_AND_ADDRESS', 5, 1, 100_000),
      perAddress: int('SIGNIN_ATTEMPTS_PER_ADDRESS', 30, 1, 100_000),
      perName: int('SIGNIN_ATTEMPTS_PER_NAME', 10, 1, 100_000),
      windowMinutes: int('SIGNIN_WINDOW_MINUTES', 15, 1, 1440),
    },
    restartLimit: int('RESTART_LIMIT', 5, 0, 1000),
    restartWindowMinutes: int('RESTART_WINDOW_MINUTES', 10, 1, 1440),
    metrics: { token: metricsToken, port: metricsPort },
    workerHealthPort,
    urgentWebhookUrl,
    testPauseAt: pause as AppConfig['testPauseAt'],
  };
  if (problems.length > 0) throw new ConfigError(problems);
  return config;
}

let cached: AppConfig | undefined;

/**
 * The process's configuration, read from `process.env` once. This is the only
 * place in the code base that reads `process.env` for settings.
 */
export function loadConfig(): AppConfig {
  cached ??= parseConfig(process.env);
  return cached;
}

/** Environment variables for a child process, derived from a configuration. */
export function configToEnv(config: AppConfig): Record<string, string> {
  return {
    PORT: String(config.port),
    HOST: config.host,
    DATA_DIR: config.dataDir,
    DATABASE_URL: config.database.url,
    ...(config.redisUrl ? { REDIS_URL: config.redisUrl } : {}),
    QUEUE_PREFIX: config.queuePrefix,
    MAX_TEXT_LENGTH: String(config.maxTextLength),
    SESSION_HOURS: String(config.sessionHours),
    COOKIE_SECURE: String(config.cookieSecure),
    UNDO_WINDOW_SECONDS: String(config.undoWindowSeconds),
    IMPORT_BATCH_SIZE: String(config.importBatchSize),
    LOG_LEVEL: config.logLevel,
    LOG_FORMAT: config.logFormat,
    SCORING_CHUNK_SIZE: String(config.scoringChunkSize),
    JOB_LOCK_SECONDS: String(config.jobLockSeconds),
    SWEEP_SECONDS: String(config.sweepSeconds),
    TERMS_AFTER_SECONDS: String(config.termsAfterSeconds),
    RETENTION_HOUR: String(config.retentionHour),
    KEEP_UPLOADS: config.keepUploads ? 'on' : 'off',
    API_HEAP_MB: String(config.apiHeapMb),
    DEMO: config.demo ? 'on' : 'off',
    TOKEN_DAYS: String(config.tokenDays),
    SIGNIN_ATTEMPTS_PER_NAME_AND_ADDRESS: String(config.signIn.perNameAndAddress),
    SIGNIN_ATTEMPTS_PER_ADDRESS: String(config.signIn.perAddress),
    SIGNIN_ATTEMPTS_PER_NAME: String(config.signIn.perName),
    SIGNIN_WINDOW_MINUTES: String(config.signIn.windowMinutes),
    RESTART_LIMIT: String(config.restartLimit),
    RESTART_WINDOW_MINUTES: String(config.restartWindowMinutes),
    ...(config.metrics.token ? { METRICS_TOKEN: config.metrics.token } : {}),
    ...(config.metrics.port ? { METRICS_PORT: String(config.metrics.port) } : {}),
    ...(config.workerHealthPort ? { WORKER_HEALTH_PORT: String(config.workerHealthPort) } : {}),
    ...(config.urgentWebhookUrl ? { URGENT_WEBHOOK_URL: config.urgentWebhookUrl } : {}),
    ...(config.testPauseAt ? { CRIBRA_TEST_PAUSE: config.testPauseAt } : {}),
  };
}

/**
 * For a process entry point: the configuration, or, when it is invalid, the
 * list of problems on stderr and exit code 2.
 */
export function loadConfigOrExit(): AppConfig {
  try {
    return loadConfig();
  } catch (e) {
    if (e instanceof ConfigError) {
      process.stderr.write(`${e.message}\n`);
      process.exit(2);
    }
    throw e;
  }
}

/** Nest's logger levels for a configured level. */
export function nestLogLevels(level: AppConfig['logLevel']): Array<'fatal' | 'error' | 'warn' | 'log' | 'debug'> {
  const all = ['fatal', 'error', 'warn', 'log', 'debug'] as const;
  return all.slice(0, all.indexOf(level) + 1);
}

/** Node arguments of an app process: the API's heap limit (see `apiHeapMb`). */
export function nodeArgsFor(app: 'api' | 'worker', config: AppConfig): string[] {
  return app === 'api' ? [`--max-old-space-size=${config.apiHeapMb}`] : [];
}
