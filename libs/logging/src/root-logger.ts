import { pino, type DestinationStream, type Logger } from 'pino';
import { PinoPretty } from 'pino-pretty';
import type { AppConfig } from '#config';

/** Nest's level names as pino's. */
const PINO_LEVEL: Record<AppConfig['logLevel'], string> = { error: 'error', warn: 'warn', log: 'info', debug: 'debug' };

/**
 * Contexts whose `log` lines only narrate Nest's start-up (one per module, route and controller): written only at
 * LOG_LEVEL=debug, so that the default level shows the service's own lines and the request and job lines.
 */
const START_UP_CHATTER = new Set([
  'InstanceLoader',
  'RoutesResolver',
  'RouterExplorer',
  'NestFactory',
  'NestApplication',
]);

/**
 * The process's one logger: JSON lines (LOG_FORMAT=json) or readable single lines (text), on standard output, at
 * LOG_LEVEL. Writes are synchronous, so the last lines before an exit are not lost.
 */
export function createRootLogger(
  config: Pick<AppConfig, 'logLevel' | 'logFormat'>,
  app: string,
  destination?: DestinationStream,
): Logger {
  const stream =
    destination ??
    (config.logFormat === 'text'
      ? PinoPretty({
          sync: true,
          singleLine: true,
          colorize: (process.stdout.isTTY as boolean | undefined) === true,
          ignore: 'pid,hostname,app',
          translateTime: 'SYS:HH:MM:ss.l',
        })
      : pino.destination({ dest: 1, sync: true }));
  return pino(
    {
      level: PINO_LEVEL[config.logLevel],
      base: { app, pid: process.pid },
      timestamp: pino.stdTimeFunctions.isoTime,
      formatters: { level: (label) => ({ level: label }) },
      hooks: {
        logMethod(args, method, level) {
          const first: unknown = args[0];
          const context =
            typeof first === 'object' && first !== null ? (first as { context?: unknown }).context : undefined;
          if (
            level === 30 &&
            typeof context === 'string' &&
            START_UP_CHATTER.has(context) &&
            !this.isLevelEnabled('debug')
          )
            return;
          method.apply(this, args);
        },
      },
    },
    stream,
  );
}
